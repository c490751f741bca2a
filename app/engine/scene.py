"""Small frozen dataclasses that describe a scene to the engine. Units: metres, µmol/s."""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from app.engine.distributions import Distribution


@dataclass(frozen=True)
class Emitter:
    """A fixture. (x_m, y_m, z_m) is the centre of its emitting face.

    shape : 'point', 'bar', 'bar_array' or 'panel'.
    length_m : along the emitter's local x axis; width_m along its local y axis.
    bar_count, bar_width_m : for 'bar_array', bars spread evenly across width_m.
    flux_umol_s : photons emitted, after dimming [µmol/s].
    rotation_deg : turn about the vertical, counter-clockwise.
    tilt_deg, aim_deg : the nadir tilted by tilt_deg (0 down, 90 level, 180 up) toward compass direction
        aim_deg in the room's x-y frame (app/engine/aim.py); aim_deg means nothing when tilt_deg is 0.
    """

    id: str
    x_m: float
    y_m: float
    z_m: float
    flux_umol_s: float
    distribution: Distribution
    shape: str = "point"
    length_m: float = 0.0
    width_m: float = 0.0
    bar_count: int = 1
    bar_width_m: float = 0.0
    rotation_deg: float = 0.0
    tilt_deg: float = 0.0
    aim_deg: float = 0.0

    @property
    def tilted(self) -> bool:
        return self.tilt_deg != 0.0

    def __hash__(self) -> int:
        # Emitters key every memoised contribution; hash the fields once, not on every lookup.
        h = self.__dict__.get("_hash")
        if h is None:
            h = hash(tuple(getattr(self, f) for f in self.__dataclass_fields__))
            object.__setattr__(self, "_hash", h)
        return h

    @property
    def largest_dimension_m(self) -> float:
        return float(np.hypot(self.length_m, self.width_m))


@dataclass(frozen=True)
class Grid:
    """A level receiver grid facing up: points x0 + i·s, y0 + j·s within the rectangle, at z_m."""

    id: str
    x0_m: float
    y0_m: float
    width_m: float
    length_m: float
    z_m: float
    spacing_m: float

    @property
    def nx(self) -> int:
        return int(np.floor(self.width_m / self.spacing_m + 1e-9)) + 1

    @property
    def ny(self) -> int:
        return int(np.floor(self.length_m / self.spacing_m + 1e-9)) + 1

    @property
    def x_m(self) -> np.ndarray:
        return self._axis(self.x0_m, self.width_m, self.nx)

    @property
    def y_m(self) -> np.ndarray:
        return self._axis(self.y0_m, self.length_m, self.ny)

    def _axis(self, start: float, extent: float, n: int) -> np.ndarray:
        # Points spaced by s and centred in the rectangle, so both edges get equal margins.
        used = (n - 1) * self.spacing_m
        return start + 0.5 * (extent - used) + self.spacing_m * np.arange(n)

    @property
    def cell_area_m2(self) -> np.ndarray:
        """Area each point stands for (its Voronoi cell clipped to the rectangle)."""
        return np.outer(
            self._cell_len(self.y_m, self.y0_m, self.length_m), self._cell_len(self.x_m, self.x0_m, self.width_m)
        )

    @staticmethod
    def _cell_len(pts: np.ndarray, start: float, extent: float) -> np.ndarray:
        if pts.size == 1:
            return np.array([extent])
        mid = 0.5 * (pts[1:] + pts[:-1])
        edges = np.concatenate([[start], mid, [start + extent]])
        return np.diff(edges)


@dataclass(frozen=True)
class Box:
    """An axis-aligned obstacle that blocks light."""

    x0_m: float
    y0_m: float
    z0_m: float
    x1_m: float
    y1_m: float
    z1_m: float


SURFACES = ("left", "right", "front", "back", "ceiling")
SURFACE_KINDS = ("specular", "diffuse", "absorbing", "open")


@dataclass(frozen=True)
class Enclosure:
    """The room's walls: a box 0..width × 0..length × 0..height.

    finish : 'specular' (mirror images), 'diffuse' (radiosity) or 'absorbing': one finish for all.
    reflectance : PAR reflectance of closed walls and ceiling.
    open_sides : subset of {'front' (y=0), 'back' (y=length), 'left' (x=0), 'right' (x=width)}.
    surfaces : per-surface finishes ((surface, kind, reflectance), …) for any of SURFACES, kind one of
        SURFACE_KINDS, or 'floor' (absorbing unless listed); a surface not listed takes ``finish`` /
        ``reflectance`` / ``open_sides``.
    """

    width_m: float
    length_m: float
    height_m: float
    finish: str = "absorbing"
    reflectance: float = 0.0
    open_sides: frozenset[str] = frozenset()
    surfaces: tuple[tuple[str, str, float], ...] = ()

    def surface(self, side: str) -> tuple[str, float]:
        """(kind, PAR reflectance) of one surface; open and absorbing surfaces return 0."""
        for name, kind, rho in self.surfaces:
            if name == side:
                return (kind, float(rho)) if kind in ("specular", "diffuse") else (kind, 0.0)
        if side == "floor":
            return "absorbing", 0.0  # unless listed: 0.1 rooms have a dark floor
        if side in self.open_sides:
            return "open", 0.0
        if self.finish == "absorbing":
            return "absorbing", 0.0
        return self.finish, self.reflectance

    def wall_reflectance(self, side: str) -> float:
        """Reflectance of a surface whatever its kind (0 when open or absorbing)."""
        return self.surface(side)[1]

    def mirror_reflectance(self, side: str) -> float:
        """Reflectance of a surface that mirrors (0 unless specular)."""
        kind, rho = self.surface(side)
        return rho if kind == "specular" else 0.0

    def is_open(self, side: str) -> bool:
        return self.surface(side)[0] == "open"

    @property
    def has_specular(self) -> bool:
        return any(self.mirror_reflectance(s) > 0 for s in SURFACES[:4])

    @property
    def has_diffuse(self) -> bool:
        return any(self.surface(s)[0] == "diffuse" and self.surface(s)[1] > 0 for s in (*SURFACES, "floor"))

    def without_diffuse(self) -> Enclosure:
        """The same room with its matt surfaces made absorbing (a cheaper, darker bound)."""
        kinds = tuple(
            (s, "absorbing" if self.surface(s)[0] == "diffuse" else self.surface(s)[0], self.surface(s)[1])
            for s in SURFACES
        )
        return replace(self, surfaces=kinds)
