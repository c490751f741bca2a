"""Limits that guard memory and time. Each is refused with its own message."""

MAX_ROOM_SIDE_M = 300.0
MAX_ROOM_HEIGHT_M = 30.0
MAX_ZONES = 200
MAX_FIXTURES = 5000
MAX_FIXTURE_TYPES = 200
MAX_OBSTACLES = 500
MAX_CIRCUITS = 200
MAX_CUSTOM_CROPS = 100
MAX_BARS = 32
MAX_TABLE_ANGLES = 361
MIN_GRID_SPACING_M = 0.005
MAX_GRID_POINTS = 5_000_000
MAX_BODY_BYTES = 8 * 1024 * 1024
MAX_HANGING_POINTS = 8
MAX_READING_SETS = 100
MAX_READING_POINTS = 2000
MAX_READING_ROWS = 100
MAX_READING_VALUE = 250_000.0  # lx: full sun is about 100,000-130,000 lx
MAX_PPFD_READING = 5000.0  # µmol m⁻² s⁻¹: full sun is about 2,000
MAX_NESTING_DEPTH = 64  # a room file nests about 6 deep; refused before parsing (no recursion blow-up)
MAX_NUMBER_DIGITS = 30  # integer digits: no measurement needs more
MAX_NUMBER_CHARS = 64  # a decimal number's characters (digits, point, exponent)
