"""Shadow tests: does the segment from a source node to a receiver point cross a box?

Mirror walls unfold the room into a lattice of mirrored cells; the segment from
an image source in cell (i, j) to a receiver in the real room passes through
the cells in between, and every one of them holds a mirrored copy of every box.
Rather than copying the boxes, the segment is *folded*: a point of the unfolded
lattice lies in a copy of box B exactly when its folded coordinate
fold(x) = x mod 2W reflected into 0..W lies in B. Along one axis the copies of
B's extent [x0, x1] form a periodic set with period 2W and two intervals per
period, [x0, x1] and [2W − x1, 2W − x0]. So the test costs a few intervals per
box and segment, whatever the image order: the cost grows with the copies a
segment actually crosses, not with the lattice.

The slab method (Kay & Kajiya, "Ray tracing complex scenes", SIGGRAPH 1986)
restricted first to the segment's part inside the box's height range, which for
downward light is short, then to each crossed copy along the axis with fewer
crossings. Touching a face does not block (a canopy lying on a shelf top is lit).
"""

from __future__ import annotations

import numpy as np

T_EPS = 1e-9  # parameter overlap [of a unit segment] below which a segment only touches a box
CHUNK_PAIRS = 1 << 19  # node × point pairs per pass: bounds temporary memory


def _periodic_meets(a, b, c0, c1, period):
    """Whether the open interval (a, b) (a ≤ b) meets some (c0 + m·period, c1 + m·period); period None: m = 0."""
    if period is None:
        return (b > c0) & (a < c1) & (c1 > c0)
    m = np.floor((a - c1) / period) + 1.0  # first copy whose upper end lies above a
    return (c0 + m * period < b) & (c1 > c0)


def _bases(lo, hi, size):
    """Base intervals of the periodic copy set along one axis: [(c0, c1), ...] and the period (None: no mirror)."""
    if size is None:
        return [(lo, hi)], None
    return [(lo, hi), (2.0 * size - hi, 2.0 * size - lo)], 2.0 * size


def _crossings(u_lo, u_hi, bases, period):
    """(first copy index per base, largest number of copies any segment crosses) along one axis."""
    if period is None:
        return [np.zeros_like(u_lo) for _ in bases], 1
    firsts, most = [], 0
    for c0, c1 in bases:
        m0 = np.floor((u_lo - c1) / period) + 1.0
        m1 = np.ceil((u_hi - c0) / period) - 1.0
        firsts.append(m0)
        most = max(most, int(np.max(m1 - m0, initial=-1.0)) + 1)
    return firsts, most


def segments_blocked(q, p, box, fold_m=(None, None), grow_m=(0.0, 0.0, 0.0)) -> np.ndarray:
    """True where the segment from q (N, 3) to p (M, 3) crosses the box (or a mirror copy of it).

    box : (x0, y0, z0, x1, y1, z1) [m].
    fold_m : (W, L) room width and length along which the walls mirror, None where they do not.
    grow_m : the box is grown by t · grow at segment parameter t (0 at p, 1 at q), and by grow_z in
        height: with the centre node of an emitter and grow = the half-size of its node cloud this is a
        conservative test for the whole cloud (the segment from any node at parameter t lies within
        t · half-size of the centre's).
    Returns (N, M) booleans.
    """
    q = np.asarray(q, dtype=np.float64)
    p = np.asarray(p, dtype=np.float64)
    out = np.zeros((q.shape[0], p.shape[0]), dtype=bool)
    if q.shape[0] == 0 or p.shape[0] == 0:
        return out
    step = max(1, CHUNK_PAIRS // q.shape[0])
    for a in range(0, p.shape[0], step):
        out[:, a : a + step] = _blocked_chunk(q[:, None, :], p[None, a : a + step, :], box, fold_m, grow_m)
    return out


def _blocked_chunk(qb, pb, box, fold_m, grow_m):
    """Folded slab test on broadcastable arrays qb, pb (…, 3)."""
    x0, y0, z0, x1, y1, z1 = box
    gx, gy, gz = grow_m
    # One contiguous array per axis (slicing an (…, 3) array strides through memory).
    pcomp = [np.ascontiguousarray(pb[..., k]) for k in range(3)]
    dcomp = [qb[..., k] - pcomp[k] for k in range(3)]  # t = 0 at the receiver
    pz, dz = pcomp[2], dcomp[2]
    with np.errstate(divide="ignore", invalid="ignore"):
        ta, tb = (z0 - gz - pz) / dz, (z1 + gz - pz) / dz
    inside_z = (pz > z0 - gz) & (pz < z1 + gz)
    flat = dz == 0
    t_lo = np.where(flat, np.where(inside_z, 0.0, np.inf), np.minimum(ta, tb))
    t_hi = np.where(flat, np.where(inside_z, 1.0, -np.inf), np.maximum(ta, tb))
    t_lo, t_hi = np.maximum(t_lo, T_EPS), np.minimum(t_hi, 1.0 - T_EPS)
    shape = np.broadcast_shapes(qb.shape, pb.shape)[:-1]
    t_lo, t_hi = np.broadcast_to(t_lo, shape), np.broadcast_to(t_hi, shape)
    hit = np.zeros(shape, dtype=bool)
    live = t_hi > t_lo + T_EPS
    if not live.any():
        return hit
    axes = []
    for k, (lo, hi, g, size) in enumerate(((x0, x1, gx, fold_m[0]), (y0, y1, gy, fold_m[1]))):
        pk, dk = pcomp[k], dcomp[k]
        u_a, u_b = pk + t_lo * dk, pk + t_hi * dk
        u_lo, u_hi = np.minimum(u_a, u_b), np.maximum(u_a, u_b)
        # Grown by t·g: conservative over the live range with the largest t.
        grow = g * t_hi
        bases, period = _bases(lo - grow, hi + grow, size)
        firsts, most = _crossings(np.where(live, u_lo, 0.0), np.where(live, u_hi, 0.0), bases, period)
        axes.append((pk, dk, bases, period, firsts, most))
    # Walk the copies crossed along the axis with fewer crossings; test the other axis in closed form.
    walk, other = (axes[0], axes[1]) if axes[0][5] <= axes[1][5] else (axes[1], axes[0])
    pw, dw, bases_w, period_w, firsts, most = walk
    po, do, bases_o, period_o, _, _ = other
    with np.errstate(divide="ignore", invalid="ignore"):
        inv = 1.0 / dw
    still = dw == 0
    for (c0, c1), m0 in zip(bases_w, firsts, strict=True):
        for k in range(most):
            m = m0 + k
            shift = 0.0 if period_w is None else m * period_w
            lo_w, hi_w = c0 + shift, c1 + shift
            with np.errstate(invalid="ignore"):
                sa, sb = (lo_w - pw) * inv, (hi_w - pw) * inv
            inside = (pw > lo_w) & (pw < hi_w)
            s_lo = np.where(still, np.where(inside, -np.inf, np.inf), np.minimum(sa, sb))
            s_hi = np.where(still, np.where(inside, np.inf, -np.inf), np.maximum(sa, sb))
            s_lo, s_hi = np.maximum(s_lo, t_lo), np.minimum(s_hi, t_hi)
            ok = live & (s_hi > s_lo + T_EPS)
            if not ok.any():
                continue
            v_a, v_b = po + s_lo * do, po + s_hi * do
            v_lo, v_hi = np.minimum(v_a, v_b), np.maximum(v_a, v_b)
            met = np.zeros_like(ok)
            for e0, e1 in bases_o:
                met |= _periodic_meets(v_lo, v_hi, e0, e1, period_o)
            hit |= ok & met
    return hit


def slab_blocked(q, p, lo, hi) -> np.ndarray:
    """(N, M) booleans: the segment q → p crosses the box lo..hi (3,) (slab method, float32, no folding)."""
    return _slab(q[:, None, :], p[None, :, :], lo, hi)


def grown_slab(qb, pb, lo, hi, half_m) -> np.ndarray:
    """Conservative slab test for node clouds: the box lo..hi grown by t · half_m (t at the top of the box's
    height range along the segment, 0 at pb) in x and y and by half_m[2] in z. True wherever some segment
    from a node within half_m of qb to pb may cross the box."""
    f32 = np.float32
    pz = pb[..., 2].astype(f32, copy=False)
    dz = qb[..., 2].astype(f32, copy=False) - pz
    z0, z1 = f32(lo[2] - half_m[2]), f32(hi[2] + half_m[2])
    with np.errstate(divide="ignore", invalid="ignore"):
        t_top = np.fmax((z0 - pz) / dz, (z1 - pz) / dz)
    t_top = np.clip(np.nan_to_num(t_top, nan=1.0, posinf=1.0), 0.0, 1.0)
    g = [t_top * f32(half_m[0]), t_top * f32(half_m[1])]
    return _slab(qb, pb, (lo[0] - g[0], lo[1] - g[1], z0), (hi[0] + g[0], hi[1] + g[1], z1))


def _slab(qb, pb, lo, hi) -> np.ndarray:
    """Slab test on broadcastable arrays qb, pb (…, 3), float32, one axis at a time; t = 0 at pb.

    A segment parallel to a slab gets 1/0 = ±inf: inside the slab (lo − p < 0 < hi − p) the slab
    spans (−inf, inf) and never limits t; outside, both ends have one sign and it is never entered.
    """
    f32 = np.float32
    t_min = t_max = None
    for k in range(3):
        pk = pb[..., k].astype(f32, copy=False)
        dk = qb[..., k].astype(f32, copy=False) - pk
        with np.errstate(divide="ignore", invalid="ignore"):
            inv = f32(1.0) / dk
            t1 = (lo[k] - pk) * inv
            t2 = (hi[k] - pk) * inv
        a, b = np.fmin(t1, t2), np.fmax(t1, t2)
        t_min = a if t_min is None else np.fmax(t_min, a)
        t_max = b if t_max is None else np.fmin(t_max, b)
    eps = f32(1e-6)
    return (t_max > t_min + eps) & (t_max > eps) & (t_min < 1 - eps)


MAX_COPY_CELLS = 4  # node clouds spanning at most this many lattice cells test explicit box copies


def _cells(u, size):
    """Lattice cells (integers) the nodes' coordinates u fall in, together with cell 0."""
    lo, hi = np.floor(np.min(u) / size), np.floor(np.max(u) / size)
    return range(int(min(lo, 0)), int(max(hi, 0)) + 1)


def _mirror_extent(lo, hi, cell, size):
    """The extent [lo, hi] of a box mirrored into lattice cell ``cell`` of the given size."""
    if size is None or cell == 0:
        return lo, hi
    a, b = (cell * size + lo, cell * size + hi) if cell % 2 == 0 else (cell * size + size - hi, cell * size + size - lo)
    return a, b


def box_copies(q, bx, fold_m):
    """Box copies (lo, hi) in the lattice cells the segments from q can cross, or None when there are many."""
    xs = [0] if fold_m[0] is None else _cells(q[:, 0], fold_m[0])
    ys = [0] if fold_m[1] is None else _cells(q[:, 1], fold_m[1])
    if len(xs) * len(ys) > MAX_COPY_CELLS:
        return None
    out = []
    for a in xs:
        for b in ys:
            x0, x1 = _mirror_extent(bx[0], bx[3], a, fold_m[0])
            y0, y1 = _mirror_extent(bx[1], bx[4], b, fold_m[1])
            out.append(((x0, y0, bx[2]), (x1, y1, bx[5])))
    return out


def boxes_blocked(q, p, boxes, fold_m=(None, None)) -> np.ndarray:
    """True where the segment q (N, 3) → p (M, 3) crosses any of ``boxes`` (objects with x0_m … z1_m).

    Receiver points that no segment from the nodes' bounding cloud can shade are found first, with
    one conservative test per point from the cloud's centre, so the exact pairwise test runs only
    on the points in some box's shadow. Node clouds near the room (direct light, first images) test
    the few box copies they can reach with the plain slab method; far image batches fold.
    """
    q = np.asarray(q, dtype=np.float64)
    p = np.asarray(p, dtype=np.float64)
    out = np.zeros((q.shape[0], p.shape[0]), dtype=bool)
    if not boxes or q.shape[0] == 0 or p.shape[0] == 0:
        return out
    for b in boxes:
        bx = _extent(b)
        copies = box_copies(q, bx, fold_m)
        if copies is None:
            out |= segments_blocked(q, p, bx, fold_m)
            continue
        for lo, hi in copies:
            cand = np.nonzero(_may_shade(q, p, (*lo, *hi), (None, None)))[0] if q.shape[0] > 1 else None
            if cand is None:
                out |= slab_blocked(q, p, lo, hi)
            elif cand.size:
                out[:, cand] |= slab_blocked(q, p[cand], lo, hi)
    return out


def _extent(b) -> tuple[float, ...]:
    return (b.x0_m, b.y0_m, b.z0_m, b.x1_m, b.y1_m, b.z1_m)


def _may_shade(q, p, bx, fold_m) -> np.ndarray:
    """(M,) conservative: some segment from the nodes' bounding cloud to each point may cross the box."""
    qlo, qhi = q.min(axis=0), q.max(axis=0)
    centre, half = 0.5 * (qlo + qhi), 0.5 * (qhi - qlo)
    return cloud_may_shade(centre[None, :], half, p, (_Ext(*bx),), fold_m)[0]


class _Ext:
    """A box from its extent (x0, y0, z0, x1, y1, z1) [m]."""

    def __init__(self, x0, y0, z0, x1, y1, z1):
        self.x0_m, self.y0_m, self.z0_m, self.x1_m, self.y1_m, self.z1_m = x0, y0, z0, x1, y1, z1


def pairwise_blocked(qb, pb, boxes, fold_m=(None, None)) -> np.ndarray:
    """Like boxes_blocked but pair by pair on broadcastable arrays qb, pb (…, 3) (no candidate filter)."""
    out = np.zeros(np.broadcast_shapes(qb.shape, pb.shape)[:-1], dtype=bool)
    q_all = qb.reshape(-1, 3)
    for b in boxes:
        bx = _extent(b)
        copies = box_copies(q_all, bx, fold_m)
        if copies is None:
            out |= _blocked_chunk(qb, pb, bx, fold_m, (0.0, 0.0, 0.0))
            continue
        for lo, hi in copies:
            out |= _slab(qb, pb, lo, hi)
    return out


def cloud_may_shade(centres, half_m, p, boxes, fold_m=(None, None)) -> np.ndarray:
    """(C, M): some segment from the node cloud of half-size ``half_m`` around each centre to each point may
    cross a box (conservative)."""
    out = np.zeros((len(centres), len(p)), dtype=bool)
    for b in boxes:
        bx = _extent(b)
        copies = box_copies(centres, bx, fold_m)
        if copies is None:
            out |= segments_blocked(centres, p, bx, fold_m, tuple(half_m))
            continue
        for lo, hi in copies:
            out |= grown_slab(centres[:, None, :], p[None, :, :], lo, hi, half_m)
    return out


def shadow_candidates(q, p, boxes, fold_m=(None, None)) -> np.ndarray:
    """(M,) booleans: receiver points some box may shade from some node of q (a superset, never a miss)."""
    q = np.asarray(q, dtype=np.float64)
    p = np.asarray(p, dtype=np.float64)
    out = np.zeros(p.shape[0], dtype=bool)
    for b in boxes:
        out |= _may_shade(q, p, _extent(b), fold_m)
    return out
