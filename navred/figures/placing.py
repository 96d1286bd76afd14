"""Labels placed where they overlap nothing: the first free spot of each label's candidates. Edge code.

A label's box is a rectangle turned with its text (:func:`navred.figures.drawing.text_corners`). Two boxes
overlap when no axis of either separates them (the separating axis theorem for convex polygons: Gottschalk,
Lin and Manocha, "OBBTree", SIGGRAPH 1996). A :class:`Placer` keeps the boxes already taken (labels,
symbols, the scale, the north arrow) and gives each new label the first of its candidate spots that lies
inside its frame and overlaps none of them. Where none of a label's own spots is free, :meth:`Placer.place_far`
searches the whole frame outward from the mark, nearest first, for a spot whose label and leader line (from
the mark to the label) overlap nothing; a caller may then try a smaller size, and at last list the label off
the picture. Lines a label must not overprint are taken as thin boxes along them (:func:`segment_box`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .drawing import Rect, text_corners


def overlap(a: np.ndarray, b: np.ndarray) -> bool:
    """Whether two convex polygons (k × 2 corners each, in order) overlap with an area (touching is not)."""
    for poly in (a, b):
        edges = np.roll(poly, -1, axis=0) - poly
        normals = np.column_stack([-edges[:, 1], edges[:, 0]])
        for n in normals:
            if not n.any():
                continue
            pa, pb = a @ n, b @ n
            if pa.max() <= pb.min() + 1e-9 or pb.max() <= pa.min() + 1e-9:
                return False
    return True


def overlaps(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Whether each of the rectangles ``a`` (n × 4 × 2) overlaps each of ``b`` (m × 4 × 2) with an area: n × m.
    The pairs whose upright bounds meet are tested by the separating axis theorem at once (a rectangle's axes
    are the normals of two adjacent edges)."""
    out = np.zeros((len(a), len(b)), dtype=bool)
    if not len(a) or not len(b):
        return out
    a_low, a_high, b_low, b_high = a.min(axis=1), a.max(axis=1), b.min(axis=1), b.max(axis=1)
    i, j = np.nonzero((a_low[:, None, 0] < b_high[None, :, 0]) & (b_low[None, :, 0] < a_high[:, None, 0])
                      & (a_low[:, None, 1] < b_high[None, :, 1]) & (b_low[None, :, 1] < a_high[:, None, 1]))
    if not i.size:
        return out
    pa, pb = a[i], b[j]  # the pairs: p × 4 × 2

    def axes(r):
        edges = np.stack([r[:, 1] - r[:, 0], r[:, 2] - r[:, 1]], axis=1)  # p × 2 × 2
        return np.stack([-edges[..., 1], edges[..., 0]], axis=-1)

    together = np.ones(i.size, dtype=bool)
    for normals in (axes(pa), axes(pb)):
        for which in range(2):
            n = normals[:, which]  # p × 2
            qa, qb = np.einsum("pkd,pd->pk", pa, n), np.einsum("pkd,pd->pk", pb, n)
            together &= ~((qa.max(axis=1) <= qb.min(axis=1) + 1e-9) | (qb.max(axis=1) <= qa.min(axis=1) + 1e-9))
    out[i, j] = together
    return out


def _separated_by_none(a: list, b: list) -> bool:
    """Whether two rectangles (four [x, y] corners each, as lists of floats) overlap with an area: the separating
    axis theorem as :func:`overlaps` works it for one pair, operation for operation (each axis the normal of an
    edge, each corner's projection x·nx + y·ny, the same slack)."""
    for r in (a, b):
        for (x0, y0), (x1, y1) in ((r[0], r[1]), (r[1], r[2])):
            nx, ny = -(y1 - y0), x1 - x0
            qa = [x * nx + y * ny for x, y in a]
            qb = [x * nx + y * ny for x, y in b]
            if max(qa) <= min(qb) + 1e-9 or max(qb) <= min(qa) + 1e-9:
                return False
    return True


def inside(corners: np.ndarray, rect: Rect) -> bool:
    """Whether every corner lies in the rectangle (x0, y0, x1, y1)."""
    return bool((corners[:, 0] >= rect[0]).all() and (corners[:, 0] <= rect[2]).all()
                and (corners[:, 1] >= rect[1]).all() and (corners[:, 1] <= rect[3]).all())


def rect_corners(x0: float, y0: float, x1: float, y1: float) -> np.ndarray:
    """The corners of an upright rectangle."""
    return np.array([(x0, y0), (x1, y0), (x1, y1), (x0, y1)], dtype=float)


@dataclass(frozen=True)
class Spot:
    """Where a label may go: the point its ``anchor`` and ``baseline`` sit at, and its turn (degrees
    counter-clockwise)."""

    x: float
    y: float
    anchor: str = "start"
    baseline: str = "bottom"
    rotation: float = 0.0


def segment_box(x0: float, y0: float, x1: float, y1: float, half_width: float) -> np.ndarray:
    """The rectangle a segment covers, ``half_width`` either side of it and beyond its ends."""
    length = math.hypot(x1 - x0, y1 - y0) or 1.0
    ux, uy = (x1 - x0) / length * half_width, (y1 - y0) / length * half_width
    return np.array([(x0 - ux - uy, y0 - uy + ux), (x1 + ux - uy, y1 + uy + ux), (x1 + ux + uy, y1 + uy - ux),
                     (x0 - ux + uy, y0 - uy - ux)])


def segment_boxes(x0, y0, x1, y1, half_width: float) -> np.ndarray:
    """:func:`segment_box` of many segments at once (n × 4 × 2)."""
    x0, y0, x1, y1 = (np.asarray(v, dtype=float) for v in (x0, y0, x1, y1))
    length = np.hypot(x1 - x0, y1 - y0)
    length = np.where(length > 0, length, 1.0)
    ux, uy = (x1 - x0) / length * half_width, (y1 - y0) / length * half_width
    return np.stack([np.stack([x0 - ux - uy, y0 - uy + ux], axis=-1), np.stack([x1 + ux - uy, y1 + uy + ux], axis=-1),
                     np.stack([x1 + ux + uy, y1 + uy - ux], axis=-1), np.stack([x0 - ux + uy, y0 - uy - ux], axis=-1)],
                    axis=1)


#: the step of the far search's grid of spots over the frame (points), and the gap a leader line keeps from
#: the mark it points at (points)
FAR_STEP_PT, LEADER_GAP_PT = 8.0, 7.0


class Placer:
    """The boxes taken on a page, and labels given the first spot of theirs that is free."""

    def __init__(self, gap_pt: float = 1.0) -> None:
        self.taken: list[np.ndarray] = []
        self.gap_pt = gap_pt
        self._bounds: tuple | None = None  # the taken boxes' upright bounds, kept while the boxes are

    def take(self, corners: np.ndarray) -> None:
        """Mark a box (a symbol, the scale, a label placed by hand) as taken: a rectangle's four corners (any
        other polygon is taken as the upright rectangle holding it)."""
        corners = np.asarray(corners, dtype=float)
        if corners.shape != (4, 2):
            corners = rect_corners(*corners.min(axis=0), *corners.max(axis=0))
        self.taken.append(corners)

    def with_also(self, boxes) -> Placer:
        """A placer that also counts ``boxes`` (the lines a label must keep clear of) as taken."""
        other = Placer(self.gap_pt)
        other.taken = self.taken + [np.asarray(b, dtype=float) for b in boxes]
        return other

    def free(self, corners: np.ndarray, frame: Rect) -> bool:
        """Whether a box lies inside ``frame`` and overlaps nothing taken.

        One box against the few taken ones whose upright bounds it meets, in plain floats: the very
        arithmetic of :func:`overlaps` (tested against it), without its array calls, which cost a plotting
        sheet's labels most of their time (each tries a dozen spots against a hundred boxes)."""
        if not inside(corners, frame):
            return False
        if not self.taken:
            return True
        key = (id(self.taken), len(self.taken), id(self.taken[-1]))  # boxes are only ever added
        if self._bounds is None or self._bounds[0] != key:
            taken = np.array(self.taken, dtype=float).reshape(-1, 4, 2)
            self._bounds = (key, taken.min(axis=1), taken.max(axis=1))
        _, low, high = self._bounds
        box = np.asarray(corners, dtype=float)
        box_low, box_high = box.min(axis=0), box.max(axis=0)
        near = np.flatnonzero((box_low[0] < high[:, 0]) & (low[:, 0] < box_high[0])
                              & (box_low[1] < high[:, 1]) & (low[:, 1] < box_high[1]))
        if not near.size:
            return True
        a = box.tolist()
        return not any(_separated_by_none(a, np.asarray(self.taken[k], dtype=float).tolist()) for k in near.tolist())

    def place_far(self, text: str, size: float, x: float, y: float, frame: Rect, *, bold: bool = False,
                  italic: bool = False, leader_crosses=(),
                  max_reach_pt: float | None = None) -> tuple[Spot, tuple[float, float, float, float]] | None:
        """The nearest free spot anywhere in ``frame`` for the label of a mark at (x, y), reached by a leader
        line that overlaps nothing taken either but the boxes ``leader_crosses`` (the mark's own symbol, the
        lines it may cross): (the spot, the leader's ends), both then taken; or None where the frame holds no
        such spot, or none within ``max_reach_pt`` of the mark where that is given. Every spot of a grid over the
        frame is tested at once (:func:`overlaps`)."""
        taken = np.array(self.taken, dtype=float).reshape(-1, 4, 2)
        # the leader may cross the boxes it is allowed to and any box holding the mark (its symbol, another's)
        allowed = {id(k) for k in leader_crosses}
        crossable = np.array([id(t) in allowed for t in self.taken], dtype=bool)
        if len(taken):
            crossable |= ((taken.min(axis=1) <= (x, y)) & (taken.max(axis=1) >= (x, y))).all(axis=1)
        gx = np.arange(frame[0], frame[2] + 0.01, FAR_STEP_PT)
        gy = np.arange(frame[1], frame[3] + 0.01, FAR_STEP_PT)
        anchors = ("start", "end", "middle")
        shapes = np.stack([text_corners(0.0, 0.0, text, size, anchor=a, baseline="middle", bold=bold,
                                        italic=italic, pad=self.gap_pt) for a in anchors])
        if max_reach_pt is not None:
            # only the spots, and the boxes, a label within reach can touch
            span = max_reach_pt + float(np.abs(shapes).max()) + FAR_STEP_PT
            gx, gy = gx[np.abs(gx - x) <= span], gy[np.abs(gy - y) <= span]
            if len(taken):
                near = ((taken.min(axis=1) <= (x + span, y + span)) & (taken.max(axis=1) >= (x - span, y - span))
                        ).all(axis=1)
                taken, crossable = taken[near], crossable[near]
        px, py = (v.ravel() for v in np.meshgrid(gx, gy))
        # every spot with every anchor: the label's box there, its distance from the mark
        corners = (shapes[None, :, :, :] + np.stack([px, py], axis=1)[:, None, None, :]).reshape(-1, 4, 2)
        anchor_of = np.tile(np.arange(len(anchors)), px.size)
        low, high = corners.min(axis=1), corners.max(axis=1)
        ex, ey = np.clip(x, low[:, 0], high[:, 0]), np.clip(y, low[:, 1], high[:, 1])
        reach = np.hypot(ex - x, ey - y)
        fits = ((low[:, 0] >= frame[0]) & (high[:, 0] <= frame[2]) & (low[:, 1] >= frame[1])
                & (high[:, 1] <= frame[3]))
        if max_reach_pt is not None:
            fits &= reach <= max_reach_pt
        candidates = np.flatnonzero(fits)
        candidates = candidates[np.argsort(reach[candidates], kind="stable")]
        blockers = taken[~crossable]
        for start in range(0, candidates.size, 512):  # nearest first, a block at a time
            block = candidates[start:start + 512]
            block = block[~overlaps(corners[block], taken).any(axis=1)]
            if not block.size:
                continue
            # the leader: from LEADER_GAP_PT off the mark to the nearest point of the label's box
            r = np.maximum(reach[block], 1e-9)
            sx, sy = x + (ex[block] - x) / r * LEADER_GAP_PT, y + (ey[block] - y) / r * LEADER_GAP_PT
            needs = reach[block] > LEADER_GAP_PT + 2.0
            blocked = overlaps(segment_boxes(sx, sy, ex[block], ey[block], 0.6), blockers).any(axis=1) & needs
            ok = np.flatnonzero(~blocked)
            if ok.size:
                break
        else:
            return None
        candidates = block
        k, pick = int(candidates[ok[0]]), int(ok[0])
        self.take(corners[k])
        leader = (x, y, x, y)
        if needs[pick]:
            leader = (float(sx[pick]), float(sy[pick]), float(ex[k]), float(ey[k]))
            self.take(segment_box(*leader, 0.6))
        return Spot(float(px[k // len(anchors)]), float(py[k // len(anchors)]), anchors[anchor_of[k]], "middle"), leader

    def place(self, text: str, size: float, spots, frame: Rect, *, bold: bool = False,
              italic: bool = False) -> Spot | None:
        """The first of ``spots`` where the label fits (then taken), or None where none does."""
        for spot in spots:
            corners = text_corners(spot.x, spot.y, text, size, anchor=spot.anchor, baseline=spot.baseline,
                                   rotation=spot.rotation, bold=bold, italic=italic, pad=self.gap_pt)
            if self.free(corners, frame):
                self.take(corners)
                return spot
        return None


@dataclass(frozen=True)
class Placed:
    """Where a mark's label went: its spot, its size (smaller than asked where it had to be) and the ends of
    its leader line (None when it sits beside its mark)."""

    spot: Spot
    size: float
    leader: tuple[float, float, float, float] | None


def place_mark_label(placer: Placer, text: str, size: float, spots, at: tuple[float, float], frame: Rect, *,
                     lines=(), own=(), bold: bool = False, italic: bool = False,
                     smaller_pt: float = 1.5, max_reach_pt: float | None = None) -> Placed | None:
    """The one way a mark's label (a fix, a DR, a body in the sky) is placed, clear of every label and symbol
    taken and of ``lines`` (boxes of the lines no label may overprint): at the first free of its own ``spots``
    beside the mark at ``at``; else at the nearest free place in ``frame`` joined to the mark by a leader line
    that crosses no line, else one that may (never another label); then ``smaller_pt`` smaller. The label and
    leader are taken in ``placer``; None where the frame holds no place (the caller lists the label off the
    picture). ``own``: the mark's own boxes (its symbol) that its leader starts inside; ``max_reach_pt``: the
    farthest from its mark a label may go (None: anywhere in the frame)."""
    clear = placer.with_also(lines)
    base = len(clear.taken)
    spot = clear.place(text, size, spots, frame, bold=bold, italic=italic)
    placed = Placed(spot, size, None) if spot is not None else None
    for pt in (size, size - smaller_pt):
        if placed is not None:
            break
        for crossing in (list(own), list(own) + list(lines)):
            found = clear.place_far(text, pt, *at, frame, bold=bold, italic=italic, leader_crosses=crossing,
                                    max_reach_pt=max_reach_pt)
            if found is not None:
                spot, leader = found
                placed = Placed(spot, pt, leader if leader[:2] != leader[2:] else None)
                break
    if placed is not None:
        placer.taken.extend(clear.taken[base:])
    return placed


__all__ = ["Placed", "place_mark_label", "overlap", "inside", "rect_corners", "segment_box", "overlaps", "Spot", "Placer", "FAR_STEP_PT", "LEADER_GAP_PT"]
