"""The layout of a circuit's schematic, as data: symbols, labels and wires with coordinates.

Every node is a horizontal rail (the reference node at the bottom, the others above it in
the order a breadth-first walk from the excitation source meets them); every part stands
vertically in a column between its nodes' rails, its wires straight and orthogonal. A part
sits in the gap just above its lower rail, with its name and value to its right, so symbols
and labels never meet a rail or each other; a part takes the first column whose rails it
spans are free, and columns are as wide as their labels. Opamps and
transformers take columns of their own, one wire column per terminal, ordered so that their
leads never cross their own wires. Ports are open circles at the right, the reference node
carries the ground symbol.

Drawing is `schematic_drawing.image`; this module imports no plotting library, so tests check
the geometry on the coordinates (`Layout.overlaps`, `Layout.loose_ends`).
"""

from __future__ import annotations

from collections import deque
from dataclasses import dataclass, field

from ..model.circuit import REFERENCE, Circuit, Element

MAXIMUM_PARTS = 25
"""Above this many parts a note says so instead of drawing (the drawing would not read)."""

GAP = 2.4
"""Height between two rails, in drawing units."""
FONT_POINTS = 8.0
UNIT_INCHES = 0.42
"""One drawing unit on paper."""
TEXT_HEIGHT = FONT_POINTS / 72 / UNIT_INCHES * 1.25
"""Height of a line of text with its ascent and descent, in units."""
CHARACTER_WIDTH = FONT_POINTS / 72 / UNIT_INCHES * 0.68
"""A generous average width of a character (DejaVu Sans is narrower on average)."""
MARGIN = 0.2
LEAD = 0.35
"""Spacing of the wire columns of an opamp or transformer."""

Point = tuple[float, float]


@dataclass(frozen=True)
class Box:
    """An axis-aligned rectangle (x0 < x1, y0 < y1)."""

    x0: float
    y0: float
    x1: float
    y1: float

    def overlaps(self, other: Box, margin: float = 0.0) -> bool:
        return (self.x0 < other.x1 + margin and other.x0 < self.x1 + margin
                and self.y0 < other.y1 + margin and other.y0 < self.y1 + margin)

    def crossed_by(self, a: Point, b: Point) -> bool:
        """True when the orthogonal segment a-b passes through the inside of the box."""
        (xa, ya), (xb, yb) = a, b
        if ya == yb:
            return self.y0 < ya < self.y1 and min(xa, xb) < self.x1 and self.x0 < max(xa, xb)
        return self.x0 < xa < self.x1 and min(ya, yb) < self.y1 and self.y0 < max(ya, yb)


@dataclass(frozen=True)
class Terminal:
    node: str
    point: Point


@dataclass(frozen=True)
class Symbol:
    """One drawn symbol: a part (`kind` of the model), `ground`, or `port` (open circle).

    `centre` and `box` place the body; `terminals` are where wires meet it. For a
    two-terminal part the first terminal of the model is `terminals[0]`; `flipped` says it
    is the lower one. An opamp's `terminals` are (+, −, output); a transformer's
    (p1, n1, p2, n2), with `flipped` per winding in `windings_flipped`.
    """

    name: str
    kind: str
    centre: Point
    box: Box
    terminals: tuple[Terminal, ...]
    flipped: bool = False
    windings_flipped: tuple[bool, bool] = (False, False)


@dataclass(frozen=True)
class Label:
    """Text with its lower-left corner at `x, y` (its box is estimated generously)."""

    text: str
    x: float
    y: float
    box: Box


@dataclass(frozen=True)
class Wire:
    """A straight horizontal or vertical wire of one node."""

    node: str
    start: Point
    end: Point


@dataclass
class Layout:
    """A schematic as coordinates; `width` and `height` bound everything (origin 0, 0)."""

    symbols: list[Symbol] = field(default_factory=list)
    labels: list[Label] = field(default_factory=list)
    wires: list[Wire] = field(default_factory=list)
    dots: list[Point] = field(default_factory=list)
    """Junctions: where three or more wire ends of one node meet."""
    width: float = 0.0
    height: float = 0.0

    def overlaps(self) -> list[str]:
        """Pairs of symbols or labels that overlap, and labels or symbols a wire passes
        through (a wire may end on its own symbol's terminal); empty for a good layout."""
        found = []
        boxes = [(s.name, s.box, {(t.node, t.point) for t in s.terminals})
                 for s in self.symbols]
        boxes += [(f"label {lab.text!r}", lab.box, set()) for lab in self.labels]
        for i, (name, box, _) in enumerate(boxes):
            for other, other_box, _ in boxes[i + 1:]:
                if box.overlaps(other_box):
                    found.append(f"{name} overlaps {other}")
        for wire in self.wires:
            for name, box, own in boxes:
                if (wire.node, wire.start) in own or (wire.node, wire.end) in own:
                    continue  # a wire reaching its symbol's terminal
                if box.crossed_by(wire.start, wire.end):
                    found.append(f"a wire of {wire.node} passes through {name}")
        return found

    def loose_ends(self) -> list[str]:
        """Wire ends that meet neither a terminal nor another wire of the same node, and
        terminals no wire reaches; empty for a good layout."""
        terminals = {(t.node, t.point) for s in self.symbols for t in s.terminals}
        ends: dict[tuple[str, Point], int] = {}
        for wire in self.wires:
            for point in (wire.start, wire.end):
                ends[wire.node, point] = ends.get((wire.node, point), 0) + 1
        found = [f"a wire of {node} ends at {point} on nothing"
                 for (node, point), count in ends.items()
                 if count < 2 and (node, point) not in terminals]
        found += [f"terminal of {node} at {point} is not wired"
                  for node, point in terminals if (node, point) not in ends]
        return found


def text_width(text: str) -> float:
    return CHARACTER_WIDTH * len(text)


def _label(text: str, x: float, y: float) -> Label:
    return Label(text, x, y, Box(x, y, x + text_width(text), y + TEXT_HEIGHT))


def value_text(element: Element) -> str:
    """A part's value as its label shows it: as written, else its nominal value."""
    if element.nominal is not None and element.definition is None:
        from ..model.units import engineering

        return engineering(element.nominal, element.unit)
    return element.written or ""


def drawn_parts(circuit: Circuit) -> int:
    """How many parts a schematic of the circuit shows (couplings are not symbols)."""
    return sum(1 for e in circuit.elements.values() if e.kind != "coupling")


def layout(circuit: Circuit) -> Layout:
    """The schematic of `circuit` as coordinates (callers check `MAXIMUM_PARTS` first)."""
    return _Builder(circuit).build()


class _Builder:
    def __init__(self, circuit: Circuit) -> None:
        self.circuit = circuit
        self.out = Layout()
        self.rows = _rows(circuit)
        self.points: dict[str, set[float]] = {}
        """x of every point where a part's wire meets its node's rail."""
        self.x = 0.0

    def y(self, node: str) -> float:
        return self.rows[node] * GAP

    def connect(self, node: str, x: float) -> None:
        self.points.setdefault(node, set()).add(x)

    def wire(self, node: str, start: Point, end: Point) -> None:
        if start != end:
            self.out.wires.append(Wire(node, start, end))

    def build(self) -> Layout:
        columns: list[tuple[Element | None, list[Element], list[tuple[int, int]]]] = []
        for element in _ordered(self.circuit, self.rows):
            if element.kind == "coupling":
                continue  # no symbol of its own: the caption names it
            if element.kind in ("opamp", "transformer"):
                columns.append((element, [], []))
            else:  # the first column where its span between rails is free
                low, high = sorted(self.rows[n] for n in element.nodes)
                span = (low, max(high, low + 1))
                free = next((c for c in columns if c[0] is None and all(
                    span[0] >= b or span[1] <= a for a, b in c[2])), None)
                if free is None:
                    free = (None, [], [])
                    columns.append(free)
                free[1].append(element)
                free[2].append(span)
        column_right = 0.0
        for group, parts, _ in columns:
            if group is not None:
                self.x = column_right
                column_right = self._group(group)
            else:
                x = column_right + 0.55
                column_right = max(self._part(element, x) for element in parts)
        right = column_right
        for port in self.circuit.ports.values():
            right = self._port(port.name, port.positive, port.negative, right + 0.3)
        self._rails()
        self._node_labels()
        return self._shifted()

    def _part(self, element: Element, x: float) -> float:
        """A two-terminal part in the column at `x`; returns the column's right edge."""
        first, second = element.nodes[0], element.nodes[1]
        flipped = self.rows[first] < self.rows[second]
        lower, upper = (first, second) if flipped else (second, first)
        y0 = self.y(lower)
        centre = (x, y0 + GAP / 2)
        source = element.is_source or element.entry.noise
        half = 0.5 if not source else 0.32
        bottom, top = (x, centre[1] - half), (x, centre[1] + half)
        width = 0.32 if source else 0.26
        box = Box(x - width, bottom[1], x + width, top[1])
        terminals = (Terminal(first, bottom if flipped else top),
                     Terminal(second, top if flipped else bottom))
        self.out.symbols.append(Symbol(element.name, element.kind, centre, box, terminals,
                                       flipped))
        self.wire(lower, (x, y0), bottom)
        self.connect(lower, x)
        if lower == upper:  # both ends on one node: back down beside the part
            around = x - 0.45
            self.wire(upper, top, (x, top[1] + 0.2))
            self.wire(upper, (x, top[1] + 0.2), (around, top[1] + 0.2))
            self.wire(upper, (around, top[1] + 0.2), (around, y0))
            self.connect(upper, around)
        else:
            self.wire(upper, top, (x, self.y(upper)))
            self.connect(upper, x)
        name = _label(element.name, x + 0.42, centre[1] + 0.02)
        value = value_text(element)
        labels = [name] + ([_label(value, x + 0.42, centre[1] - TEXT_HEIGHT - 0.02)]
                           if value else [])
        self.out.labels.extend(labels)
        return max(label.box.x1 for label in labels) + 0.15

    def _group(self, element: Element) -> float:
        """An opamp or transformer in columns of its own from `self.x`; returns the right
        edge."""
        if element.kind == "opamp":
            plus, minus, output = element.nodes
            left = sorted([(plus, "+"), (minus, "-")], key=lambda t: -self.rows[t[0]])
            right = [(output, "out")]
            body_width, body_height = 1.3, 1.4
        else:
            p1, n1, p2, n2 = element.nodes
            left = sorted([(p1, "p1"), (n1, "n1")], key=lambda t: -self.rows[t[0]])
            right = sorted([(p2, "p2"), (n2, "n2")], key=lambda t: -self.rows[t[0]])
            body_width, body_height = 1.0, 1.2
        rows = [self.rows[n] for n in element.nodes]
        low = min(rows)
        yc = low * GAP + GAP / 2
        body_left = self.x + 0.3 + LEAD * len(left)
        body_right = body_left + body_width
        centre = (body_left + body_width / 2, yc)
        box = Box(body_left, yc - body_height / 2, body_right, yc + body_height / 2)
        if element.kind == "opamp":
            heights = [yc + 0.4, yc - 0.4]
        else:
            heights = [yc + 0.45, yc - 0.45]
        placed: dict[str, Terminal] = {}
        for side, sign, edge in ((left, -1, body_left), (right, 1, body_right)):
            side_heights = heights if len(side) == 2 else [yc]
            ups = [(n, role, h) for (n, role), h in zip(side, side_heights, strict=True)
                   if self.rows[n] * GAP > h]
            downs = [(n, role, h) for (n, role), h in zip(side, side_heights, strict=True)
                     if self.rows[n] * GAP < h][::-1]
            for position, (node, role, h) in enumerate(ups + downs):
                lead_x = edge + sign * LEAD * (position + 1)
                point = (edge, h)
                placed[role] = Terminal(node, point)
                self.wire(node, point, (lead_x, h))
                self.wire(node, (lead_x, h), (lead_x, self.y(node)))
                self.connect(node, lead_x)
        if element.kind == "opamp":
            terminals = (placed["+"], placed["-"], placed["out"])
            flips = (False, False)
        else:
            terminals = (placed["p1"], placed["n1"], placed["p2"], placed["n2"])
            flips = (placed["p1"].point[1] < placed["n1"].point[1],
                     placed["p2"].point[1] < placed["n2"].point[1])
        self.out.symbols.append(Symbol(element.name, element.kind, centre, box, terminals,
                                       windings_flipped=flips))
        name = _label(element.name, body_left, box.y1 + 0.05)
        labels = [name]
        value = value_text(element) if element.kind == "transformer" or element.definition \
            else ""
        if value:
            labels.append(_label(value, body_left, box.y0 - 0.05 - TEXT_HEIGHT))
        self.out.labels.extend(labels)
        right_edge = body_right + LEAD * len(right) + 0.3
        return max([right_edge] + [label.box.x1 + 0.15 for label in labels])

    def _port(self, name: str, positive: str, negative: str, x: float) -> float:
        """Open circles of a port at `x` on its nodes' rails, named; returns the right edge."""
        right = x
        for node, sign in ((positive, "+"), (negative, "−")):
            point = (x, self.y(node))
            self.out.symbols.append(Symbol(f"{name}{sign}", "port", point,
                                           Box(x - 0.09, point[1] - 0.09, x + 0.09,
                                               point[1] + 0.09),
                                           (Terminal(node, point),)))
            self.connect(node, x)
            label = _label(f"{name} {sign}", x + 0.14, point[1] + 0.08)
            self.out.labels.append(label)
            right = max(right, label.box.x1 + 0.1)
        return right

    def _rails(self) -> None:
        for node, xs in sorted(self.points.items()):
            y = self.y(node)
            ordered = sorted(xs)
            for a, b in zip(ordered, ordered[1:], strict=False):
                self.wire(node, (a, y), (b, y))
        ground = self.points.get(REFERENCE)
        if ground:
            x = min(ground)
            self.wire(REFERENCE, (x, 0.0), (x, -0.3))
            self.out.symbols.append(Symbol("ground", "ground", (x, -0.45),
                                           Box(x - 0.3, -0.62, x + 0.3, -0.3),
                                           (Terminal(REFERENCE, (x, -0.3)),)))
        ends: dict[tuple[str, Point], int] = {}
        for wire in self.out.wires:
            for point in (wire.start, wire.end):
                ends[wire.node, point] = ends.get((wire.node, point), 0) + 1
        terminals = {(t.node, t.point) for s in self.out.symbols for t in s.terminals}
        self.out.dots = sorted({point for (node, point), count in ends.items()
                                if count + ((node, point) in terminals) >= 3})

    def _node_labels(self) -> None:
        """Each node's name beside its rail, where it meets nothing (else left unnamed: the
        parts table names every node)."""
        for node, xs in sorted(self.points.items()):
            if node == REFERENCE:
                continue
            y = self.y(node)
            for x in sorted(xs):
                for lx, ly in ((x + 0.08, y + 0.06), (x - 0.08 - text_width(node), y + 0.06),
                               (x + 0.08, y - 0.06 - TEXT_HEIGHT),
                               (x - 0.08 - text_width(node), y - 0.06 - TEXT_HEIGHT)):
                    label = _label(node, lx, ly)
                    if self._free(label.box):
                        self.out.labels.append(label)
                        break
                else:
                    continue
                break

    def _free(self, box: Box) -> bool:
        if any(box.overlaps(s.box, 0.05) for s in self.out.symbols):
            return False
        if any(box.overlaps(lab.box, 0.05) for lab in self.out.labels):
            return False
        return not any(box.crossed_by(w.start, w.end) for w in self.out.wires)

    def _shifted(self) -> Layout:
        """Everything moved so that coordinates start at 0 with a margin around."""
        out = self.out
        boxes = [s.box for s in out.symbols] + [lab.box for lab in out.labels]
        xs = [b.x0 for b in boxes] + [x for w in out.wires for x in (w.start[0], w.end[0])]
        ys = [b.y0 for b in boxes] + [y for w in out.wires for y in (w.start[1], w.end[1])]
        right = max([b.x1 for b in boxes] + xs, default=0.0)
        top = max([b.y1 for b in boxes] + ys, default=0.0)
        dx, dy = MARGIN - min(xs, default=0.0), MARGIN - min(ys, default=0.0)

        def p(point: Point) -> Point:
            return (round(point[0] + dx, 6), round(point[1] + dy, 6))

        def b(box: Box) -> Box:
            return Box(round(box.x0 + dx, 6), round(box.y0 + dy, 6), round(box.x1 + dx, 6),
                       round(box.y1 + dy, 6))

        return Layout(
            symbols=[Symbol(s.name, s.kind, p(s.centre), b(s.box),
                            tuple(Terminal(t.node, p(t.point)) for t in s.terminals),
                            s.flipped, s.windings_flipped)
                     for s in out.symbols],
            labels=[_label(lab.text, b(lab.box).x0, b(lab.box).y0) for lab in out.labels],
            wires=[Wire(w.node, p(w.start), p(w.end)) for w in out.wires],
            dots=[p(d) for d in out.dots],
            width=right + dx + MARGIN, height=top + dy + MARGIN)


def _rows(circuit: Circuit) -> dict[str, int]:
    """Row of every node: the reference 0, the others in the order a breadth-first walk from
    the excitation source's first terminal meets them."""
    neighbours: dict[str, list[str]] = {node: [] for node in circuit.nodes}
    for element in circuit.elements.values():
        for a in element.nodes:
            for b in element.nodes:
                if a != b and b not in neighbours[a]:
                    neighbours[a].append(b)
    start = next((e.nodes[0] for e in circuit.elements.values()
                  if e.is_source and not e.is_controlled), None)
    rows = {REFERENCE: 0}
    order = [start] if start is not None else []
    order += [n for n in circuit.nodes if n != start]
    for origin in order:
        if origin in rows:
            continue
        rows[origin] = len(rows)
        queue = deque([origin])
        while queue:
            for neighbour in neighbours[queue.popleft()]:
                if neighbour not in rows:
                    rows[neighbour] = len(rows)
                    queue.append(neighbour)
    return rows


def _ordered(circuit: Circuit, rows: dict[str, int]) -> list[Element]:
    """Parts in drawing order: independent sources first, then by their lowest and highest
    rows (so a part stands near the parts that share its rails), then as the file lists
    them."""
    elements = list(circuit.elements.values())
    index = {e.name: i for i, e in enumerate(elements)}

    def key(e: Element) -> tuple:
        placed = [rows[n] for n in e.nodes] or [0]
        source = e.is_source and not e.is_controlled
        return (not source, max(placed), min(placed), index[e.name])

    return sorted(elements, key=key)
