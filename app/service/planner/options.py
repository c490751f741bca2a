"""What the planner is asked for (:class:`PlanOptions`) and what it finds for one zone (:class:`ZoneLayout`)."""

from __future__ import annotations

from dataclasses import dataclass, field

MIN_DIMMING = 0.10  # the room file's lowest dimming setting
DEFAULT_GAP_M = 0.10  # least gap between fixtures, and between a fixture and a wall (common practice, no source)
POINTS_PER_SIDE = 28  # planning grid; the proposals are analysed again on the room's own spacing
OBJECTIVES = ("power", "count", "cost")
TARGETS = ("bottom", "middle")
DAYS_PER_YEAR = 365.0


@dataclass(frozen=True)
class PlanOptions:
    """The planner's settings.

    objective : "power" (least input power), "count" (fewest fixtures) or "cost" (purchase price of the
        fixtures plus the electricity over ``years``).
    target : dim to the "bottom" of the DLI band (least power that meets it) or towards its "middle".
    min_gap_m : least gap between two fixtures' footprints, and between a footprint and a closed side (a wall,
        or on a rack the tier's own closed shelf edge: :func:`app.service.planner.arrange.spans`).
    """

    type_ids: tuple[str, ...] = ()
    objective: str = "power"
    target: str = "bottom"
    max_power_w: float | None = None
    min_clearance_m: float = 0.15
    min_gap_m: float = DEFAULT_GAP_M
    years: float = 3.0
    max_fixtures_per_zone: int = 24
    heights: int = 3
    keep: int = 3
    seed: int = 0


@dataclass
class ZoneLayout:
    """One arrangement over one zone, with its dimming and figures (from the planning model or the full one)."""

    zone_id: str
    zone_name: str
    type_id: str
    type_name: str
    rows: int
    cols: int
    rotation_deg: float
    above_canopy_m: float
    edge_weighted: bool
    staggered: bool
    dimming: float = 1.0
    power_w: float = 0.0
    cost: float = 0.0
    ppfd: dict[str, float] = field(default_factory=dict)
    dark_share: float = 0.0
    positions: list[tuple[float, float]] = field(default_factory=list)
    full_model: bool = False
    square_zone: bool = False  # rows × cols and cols × rows are the same choice over a square zone
    on_grid: bool = False  # every centre is on the room's hanging grid (rails or hook points)

    @property
    def count(self) -> int:
        return len(self.positions)

    @property
    def signature(self) -> tuple:
        """What makes two layouts different choices: type, count and arrangement (not only the height)."""
        shape = tuple(sorted((self.rows, self.cols))) if self.square_zone else (self.rows, self.cols)
        return (self.type_id, self.count, shape, self.staggered, 0.0 if self.square_zone else self.rotation_deg)

    def key(self, objective: str) -> tuple:
        main = {"count": self.count, "cost": self.cost}.get(objective, self.power_w)
        second = self.power_w if objective == "count" else self.count
        return (
            round(main, 6),
            round(second, 6),
            -round(self.ppfd.get("min_over_avg", 0.0), 6),
            self.type_id,
            self.rows,
            self.cols,
            self.rotation_deg,
            self.above_canopy_m,
            self.edge_weighted,
            self.staggered,
        )

    def describe(self) -> str:
        rows = f"{self.rows} row{'s' if self.rows > 1 else ''} of {self.cols}"
        return (
            f"{self.zone_name}: {self.count} × {self.type_name} ({rows}{', staggered' if self.staggered else ''}"
            f"{', turned 90°' if self.rotation_deg else ''}), {100 * self.above_canopy_m:.0f} cm above the canopy, "
            f"at {100 * self.dimming:.0f} %{', centres on the hanging grid' if self.on_grid else ''}"
        )

    def summary(self) -> dict:
        return {
            "zone": self.zone_name,
            "text": self.describe(),
            "type": self.type_name,
            "count": self.count,
            "power_w": self.power_w,
            "dimming_pct": round(100 * self.dimming),
            "on_grid": self.on_grid,
        }
