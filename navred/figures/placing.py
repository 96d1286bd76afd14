"""Labels placed where they overlap nothing: the first free spot of each label's candidates. Edge code.

A label's box is a rectangle turned with its text (:func:`navred.figures.drawing.text_corners`). Two boxes
overlap when no axis of either separates them (the separating axis theorem for convex polygons: Gottschalk,
Lin and Manocha, "OBBTree", SIGGRAPH 1996). A :class:`Placer` keeps the boxes already taken (labels,
symbols, the scale, the north arrow) and gives each new label the first of its candidate spots that lies
inside its frame and overlaps none of them.
"""

from __future__ import annotations

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


class Placer:
    """The boxes taken on a page, and labels given the first spot of theirs that is free."""

    def __init__(self, gap_pt: float = 1.0) -> None:
        self.taken: list[np.ndarray] = []
        self.gap_pt = gap_pt

    def take(self, corners: np.ndarray) -> None:
        """Mark a box (a symbol, the scale, a label placed by hand) as taken."""
        self.taken.append(np.asarray(corners, dtype=float))

    def free(self, corners: np.ndarray, frame: Rect) -> bool:
        """Whether a box lies inside ``frame`` and overlaps nothing taken."""
        return inside(corners, frame) and not any(overlap(corners, other) for other in self.taken)

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


__all__ = ["overlap", "inside", "rect_corners", "Spot", "Placer"]
