"""A small vector canvas with two renderers, SVG and PNG: the light drawing path of the plotting sheets.

Edge code. A workbook of a long passage holds hundreds of plotting sheets and a fleet log
thousands; a general plotting library spends a tenth of a second on each. A plotting sheet is
a few dozen lines, a polygon and some labels, so it is described here once as a list of
primitives in points (1/72 inch, origin at the top left, y downward) and rendered as:

- SVG text written directly (text stays text: searchable, editable, any scale);
- PNG through Pillow (the imaging library the workbook's pictures already need), drawn at
  twice the size asked and reduced, so that lines are smooth.

There is no transparency: a caller wanting a tint blends it with the paper (:func:`blend`)
and draws it before what must show through. Lines and polygons are clipped to a rectangle
when asked (Liang and Barsky, "A new concept and method for line clipping", ACM TOG 3(1),
1984; Sutherland and Hodgman, "Reentrant polygon clipping", CACM 17(1), 1974).
"""

from __future__ import annotations

import io
import math
from dataclasses import dataclass, field
from functools import lru_cache
from xml.sax.saxutils import escape

import numpy as np

Rect = tuple[float, float, float, float]  # x0, y0, x1, y1 in points
_UNIT_CIRCLE = (np.cos(np.linspace(0.0, 2.0 * np.pi, 33)[:-1]), np.sin(np.linspace(0.0, 2.0 * np.pi, 33)[:-1]))


@lru_cache(maxsize=256)
def blend(colour: str, background: str, alpha: float) -> str:
    """The opaque colour that ``colour`` at opacity ``alpha`` makes over ``background`` (#rrggbb)."""
    top = np.array([int(colour[k:k + 2], 16) for k in (1, 3, 5)], dtype=float)
    under = np.array([int(background[k:k + 2], 16) for k in (1, 3, 5)], dtype=float)
    mixed = np.rint(alpha * top + (1.0 - alpha) * under).astype(int)
    return "#" + "".join(f"{v:02x}" for v in mixed)


def clip_segment(x0: float, y0: float, x1: float, y1: float, rect: Rect):
    """The part of a segment inside a rectangle (Liang-Barsky), or None."""
    dx, dy = x1 - x0, y1 - y0
    lo, hi = 0.0, 1.0
    for p, q in ((-dx, x0 - rect[0]), (dx, rect[2] - x0), (-dy, y0 - rect[1]), (dy, rect[3] - y0)):
        if p == 0.0:
            if q < 0.0:
                return None
            continue
        t = q / p
        if p < 0.0:
            lo = max(lo, t)
        else:
            hi = min(hi, t)
        if lo > hi:
            return None
    return x0 + lo * dx, y0 + lo * dy, x0 + hi * dx, y0 + hi * dy


def clip_polygon(points: list[tuple[float, float]], rect: Rect) -> list[tuple[float, float]]:
    """A polygon cut to a rectangle (Sutherland-Hodgman); empty when nothing is inside."""
    def inside(p, edge):
        return (p[0] >= rect[0], p[0] <= rect[2], p[1] >= rect[1], p[1] <= rect[3])[edge]

    def crossing(p, q, edge):
        if edge < 2:
            x = rect[0] if edge == 0 else rect[2]
            t = (x - p[0]) / (q[0] - p[0])
            return x, p[1] + t * (q[1] - p[1])
        y = rect[1] if edge == 2 else rect[3]
        t = (y - p[1]) / (q[1] - p[1])
        return p[0] + t * (q[0] - p[0]), y

    out = list(points)
    for edge in range(4):
        if not out:
            break
        given, out = out, []
        for k, q in enumerate(given):
            p = given[k - 1]
            if inside(q, edge):
                if not inside(p, edge):
                    out.append(crossing(p, q, edge))
                out.append(q)
            elif inside(p, edge):
                out.append(crossing(p, q, edge))
    return out


@dataclass(frozen=True)
class _Line:
    points: tuple[tuple[float, float], ...]
    colour: str
    width: float
    dash: tuple[float, ...] | None
    kind: str | None = None


@dataclass(frozen=True)
class _Polygon:
    points: tuple[tuple[float, float], ...]
    fill: str | None
    outline: str | None
    width: float
    kind: str | None = None


@dataclass(frozen=True)
class _Text:
    x: float
    y: float
    text: str
    size: float
    colour: str
    anchor: str  # start, middle, end
    baseline: str  # bottom, middle, top
    rotation: float  # degrees counter-clockwise
    bold: bool
    italic: bool
    box: str | None
    kind: str | None = None


#: The font's ascent and descent, in ems (DejaVu Sans: 1901 and 483 of 2048 units): a label's box runs from the
#: ascent above its baseline to the descent below it, as wide as the font's advance widths make it.
FONT_ASCENT_EM = 0.929
FONT_DESCENT_EM = 0.236
#: where the baseline lies below the point a label is placed at, in ems, by its ``baseline``
_BASELINE_SHIFT = {"bottom": -FONT_DESCENT_EM, "middle": (FONT_ASCENT_EM - FONT_DESCENT_EM) / 2.0,
                   "top": FONT_ASCENT_EM}
_METRIC_PX = 200  # the size the advance widths are measured at (they scale with the size)


def text_width_pt(text: str, size: float, bold: bool = False, italic: bool = False) -> float:
    """The advance width of ``text`` in points at ``size`` points, from the font the PNG renderer draws with
    (the SVG names the same font): the canvas's own metrics, which the label placing and its tests share."""
    return _advance(str(text), bool(bold), bool(italic)) * size / _METRIC_PX


@lru_cache(maxsize=4096)
def _advance(text: str, bold: bool, italic: bool) -> float:
    return float(_font(_METRIC_PX, bold, italic).getlength(text))


def text_corners(x: float, y: float, text: str, size: float, *, anchor: str = "start", baseline: str = "bottom",
                 rotation: float = 0.0, bold: bool = False, italic: bool = False, pad: float = 0.0) -> np.ndarray:
    """The four corners (4 × 2, points, y down) of a label's box as :meth:`Canvas.text` places it: from the
    font's ascent above the baseline to its descent below, as wide as its advance, turned ``rotation`` degrees
    counter-clockwise about (x, y), grown by ``pad`` points on every side."""
    width = text_width_pt(text, size, bold, italic)
    start = {"start": 0.0, "middle": -width / 2.0, "end": -width}[anchor]
    base = _BASELINE_SHIFT[baseline] * size
    x0, x1 = start - pad, start + width + pad
    y0, y1 = base - FONT_ASCENT_EM * size - pad, base + FONT_DESCENT_EM * size + pad
    local = np.array([(x0, y0), (x1, y0), (x1, y1), (x0, y1)])
    turn = math.radians(rotation)
    cos_t, sin_t = math.cos(turn), math.sin(turn)
    # counter-clockwise on the page, whose y runs down
    return np.column_stack([x + local[:, 0] * cos_t + local[:, 1] * sin_t,
                            y - local[:, 0] * sin_t + local[:, 1] * cos_t])


def wrap_text(text: str, size: float, width_pt: float, bold: bool = False, italic: bool = False) -> list[str]:
    """``text`` broken at spaces into lines no wider than ``width_pt`` at ``size`` (a word longer than the
    line stands alone on its line): a long note is wrapped, never cut, and never inside an angle (a hemisphere
    letter stays with its number: :func:`navred.angles.keep_angles_whole`)."""
    from ..angles import keep_angles_whole

    lines: list[str] = []
    for word in keep_angles_whole(str(text)).split(" "):  # an angle is one word: 44° 30.0′ N never broken
        word = word.replace("\u00a0", " ")
        if lines and text_width_pt(f"{lines[-1]} {word}", size, bold, italic) <= width_pt:
            lines[-1] = f"{lines[-1]} {word}"
        else:
            lines.append(word)
    return lines or [""]


#: the margin of a label's background box around its text, in ems
BOX_PAD_EM = 0.15


@dataclass
class Canvas:
    """A page of primitives, ``width`` by ``height`` points, on a ``background`` colour. Every primitive may
    carry a ``kind`` (what it draws: 'fix', 'dr', 'line label'...), written as its SVG class."""

    width: float
    height: float
    background: str = "#ffffff"
    items: list = field(default_factory=list)

    def line(self, xs, ys, colour: str, width: float = 1.0, dash: tuple[float, ...] | None = None,
             clip: Rect | None = None, kind: str | None = None) -> None:
        """A polyline through the points (a straight segment when two), clipped to ``clip``."""
        points = [(float(x), float(y)) for x, y in zip(xs, ys)]
        if clip is None:
            self.items.append(_Line(tuple(points), colour, width, dash, kind))
            return
        for p, q in zip(points, points[1:]):
            cut = clip_segment(*p, *q, clip)
            if cut is not None:
                self.items.append(_Line(((cut[0], cut[1]), (cut[2], cut[3])), colour, width, dash, kind))

    def polygon(self, xs, ys, fill: str | None = None, outline: str | None = None, width: float = 1.0,
                clip: Rect | None = None, kind: str | None = None) -> None:
        xs, ys = np.asarray(xs, dtype=float), np.asarray(ys, dtype=float)
        points = list(zip(xs.tolist(), ys.tolist()))
        if clip is not None and not (xs.min() >= clip[0] and xs.max() <= clip[2] and ys.min() >= clip[1]
                                     and ys.max() <= clip[3]):
            points = clip_polygon(points, clip)  # only a polygon that reaches outside is cut
        if len(points) >= 3:
            self.items.append(_Polygon(tuple(points), fill, outline, width, kind))

    def circle(self, x: float, y: float, radius: float, fill: str | None = None, outline: str | None = None,
               width: float = 1.0, kind: str | None = None) -> None:
        self.polygon(x + radius * _UNIT_CIRCLE[0], y + radius * _UNIT_CIRCLE[1], fill, outline, width, kind=kind)

    def text(self, x: float, y: float, text: str, size: float, colour: str, *, anchor: str = "start",
             baseline: str = "bottom", rotation: float = 0.0, bold: bool = False, italic: bool = False,
             box: str | None = None, kind: str | None = None) -> None:
        """A label whose ``anchor`` (start, middle, end) and ``baseline`` (bottom: the font's descent; middle;
        top: its ascent) sit at (x, y), turned ``rotation`` degrees counter-clockwise about that point, on a
        ``box`` of colour if given. Its extent is :func:`text_corners`'s."""
        self.items.append(_Text(float(x), float(y), str(text), size, colour, anchor, baseline, float(rotation),
                                bold, italic, box, kind))

    def replay(self, pen) -> None:
        """Draw every primitive, in order, with another renderer: ``pen.line(points, colour, width, dash)``,
        ``pen.polygon(points, fill, outline, width)`` and ``pen.text(x, y, text, size, colour, anchor,
        baseline, rotation, bold, italic, box)``, in this canvas's points (origin top left, y down)."""
        for item in self.items:
            if isinstance(item, _Line):
                pen.line(item.points, item.colour, item.width, item.dash)
            elif isinstance(item, _Polygon):
                pen.polygon(item.points, item.fill, item.outline, item.width)
            else:
                pen.text(item.x, item.y, item.text, item.size, item.colour, item.anchor, item.baseline,
                         item.rotation, item.bold, item.italic, item.box)

    # --- SVG ---------------------------------------------------------------------------

    def to_svg(self) -> str:
        """The page as an SVG 1.1 document (text kept as text; each primitive's kind as its class)."""
        out = [f'<svg xmlns="http://www.w3.org/2000/svg" version="1.1" width="{self.width:g}pt" '
               f'height="{self.height:g}pt" viewBox="0 0 {self.width:g} {self.height:g}">',
               f'<rect width="100%" height="100%" fill="{self.background}"/>']
        for item in self.items:
            kind = f' class="{escape(item.kind, {chr(34): "&quot;"})}"' if item.kind else ""
            if isinstance(item, _Line):
                path = _svg_points(item.points)
                dash = f' stroke-dasharray="{" ".join(f"{d:g}" for d in item.dash)}"' if item.dash else ""
                out.append(f'<polyline{kind} points="{path}" fill="none" stroke="{item.colour}" '
                           f'stroke-width="{item.width:g}"{dash}/>')
            elif isinstance(item, _Polygon):
                path = _svg_points(item.points)
                stroke = f' stroke="{item.outline}" stroke-width="{item.width:g}"' if item.outline else ""
                out.append(f'<polygon{kind} points="{path}" fill="{item.fill or "none"}"{stroke}/>')
            else:
                out.append(_svg_text(item, kind))
        out.append("</svg>")
        return "\n".join(out) + "\n"

    # --- PNG ---------------------------------------------------------------------------

    def to_png(self, width_px: int, *, compress_level: int = 3) -> bytes:
        """The page as a PNG ``width_px`` pixels wide (the height in proportion)."""
        from PIL import Image, ImageDraw

        scale = 2.0 * width_px / self.width  # drawn at twice the size, then reduced: smooth lines
        size = (int(round(self.width * scale)), int(round(self.height * scale)))
        image = Image.new("RGB", size, self.background)
        draw = ImageDraw.Draw(image)
        for item in self.items:
            if isinstance(item, _Line):
                width = max(1, int(round(item.width * scale)))
                for segment in _dashed(item.points, item.dash):
                    draw.line([(x * scale, y * scale) for x, y in segment], fill=item.colour, width=width,
                              joint="curve")
            elif isinstance(item, _Polygon):
                points = [(x * scale, y * scale) for x, y in item.points]
                if item.fill:
                    draw.polygon(points, fill=item.fill)
                if item.outline:
                    draw.line(points + points[:1], fill=item.outline, width=max(1, int(round(item.width * scale))),
                              joint="curve")
            else:
                _png_text(image, draw, item, scale)
        image = image.reduce(2)
        out = io.BytesIO()
        image.save(out, format="PNG", compress_level=compress_level)
        return out.getvalue()


def _svg_points(points) -> str:
    """``x,y x,y ...`` to 0.01 pt, the whole list in one formatting."""
    return ("%.2f,%.2f " * len(points) % tuple(v for point in points for v in point))[:-1]


_SVG_ANCHOR = {"start": "start", "middle": "middle", "end": "end"}


def _svg_text(item: _Text, kind: str = "") -> str:
    """A label: its baseline written where :func:`text_corners` puts it, its box the corners' rectangle."""
    weight = ' font-weight="bold"' if item.bold else ""
    style = ' font-style="italic"' if item.italic else ""
    turn = f' transform="rotate({-item.rotation:.2f} {item.x:.2f} {item.y:.2f})"' if item.rotation else ""
    base_y = item.y + _BASELINE_SHIFT[item.baseline] * item.size
    box = ""
    if item.box:
        # the box unturned (the transform turns it with its text)
        corners = text_corners(item.x, item.y, item.text, item.size, anchor=item.anchor, baseline=item.baseline,
                               bold=item.bold, italic=item.italic, pad=BOX_PAD_EM * item.size)
        (x0, y0), (x1, y1) = corners.min(axis=0), corners.max(axis=0)
        box = (f'<rect x="{x0:.2f}" y="{y0:.2f}" width="{x1 - x0:.2f}" height="{y1 - y0:.2f}" rx="1.5" '
               f'fill="{item.box}"{turn}/>')
    return (f'{box}<text{kind} x="{item.x:.2f}" y="{base_y:.2f}" font-family="DejaVu Sans, Verdana, sans-serif" '
            f'font-size="{item.size:g}" fill="{item.colour}" text-anchor="{_SVG_ANCHOR[item.anchor]}"'
            f'{weight}{style}{turn}>{escape(item.text)}</text>')


@lru_cache(maxsize=64)
def _font(size_px: int, bold: bool, italic: bool):
    """The DejaVu Sans face that ships with the plotting library (offline, the same on every machine)."""
    from PIL import ImageFont

    name = "DejaVuSans" + ("-Bold" if bold else "") + ("Oblique" if italic and bold else "-Oblique" if italic else "")
    return ImageFont.truetype(str(font_folder() / f"{name}.ttf"), size_px)


@lru_cache(maxsize=1)
def font_folder():
    """The plotting library's folder of fonts (DejaVu Sans), found without importing the library: its import is
    a fifth of a second, paid by every command that placed a label or printed a page, where the fonts are all
    the canvas and the printed pages take from it."""
    import importlib.util
    from pathlib import Path

    spec = importlib.util.find_spec("matplotlib")
    folder = Path(spec.origin).with_name("mpl-data") / "fonts" / "ttf" if spec and spec.origin else None
    if folder is None or not folder.is_dir():  # laid out otherwise: ask the library itself
        import matplotlib

        folder = Path(matplotlib.get_data_path()) / "fonts" / "ttf"
    return folder


_PIL_ANCHOR = {"start": "ls", "middle": "ms", "end": "rs"}  # on the baseline, which the canvas places itself


def _png_text(image, draw, item: _Text, scale: float) -> None:
    from PIL import Image, ImageDraw

    font = _font(max(4, int(round(item.size * scale))), item.bold, item.italic)
    anchor = _PIL_ANCHOR[item.anchor]
    shift = _BASELINE_SHIFT[item.baseline] * item.size
    pad = BOX_PAD_EM * item.size
    if not item.rotation:
        if item.box:
            corners = text_corners(item.x, item.y, item.text, item.size, anchor=item.anchor, baseline=item.baseline,
                                   bold=item.bold, italic=item.italic, pad=pad) * scale
            (x0, y0), (x1, y1) = corners.min(axis=0), corners.max(axis=0)
            draw.rounded_rectangle((x0, y0, x1, y1), radius=pad * scale, fill=item.box)
        draw.text((item.x * scale, (item.y + shift) * scale), item.text, fill=item.colour, font=font, anchor=anchor)
        return
    # a turned label: drawn unturned on its own tile about its anchor, turned, and laid on so that the anchor
    # lands on (x, y)
    corners = text_corners(0.0, 0.0, item.text, item.size, anchor=item.anchor, baseline=item.baseline,
                           bold=item.bold, italic=item.italic, pad=pad) * scale
    (x0, y0), (x1, y1) = corners.min(axis=0), corners.max(axis=0)
    margin = 2
    width, height = int(math.ceil(x1 - x0)) + 2 * margin, int(math.ceil(y1 - y0)) + 2 * margin
    at_x, at_y = margin - x0, margin - y0  # the anchor in the tile
    tile = Image.new("RGBA", (width, height), (0, 0, 0, 0))
    pen = ImageDraw.Draw(tile)
    if item.box:
        pen.rounded_rectangle((margin, margin, margin + x1 - x0, margin + y1 - y0), radius=pad * scale, fill=item.box)
    pen.text((at_x, at_y + shift * scale), item.text, fill=item.colour, font=font, anchor=anchor)
    turned = tile.rotate(item.rotation, resample=Image.BILINEAR, expand=True)
    # where the anchor went: its offset from the tile's centre, turned counter-clockwise on the page
    angle = math.radians(item.rotation)
    dx, dy = at_x - width / 2, at_y - height / 2
    new_x = turned.width / 2 + dx * math.cos(angle) + dy * math.sin(angle)
    new_y = turned.height / 2 - dx * math.sin(angle) + dy * math.cos(angle)
    image.paste(turned, (int(round(item.x * scale - new_x)), int(round(item.y * scale - new_y))), turned)


def _dashed(points, dash):
    """A polyline cut into its dashes (the whole line when ``dash`` is None)."""
    if not dash:
        yield list(points)
        return
    pattern = list(dash) * 2 if len(dash) % 2 else list(dash)
    for p, q in zip(points, points[1:]):
        length = math.hypot(q[0] - p[0], q[1] - p[1])
        if length == 0.0:
            continue
        ux, uy = (q[0] - p[0]) / length, (q[1] - p[1]) / length
        at, k = 0.0, 0
        while at < length:
            step = pattern[k % len(pattern)]
            end = min(at + step, length)
            if k % 2 == 0:
                yield [(p[0] + ux * at, p[1] + uy * at), (p[0] + ux * end, p[1] + uy * end)]
            at, k = end, k + 1


__all__ = ["Canvas", "blend", "clip_segment", "clip_polygon", "text_width_pt", "text_corners", "wrap_text", "font_folder",
           "FONT_ASCENT_EM", "FONT_DESCENT_EM", "BOX_PAD_EM"]
