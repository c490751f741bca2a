"""Changes to a room file made from the meter page: reading sets, the fixtures' age, output maintenance.

Every change rebuilds the document and validates it whole (:func:`app.roomfile.parse_room_file`),
so a reading outside its zone or a grid that does not fit is refused with its field path.
"""

from __future__ import annotations

from typing import Any

from app.engine.spectrum import led_mix, spectrum_figures
from app.room.models import RoomFile
from app.room.roomfile import dump_room_file, parse_room_file

# Thimijan R.W. & Heins R.D. (1983), HortScience 18(6):818-822: lux per µmol m⁻² s⁻¹ (400-700 nm).
PUBLISHED_LUX_FACTORS = (
    ("sunlight", "Sunlight", 54.0),
    ("metal_halide", "Metal halide", 71.0),
    ("hps", "High-pressure sodium", 82.0),
    ("cool_white_fluorescent", "Cool white fluorescent", 74.0),
    ("incandescent", "Incandescent", 50.0),
)
# Generic LED spectra as Gaussian peaks (not any product): their factor is computed by the
# Thimijan & Heins method in app.engine.spectrum.
GENERIC_LED_SPECTRA = (
    (
        "led_white",
        "White LED (blue 450 nm + broad phosphor 590 nm)",
        [{"nm": 450, "fwhm_nm": 20, "weight": 0.3}, {"nm": 590, "fwhm_nm": 120, "weight": 0.7}],
    ),
    (
        "led_white_red",
        "White LED with added 660 nm red",
        [
            {"nm": 450, "fwhm_nm": 20, "weight": 0.2},
            {"nm": 590, "fwhm_nm": 120, "weight": 0.5},
            {"nm": 660, "fwhm_nm": 20, "weight": 0.3},
        ],
    ),
    (
        "led_red_blue",
        "Red and blue LED (660 + 450 nm, 4:1)",
        [{"nm": 450, "fwhm_nm": 20, "weight": 0.2}, {"nm": 660, "fwhm_nm": 20, "weight": 0.8}],
    ),
)


def lux_factor_presets() -> list[dict[str, Any]]:
    """Lux per µmol m⁻² s⁻¹ to offer for lux-meter readings, each with where it comes from."""
    out = [
        {"id": k, "label": label, "lux_per_ppfd": v, "source": "Thimijan & Heins (1983), HortScience 18(6):818-822"}
        for k, label, v in PUBLISHED_LUX_FACTORS
    ]
    for k, label, peaks in GENERIC_LED_SPECTRA:
        wl, p = led_mix(peaks)
        out.append(
            {
                "id": k,
                "label": label,
                "lux_per_ppfd": round(spectrum_figures(wl, p)["lux_per_ppfd"], 1),
                "source": "computed from a generic spectrum by the Thimijan & Heins (1983) method",
            }
        )
    return out


def _rebuilt(room_file: RoomFile, revision: int, change) -> RoomFile:
    doc = dump_room_file(room_file)
    change(doc["room"])
    doc["revision"] = revision
    return parse_room_file(doc)


def put_reading_set(room_file: RoomFile, revision: int, reading_set: dict[str, Any]) -> RoomFile:
    """Add a reading set, or replace the one with the same id."""

    def change(room: dict) -> None:
        sets = room.setdefault("readings", [])
        ids = [r.get("id") for r in sets]
        if reading_set.get("id") in ids:
            sets[ids.index(reading_set.get("id"))] = reading_set
        else:
            sets.append(reading_set)

    return _rebuilt(room_file, revision, change)


def delete_reading_set(room_file: RoomFile, revision: int, set_id: str) -> RoomFile:
    if all(r.id != set_id for r in room_file.room.readings):
        raise KeyError(set_id)
    return _rebuilt(
        room_file, revision, lambda room: room.update(readings=[r for r in room["readings"] if r["id"] != set_id])
    )


def set_output_age(
    room_file: RoomFile, revision: int, output_age: dict[str, Any], maintenance: dict[str, dict[str, Any] | None]
) -> RoomFile:
    """The fixtures' age, dirt and shown age; and per fixture type id its maintenance (None clears it)."""
    known = {t.id for t in room_file.room.fixture_types}
    unknown = sorted(set(maintenance) - known)
    if unknown:
        raise KeyError(unknown[0])

    def change(room: dict) -> None:
        room["output_age"] = output_age
        for t in room["fixture_types"]:
            if t["id"] in maintenance:
                t["maintenance"] = maintenance[t["id"]]

    return _rebuilt(room_file, revision, change)
