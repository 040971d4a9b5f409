"""HTML notes in a real browser: Debian's Chromium, headless, no network, driven through its
DevTools protocol. Every example's note renders (the screenshot is not blank), its MathML
has a size on the page, and its figures load from beside the note."""

from __future__ import annotations

import base64
import io
import json
import shutil
import subprocess
import time
import urllib.request
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES = sorted((ROOT / "examples").glob("*.circuit"))
CHROMIUM = shutil.which("chromium") or "/usr/bin/chromium"


class DevTools:
    """The smallest DevTools-protocol client: numbered commands over one page's websocket."""

    def __init__(self, url: str) -> None:
        import websocket

        self.socket = websocket.create_connection(url, timeout=60, suppress_origin=True)
        self.next_id = 0

    def call(self, method: str, **params):
        self.next_id += 1
        self.socket.send(json.dumps({"id": self.next_id, "method": method, "params": params}))
        while True:
            message = json.loads(self.socket.recv())
            if message.get("id") == self.next_id:
                assert "error" not in message, message
                return message["result"]

    def evaluate(self, expression: str):
        result = self.call("Runtime.evaluate", expression=expression, returnByValue=True,
                           awaitPromise=True)
        return result["result"].get("value")


@pytest.fixture(scope="module")
def browser(tmp_path_factory):
    """One headless Chromium for the whole module, with its DevTools on a local port."""
    profile = tmp_path_factory.mktemp("chromium-profile")
    process = subprocess.Popen(
        [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu",
         "--disable-background-networking", "--disable-component-update", "--disable-sync",
         "--no-first-run", "--disable-extensions", "--remote-debugging-port=0",
         "--remote-debugging-address=127.0.0.1", f"--user-data-dir={profile}",
         "--window-size=1100,1400", "about:blank"],
        stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    try:
        port_file = profile / "DevToolsActivePort"
        deadline = time.monotonic() + 60
        while not port_file.exists() or not port_file.read_text().strip():
            assert process.poll() is None and time.monotonic() < deadline, "no DevTools port"
            time.sleep(0.1)
        port = port_file.read_text().split()[0]
        with urllib.request.urlopen(f"http://127.0.0.1:{port}/json/list", timeout=30) as r:
            page = next(t for t in json.load(r) if t["type"] == "page")
        tools = DevTools(page["webSocketDebuggerUrl"])
        tools.call("Page.enable")
        yield tools
        tools.socket.close()
    finally:
        process.terminate()
        try:
            process.wait(timeout=20)
        except subprocess.TimeoutExpired:
            process.kill()
            process.wait()


def _open(tools: DevTools, path: Path) -> None:
    tools.call("Page.navigate", url=path.as_uri())
    deadline = time.monotonic() + 60
    while tools.evaluate("document.readyState") != "complete" or \
            tools.evaluate("location.href") != path.as_uri():
        assert time.monotonic() < deadline, "page did not load"
        time.sleep(0.05)


def _not_blank(png: bytes) -> float:
    """Share of pixels that are not background (white)."""
    from matplotlib import image

    pixels = image.imread(io.BytesIO(png), format="png")[..., :3]
    return float((pixels.min(axis=2) < 0.9).mean())


def test_html_notes_render_in_chromium(cli, browser, tmp_path):
    assert EXAMPLES
    for example in EXAMPLES:
        note = tmp_path / f"{example.stem}.html"
        assert cli("note", str(example), "-o", str(note)).status == 0
        _open(browser, note)
        sizes = browser.evaluate(
            "Array.from(document.getElementsByTagNameNS("
            "'http://www.w3.org/1998/Math/MathML', 'math'))"
            ".map(m => { const r = m.getBoundingClientRect(); return [r.width, r.height]; })")
        assert sizes, example
        assert all(w > 0 and h > 0 for w, h in sizes), example
        # a MathML formula is laid out as maths: a fraction is taller than a line of text
        assert max(h for _, h in sizes) > browser.evaluate(
            "parseFloat(getComputedStyle(document.body).fontSize)")
        images = browser.evaluate(
            "Array.from(document.images).map(i => [i.complete, i.naturalWidth])")
        assert all(done and width > 0 for done, width in images), example
        resources = browser.evaluate(
            "performance.getEntriesByType('resource').map(e => e.name)")
        assert all(name.startswith("file:") for name in resources), resources
        shot = base64.b64decode(browser.call("Page.captureScreenshot", format="png")["data"])
        assert 0.005 < _not_blank(shot) < 0.9, example
        assert not _wider_than_the_column(browser), example


def test_full_bridge_formulas_fit_the_column(cli, browser, tmp_path):
    """The strain-gauge full bridge with lead resistances, whose formulas are the longest."""
    note = tmp_path / "strain_bridge.html"
    circuit = ROOT / "tests" / "forms" / "strain_bridge.circuit"
    assert cli("note", str(circuit), "-o", str(note)).status == 0
    _open(browser, note)
    assert not _wider_than_the_column(browser)


def _wider_than_the_column(tools: DevTools) -> list:
    """Formulas (MathML elements, displayed or in tables) Chromium lays out beyond the note's
    column, as (width, text): none should be, so none is clipped or needs scrolling; long
    ones are broken into lines instead."""
    column, formulas = tools.evaluate(
        "(() => { const s = getComputedStyle(document.body);"
        " const b = document.body.getBoundingClientRect();"
        " const column = [b.left + parseFloat(s.paddingLeft),"
        "                 b.right - parseFloat(s.paddingRight)];"
        " const formulas = Array.from(document.getElementsByTagNameNS("
        "   'http://www.w3.org/1998/Math/MathML', 'math')).map(m => {"
        "   const r = m.getBoundingClientRect(); return [r.left, r.right, m.textContent]; });"
        " return [column, formulas]; })()")
    assert formulas and column[1] - column[0] > 300
    return [(round(right - left), text[:60]) for left, right, text in formulas
            if left < column[0] - 0.5 or right > column[1] + 0.5]


def test_schematic_labels_fit_the_boxes_the_layout_reserved(browser, tmp_path):
    """Chromium sets each label of every example's schematic with the fonts it has; the
    text must stay inside the box the layout reserved for it (so no label overlaps another,
    a symbol or a wire, as the layout's own checks prove for the boxes)."""
    import symcirc
    from symcirc.report.schematic import layout
    from symcirc.report.schematic_drawing import image

    for example in EXAMPLES:
        drawn = layout(symcirc.load(str(example)))
        svg = tmp_path / f"{example.stem}.svg"
        svg.write_bytes(image(drawn, "svg"))
        _open(browser, svg)
        boxes = browser.evaluate(
            "Array.from(document.querySelectorAll('text')).map(t => { const b = t.getBBox();"
            " return [t.textContent, b.x, b.y, b.width, b.height]; })")
        set_labels = boxes[len(boxes) - len(drawn.labels):]
        for label, (text, x, y, width, height) in zip(drawn.labels, set_labels, strict=True):
            assert text == label.text
            top, bottom = drawn.height - y, drawn.height - y - height
            box, slack = label.box, 0.02
            assert box.x0 - slack <= x and x + width <= box.x1 + slack, (example, text)
            assert box.y0 - 0.1 <= bottom and top <= box.y1 + slack, (example, text)


def test_html_sheet_renders_in_chromium_within_its_column(cli, browser, tmp_path):
    """The formula sheet of every example: each formula is laid out as MathML and fits the
    page's column (no formula reaches past the body's content box, nothing scrolls
    sideways)."""
    sheet = tmp_path / "sheet.html"
    assert cli("sheet", *map(str, EXAMPLES), "-o", str(sheet)).status == 0
    _open(browser, sheet)
    column = browser.evaluate(
        "(() => { const r = document.body.getBoundingClientRect();"
        " const s = getComputedStyle(document.body);"
        " return [r.left + parseFloat(s.paddingLeft), r.right - parseFloat(s.paddingRight)];"
        " })()")
    boxes = browser.evaluate(
        "Array.from(document.getElementsByTagNameNS("
        "'http://www.w3.org/1998/Math/MathML', 'math'))"
        ".map(m => { const r = m.getBoundingClientRect();"
        " return [r.left, r.right, r.width, r.height]; })")
    assert len(boxes) >= len(EXAMPLES)
    assert all(width > 0 and height > 0 for _, _, width, height in boxes)
    wide = [box for box in boxes if box[0] < column[0] - 0.5 or box[1] > column[1] + 0.5]
    assert not wide, (column, wide)
    assert browser.evaluate("document.documentElement.scrollWidth <= window.innerWidth")
