"""Draws a schematic `Layout` with matplotlib (no pyplot): IEC 60617 symbols, SVG or PDF
bytes, byte-identical on every run (fixed SVG hash salt, no dates). Text is drawn as
outlines so it keeps the size the layout reserved for it, whatever fonts the reader has.
"""

from __future__ import annotations

import io
import math

from .schematic import FONT_POINTS, UNIT_INCHES, Layout, Symbol

_STYLE = {
    "svg.hashsalt": "symcirc-schematic",
    "svg.fonttype": "path",
    "pdf.fonttype": 3,
    "font.size": FONT_POINTS,
    "font.family": "DejaVu Sans",
}
_LINE = {"color": "black", "linewidth": 1.0, "solid_capstyle": "butt"}
_METADATA = {"svg": {"Date": None}, "pdf": {"CreationDate": None, "ModDate": None},
             "png": {"Software": None}}


def image(layout: Layout, fmt: str) -> bytes:
    """The schematic as 'svg', 'pdf' or 'png' bytes."""
    from matplotlib import rc_context
    from matplotlib.figure import Figure

    with rc_context(_STYLE):
        figure = Figure(figsize=(layout.width * UNIT_INCHES, layout.height * UNIT_INCHES))
        axes = figure.add_axes((0, 0, 1, 1))
        axes.set_xlim(0, layout.width)
        axes.set_ylim(0, layout.height)
        axes.set_axis_off()
        for wire in layout.wires:
            _line(axes, [wire.start, wire.end])
        for x, y in layout.dots:
            axes.add_patch(_circle((x, y), 0.06, filled=True))
        for symbol in layout.symbols:
            _SYMBOLS[symbol.kind](axes, symbol)
        for label in layout.labels:
            axes.text(label.x, label.y, label.text, ha="left", va="bottom")
        buffer = io.BytesIO()
        figure.savefig(buffer, format=fmt, metadata=_METADATA[fmt])
    return buffer.getvalue()


def _line(axes, points, **style) -> None:
    xs, ys = zip(*points, strict=True)
    axes.plot(xs, ys, **{**_LINE, **style})


def _circle(centre, radius, filled=False):
    from matplotlib.patches import Circle

    return Circle(centre, radius, facecolor="black" if filled else "white",
                  edgecolor="black", linewidth=1.0, zorder=3)


def _ends(symbol: Symbol) -> tuple[tuple[float, float], tuple[float, float]]:
    """(lower, upper) terminal points of a two-terminal part."""
    a, b = (t.point for t in symbol.terminals)
    return (a, b) if a[1] < b[1] else (b, a)


def _rectangle(axes, symbol: Symbol) -> None:
    """IEC 60617 resistor (and general impedance): a rectangle between the leads."""
    from matplotlib.patches import Rectangle

    (x, y0), (_, y1) = _ends(symbol)
    axes.add_patch(Rectangle((x - 0.17, y0), 0.34, y1 - y0, facecolor="white",
                             edgecolor="black", linewidth=1.0, zorder=3))


def _capacitor(axes, symbol: Symbol) -> None:
    """IEC 60617 capacitor: two plates across the leads."""
    (x, y0), (_, y1) = _ends(symbol)
    yc = (y0 + y1) / 2
    _line(axes, [(x, y0), (x, yc - 0.08)])
    _line(axes, [(x, yc + 0.08), (x, y1)])
    for y in (yc - 0.08, yc + 0.08):
        _line(axes, [(x - 0.26, y), (x + 0.26, y)], linewidth=1.6)


def _humps(axes, x: float, y0: float, y1: float, side: int, turns: int = 4) -> None:
    """A winding of `turns` half circles from y0 to y1, bulging to `side` (±1)."""
    import numpy as np

    radius = (y1 - y0) / turns / 2
    points = []
    for i in range(turns):
        angles = np.linspace(-math.pi / 2, math.pi / 2, 13)
        cy = y0 + radius * (2 * i + 1)
        points += [(x + side * radius * math.cos(a), cy + radius * math.sin(a))
                   for a in angles]
    _line(axes, points)


def _inductor(axes, symbol: Symbol) -> None:
    """IEC 60617 inductor: a row of half circles."""
    (x, y0), (_, y1) = _ends(symbol)
    _line(axes, [(x, y0), (x, y0 + 0.1)])
    _line(axes, [(x, y1 - 0.1), (x, y1)])
    _humps(axes, x, y0 + 0.1, y1 - 0.1, 1)


def _source(axes, symbol: Symbol) -> None:
    """IEC 60617 ideal sources: a circle, the line through it along the wire for a voltage
    source, across it for a current source; `+` at the first terminal, or an arrow towards
    it (the direction of the driven current)."""
    (x, y0), (_, y1) = _ends(symbol)
    yc, radius = (y0 + y1) / 2, (y1 - y0) / 2
    axes.add_patch(_circle((x, yc), radius))
    first_up = not symbol.flipped
    if symbol.kind == "voltage source":
        _line(axes, [(x, y0), (x, y1)], zorder=4)
        sign_y = yc + 0.14 if first_up else yc - 0.14
        axes.text(x - 0.16, sign_y, "+", ha="center", va="center", fontsize=7, zorder=4)
    else:
        _line(axes, [(x - radius, yc), (x + radius, yc)], zorder=4)
        direction = 1 if first_up else -1
        axes.annotate("", xy=(x - radius - 0.12, yc + direction * 0.28),
                      xytext=(x - radius - 0.12, yc - direction * 0.28),
                      arrowprops={"arrowstyle": "-|>", "linewidth": 0.9, "color": "black",
                                  "shrinkA": 0, "shrinkB": 0, "mutation_scale": 7})


def _opamp(axes, symbol: Symbol) -> None:
    """An amplifier triangle with its inputs marked + and −; ∞ for an ideal opamp."""
    from matplotlib.patches import Polygon

    box = symbol.box
    axes.add_patch(Polygon([(box.x0, box.y0), (box.x0, box.y1), (box.x1, symbol.centre[1])],
                           closed=True, facecolor="white", edgecolor="black", linewidth=1.0,
                           zorder=3))
    for terminal, mark in zip(symbol.terminals[:2], ("+", "−"), strict=True):
        axes.text(box.x0 + 0.12, terminal.point[1], mark, ha="left", va="center", zorder=4)


def _transformer(axes, symbol: Symbol) -> None:
    """IEC 60617 transformer: two windings facing each other, dots at p1 and p2."""
    box = symbol.box
    p1, n1, p2, n2 = (t.point for t in symbol.terminals)
    for (first, second), x, side in (((p1, n1), box.x0 + 0.2, 1),
                                     ((p2, n2), box.x1 - 0.2, -1)):
        low, high = sorted((first, second), key=lambda p: p[1])
        _line(axes, [low, (x, low[1])])
        _line(axes, [high, (x, high[1])])
        _humps(axes, x, low[1], high[1], side)
        dot_y = first[1] - 0.12 if first[1] > second[1] else first[1] + 0.12
        axes.add_patch(_circle((x - side * 0.12, dot_y), 0.045, filled=True))
    for x in (box.x0 + 0.46, box.x1 - 0.46):
        _line(axes, [(x, box.y0 + 0.1), (x, box.y1 - 0.1)])


def _ground(axes, symbol: Symbol) -> None:
    """IEC 60617 reference (ground): three bars, the widest at the wire."""
    x, top = symbol.terminals[0].point
    for i, half in enumerate((0.3, 0.2, 0.1)):
        y = top - 0.11 * i
        _line(axes, [(x - half, y), (x + half, y)], linewidth=1.2)


def _port(axes, symbol: Symbol) -> None:
    axes.add_patch(_circle(symbol.centre, 0.08))


_SYMBOLS = {
    "resistor": _rectangle, "conductance": _rectangle, "impedance": _rectangle,
    "admittance": _rectangle, "capacitor": _capacitor, "inductor": _inductor,
    "voltage source": _source, "current source": _source, "opamp": _opamp,
    "transformer": _transformer, "ground": _ground, "port": _port,
}
