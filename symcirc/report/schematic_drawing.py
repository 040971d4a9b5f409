"""Draws a schematic `Layout` with IEC 60617 symbols: first as a list of plain shapes
(lines, polygons, circles, text), then as SVG or PDF written directly: milliseconds, no
plotting library to import, byte-identical on every run.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from xml.sax.saxutils import escape

from .schematic import FONT_POINTS, UNIT_INCHES, Layout, Symbol

Point = tuple[float, float]
POINTS_PER_UNIT = UNIT_INCHES * 72
LINE_POINTS = 1.0
FONT_FAMILY = "DejaVu Sans, Verdana, Arial, Helvetica, sans-serif"


@dataclass(frozen=True)
class Shape:
    """One thing to draw: `line` (an open polyline), `polygon` (closed, `fill` white or
    black), `circle` (`points[0]` its centre), `text` (at `points[0]`: its lower-left corner,
    or its centre when `centred`)."""

    kind: str
    points: tuple[Point, ...]
    fill: str = "none"
    width: float = LINE_POINTS
    radius: float = 0.0
    text: str = ""
    size: float = FONT_POINTS
    centred: bool = False


def image(layout: Layout, fmt: str) -> bytes:
    """The schematic as 'svg' or 'pdf' bytes."""
    shapes = shapes_of(layout)
    return (svg if fmt == "svg" else pdf)(shapes, layout.width, layout.height)


def shapes_of(layout: Layout) -> list[Shape]:
    """Everything to draw, wires first (symbols are drawn over them)."""
    shapes = [Shape("line", (wire.start, wire.end)) for wire in layout.wires]
    shapes += [Shape("circle", (dot,), fill="black", radius=0.06) for dot in layout.dots]
    for symbol in layout.symbols:
        shapes += _SYMBOLS[symbol.kind](symbol)
    shapes += [Shape("text", ((label.x, label.y),), text=label.text)
               for label in layout.labels]
    return shapes


# ---------------------------------------------------------------- symbols


def _ends(symbol: Symbol) -> tuple[Point, Point]:
    """(lower, upper) terminal points of a two-terminal part."""
    a, b = (t.point for t in symbol.terminals)
    return (a, b) if a[1] < b[1] else (b, a)


def _rectangle(symbol: Symbol) -> list[Shape]:
    """IEC 60617 resistor (and general impedance): a rectangle between the leads."""
    (x, y0), (_, y1) = _ends(symbol)
    return [Shape("polygon", ((x - 0.17, y0), (x + 0.17, y0), (x + 0.17, y1), (x - 0.17, y1)),
                  fill="white")]


def _capacitor(symbol: Symbol) -> list[Shape]:
    """IEC 60617 capacitor: two plates across the leads."""
    (x, y0), (_, y1) = _ends(symbol)
    yc = (y0 + y1) / 2
    return [Shape("line", ((x, y0), (x, yc - 0.08))), Shape("line", ((x, yc + 0.08), (x, y1))),
            Shape("line", ((x - 0.26, yc - 0.08), (x + 0.26, yc - 0.08)), width=1.6),
            Shape("line", ((x - 0.26, yc + 0.08), (x + 0.26, yc + 0.08)), width=1.6)]


def _humps(x: float, y0: float, y1: float, side: int, turns: int = 4) -> Shape:
    """A winding of `turns` half circles from y0 to y1, bulging to `side` (±1)."""
    radius = (y1 - y0) / turns / 2
    points = []
    for i in range(turns):
        cy = y0 + radius * (2 * i + 1)
        points += [(round(x + side * radius * math.cos(a), 6), round(cy + radius * math.sin(a), 6))
                   for a in (-math.pi / 2 + k * math.pi / 12 for k in range(13))]
    return Shape("line", tuple(points))


def _inductor(symbol: Symbol) -> list[Shape]:
    """IEC 60617 inductor: a row of half circles."""
    (x, y0), (_, y1) = _ends(symbol)
    return [Shape("line", ((x, y0), (x, y0 + 0.1))), Shape("line", ((x, y1 - 0.1), (x, y1))),
            _humps(x, y0 + 0.1, y1 - 0.1, 1)]


def _source(symbol: Symbol) -> list[Shape]:
    """IEC 60617 ideal sources: a circle, the line through it along the wire for a voltage
    source, across it for a current source; `+` at the first terminal, or an arrow beside
    it towards the first terminal (the direction of the driven current)."""
    (x, y0), (_, y1) = _ends(symbol)
    yc, radius = (y0 + y1) / 2, (y1 - y0) / 2
    up = 1 if not symbol.flipped else -1  # towards the first terminal
    shapes = [Shape("circle", ((x, yc),), fill="white", radius=radius)]
    if symbol.kind in ("voltage source", "noise voltage"):
        shapes += [Shape("line", ((x, y0), (x, y1))),
                   Shape("text", ((x - 0.16, yc + up * 0.14),), text="+", size=7,
                         centred=True)]
    else:
        ax = x - radius - 0.12
        tip = yc + up * 0.28
        shapes += [Shape("line", ((x - radius, yc), (x + radius, yc))),
                   Shape("line", ((ax, yc - up * 0.28), (ax, tip - up * 0.1))),
                   Shape("polygon", ((ax, tip), (ax - 0.05, tip - up * 0.12),
                                     (ax + 0.05, tip - up * 0.12)), fill="black")]
    return shapes


def _opamp(symbol: Symbol) -> list[Shape]:
    """An amplifier triangle with its inputs marked + and −."""
    box = symbol.box
    shapes = [Shape("polygon", ((box.x0, box.y0), (box.x0, box.y1), (box.x1, symbol.centre[1])),
                    fill="white")]
    for terminal, mark in zip(symbol.terminals[:2], ("+", "−"), strict=True):
        shapes.append(Shape("text", ((box.x0 + 0.2, terminal.point[1]),), text=mark,
                            centred=True))
    return shapes


def _transformer(symbol: Symbol) -> list[Shape]:
    """IEC 60617 transformer: two windings facing each other, dots at p1 and p2."""
    box = symbol.box
    p1, n1, p2, n2 = (t.point for t in symbol.terminals)
    shapes = []
    for (first, second), x, side in (((p1, n1), box.x0 + 0.2, 1), ((p2, n2), box.x1 - 0.2, -1)):
        low, high = sorted((first, second), key=lambda p: p[1])
        shapes += [Shape("line", (low, (x, low[1]))), Shape("line", (high, (x, high[1]))),
                   _humps(x, low[1], high[1], side)]
        dot_y = first[1] - 0.12 if first[1] > second[1] else first[1] + 0.12
        shapes.append(Shape("circle", ((x - side * 0.12, dot_y),), fill="black",
                            radius=0.045))
    shapes += [Shape("line", ((x, box.y0 + 0.1), (x, box.y1 - 0.1)))
               for x in (box.x0 + 0.46, box.x1 - 0.46)]
    return shapes


def _ground(symbol: Symbol) -> list[Shape]:
    """IEC 60617 reference (ground): three bars, the widest at the wire."""
    x, top = symbol.terminals[0].point
    return [Shape("line", ((x - half, top - 0.11 * i), (x + half, top - 0.11 * i)), width=1.2)
            for i, half in enumerate((0.3, 0.2, 0.1))]


def _port(symbol: Symbol) -> list[Shape]:
    return [Shape("circle", (symbol.centre,), fill="white", radius=0.08)]


_SYMBOLS = {
    "resistor": _rectangle, "conductance": _rectangle, "impedance": _rectangle,
    "admittance": _rectangle, "capacitor": _capacitor, "inductor": _inductor,
    "voltage source": _source, "current source": _source, "opamp": _opamp,
    "noise voltage": _source, "noise current": _source,
    "transformer": _transformer, "ground": _ground, "port": _port,
}


# ---------------------------------------------------------------- SVG, written directly


def svg(shapes: list[Shape], width: float, height: float) -> bytes:
    """The shapes as an SVG document; y grows upwards in the layout, downwards in SVG."""

    def n(value: float) -> str:
        return f"{value:.3f}".rstrip("0").rstrip(".")

    def xy(point: Point) -> str:
        return f"{n(point[0])},{n(height - point[1])}"

    unit = 1 / POINTS_PER_UNIT
    out = ['<?xml version="1.0" encoding="utf-8"?>',
           f'<svg xmlns="http://www.w3.org/2000/svg" width="{n(width * POINTS_PER_UNIT)}pt" '
           f'height="{n(height * POINTS_PER_UNIT)}pt" viewBox="0 0 {n(width)} {n(height)}">',
           f'<g fill="none" stroke="black" stroke-width="{n(LINE_POINTS * unit)}" '
           'stroke-linejoin="round">']
    for shape in shapes:
        stroke = "" if shape.width == LINE_POINTS else f' stroke-width="{n(shape.width * unit)}"'
        if shape.kind == "line":
            out.append(f'<polyline points="{" ".join(map(xy, shape.points))}"{stroke}/>')
        elif shape.kind == "polygon":
            out.append(f'<polygon points="{" ".join(map(xy, shape.points))}" '
                       f'fill="{shape.fill}"{stroke}/>')
        elif shape.kind == "circle":
            x, y = shape.points[0]
            out.append(f'<circle cx="{n(x)}" cy="{n(height - y)}" r="{n(shape.radius)}" '
                       f'fill="{shape.fill}"/>')
        else:
            x, y = shape.points[0]
            size = shape.size * unit
            where = (f'x="{n(x)}" y="{n(height - y)}" text-anchor="middle" '
                     'dominant-baseline="central"') if shape.centred else \
                f'x="{n(x)}" y="{n(height - y - 0.24 * size)}"'
            out.append(f'<text {where} font-size="{n(size)}" stroke="none" fill="black" '
                       f'font-family="{FONT_FAMILY}">{escape(shape.text)}</text>')
    out += ["</g>", "</svg>", ""]
    return "\n".join(out).encode("utf-8")


# ---------------------------------------------------------------- PDF, written directly

_KAPPA = 0.5523  # control points of a quarter circle as a cubic Bézier curve
_SYMBOL_FONT = {"Ω": "W", "\u2126": "W", "−": "-", "α": "a", "β": "b", "γ": "g", "δ": "d",
                "ε": "e", "ζ": "z", "η": "h", "θ": "q", "λ": "l", "μ": "m", "π": "p",
                "ρ": "r", "σ": "s", "τ": "t", "φ": "f", "ω": "w", "Δ": "D", "·": "\xd7"}
"""Characters outside Latin-1 that the standard Symbol font has (its own code)."""


def pdf(shapes: list[Shape], width: float, height: float) -> bytes:
    """The shapes as a one-page PDF with the standard Helvetica and Symbol fonts (nothing
    embedded, so the file is small and written in milliseconds); pdflatex includes it."""
    scale = POINTS_PER_UNIT

    def n(value: float) -> str:
        return f"{value * scale:.2f}".rstrip("0").rstrip(".")

    def move(points: tuple[Point, ...]) -> str:
        (x, y), rest = points[0], points[1:]
        return f"{n(x)} {n(y)} m " + " ".join(f"{n(px)} {n(py)} l" for px, py in rest)

    ops = ["1 J 1 j 0 G"]
    for shape in shapes:
        ops.append(f"{shape.width:g} w")
        fill = "0 g" if shape.fill == "black" else "1 g"
        if shape.kind == "line":
            ops.append(move(shape.points) + " S")
        elif shape.kind == "polygon":
            ops.append(f"{fill} {move(shape.points)} h B")
        elif shape.kind == "circle":
            (x, y), r = shape.points[0], shape.radius
            k = r * _KAPPA
            ops.append(
                f"{fill} {n(x + r)} {n(y)} m "
                f"{n(x + r)} {n(y + k)} {n(x + k)} {n(y + r)} {n(x)} {n(y + r)} c "
                f"{n(x - k)} {n(y + r)} {n(x - r)} {n(y + k)} {n(x - r)} {n(y)} c "
                f"{n(x - r)} {n(y - k)} {n(x - k)} {n(y - r)} {n(x)} {n(y - r)} c "
                f"{n(x + k)} {n(y - r)} {n(x + r)} {n(y - k)} {n(x + r)} {n(y)} c h B")
        else:
            ops.append(_pdf_text(shape, scale))
    content = "\n".join(ops).encode("latin-1")
    objects = [
        b"<< /Type /Catalog /Pages 2 0 R >>",
        b"<< /Type /Pages /Kids [3 0 R] /Count 1 >>",
        (f"<< /Type /Page /Parent 2 0 R /MediaBox [0 0 {n(width)} {n(height)}] "
         "/Contents 4 0 R /Resources << /Font << /F1 5 0 R /F2 6 0 R >> >> >>").encode(),
        b"<< /Length %d >>\nstream\n" % len(content) + content + b"\nendstream",
        b"<< /Type /Font /Subtype /Type1 /BaseFont /Helvetica /Encoding /WinAnsiEncoding >>",
        b"<< /Type /Font /Subtype /Type1 /BaseFont /Symbol >>",
    ]
    out = bytearray(b"%PDF-1.4\n%\xe2\xe3\xcf\xd3\n")
    offsets = []
    for number, body in enumerate(objects, start=1):
        offsets.append(len(out))
        out += b"%d 0 obj\n" % number + body + b"\nendobj\n"
    xref = len(out)
    out += b"xref\n0 %d\n0000000000 65535 f \n" % (len(objects) + 1)
    out += b"".join(b"%010d 00000 n \n" % offset for offset in offsets)
    out += b"trailer\n<< /Size %d /Root 1 0 R >>\nstartxref\n%d\n%%%%EOF\n" % (
        len(objects) + 1, xref)
    return bytes(out)


def _pdf_text(shape: Shape, scale: float) -> str:
    """A text shape as runs of Helvetica and Symbol (for Ω, −, Greek letters)."""
    runs: list[tuple[str, str]] = []
    for char in shape.text:
        font, code = ("F2", _SYMBOL_FONT[char]) if char in _SYMBOL_FONT else (
            "F1", char if ord(char) < 256 else "?")
        code = code.replace("\\", "\\\\").replace("(", "\\(").replace(")", "\\)")
        if runs and runs[-1][0] == font:
            runs[-1] = (font, runs[-1][1] + code)
        else:
            runs.append((font, code))
    x, y = shape.points[0]
    size = shape.size
    if shape.centred:  # a one-character mark: centred by Helvetica's typical widths
        x, y = x * scale - 0.29 * size, y * scale - 0.35 * size
    else:
        x, y = x * scale, y * scale + 0.22 * size
    shown = " ".join(f"/{font} {size:g} Tf ({code}) Tj" for font, code in runs)
    return f"0 g BT {x:.2f} {y:.2f} Td {shown} ET"
