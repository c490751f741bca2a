"""Layout planner: how many fixtures, where, how high and how dimmed, for each zone's DLI band.

- :mod:`.options` what is asked (objective, target in the band, gaps) and one zone's layout;
- :mod:`.arrange` where fixtures can hang (gaps between them and to the walls, obstacles);
- :mod:`.light` the planning light model (engine direct light + checked estimate of the walls' light);
- :mod:`.search` one zone's search, dimmed in closed form, leaders recomputed with the full model;
- :mod:`.apply` a layout as room-file fixtures (names like the room's own, circuits at full output);
- :mod:`.combine` whole-room proposals, each analysed with the full model;
- :mod:`.check_setup`, :mod:`.curves`, :mod:`.jobs` check my setup, height/dimming curves, background jobs.

"Meets the target" is :mod:`app.service.verdict`'s one definition.
"""

from app.service.planner.apply import apply_layouts
from app.service.planner.check_setup import check_setup
from app.service.planner.combine import plan
from app.service.planner.curves import curves
from app.service.planner.jobs import Job, JobBoard
from app.service.planner.options import PlanOptions, ZoneLayout
from app.service.planner.search import Cancelled
from app.service.verdict import DEFAULT_DARK_ALLOWANCE, meets_target

DARK_ALLOWANCE = DEFAULT_DARK_ALLOWANCE

__all__ = [
    "DARK_ALLOWANCE",
    "Cancelled",
    "Job",
    "JobBoard",
    "PlanOptions",
    "ZoneLayout",
    "apply_layouts",
    "check_setup",
    "curves",
    "meets_target",
    "plan",
]
