"""No command shows a traceback on any input of ours: the examples, the valid corpus and
the circuits the commands once disagreed on. Each exits 0, 1 or 2 with a message."""

from __future__ import annotations

import pytest
from pipeline_support import BAD_WHERE, CIRCUITS, EXAMPLES, VALID, write

from symcirc.cli import main

QUANTITY = {
    "bridge_adc": "thevenin(out).impedance", "diff_amp": "gain(Iload, sense)",
    "antialias_filter": "gain(Uin, out)",
}
"""One cheap quantity per example for the commands that take one."""

FILES = [*(p.stem for p in EXAMPLES), *(f"valid/{p.stem}" for p in VALID), *CIRCUITS,
         "bad_where"]


def _path(name, folder):
    if name in CIRCUITS:
        return write(folder, name, CIRCUITS[name])
    if name == "bad_where":
        return write(folder, name, BAD_WHERE)
    pool = VALID if name.startswith("valid/") else EXAMPLES
    original = next(p for p in pool if p.stem == name.removeprefix("valid/"))
    # beside the notes written from it: verify reads sources inside a note's folder only
    return write(folder, original.stem, original.read_text(encoding="utf-8"))


def _quantity(path) -> str:
    if path.stem in QUANTITY:
        return QUANTITY[path.stem]
    import symcirc

    try:
        circuit = symcirc.load(path)
    except symcirc.SymcircError:
        return "V(out)"
    if circuit.derives:
        return circuit.derives[0].texts[0]
    return f"V({circuit.nodes[1]})"


@pytest.mark.parametrize("name", FILES)
def test_no_command_shows_a_traceback(name, tmp_path, capsys):
    path = _path(name, tmp_path)
    quantity = _quantity(path)
    note = tmp_path / "note.md"
    runs = [
        ["inspect", str(path)],
        ["derive", str(path), quantity, "--values", "--format", "json"],
        ["check", str(path)],
        ["check", str(path), f"{quantity} = 1"],
        ["note", str(path), quantity, "-o", str(note)],
        ["verify", str(note)],
        ["sheet", str(path), "-o", str(tmp_path / "sheet.md")],
        ["export", str(path), quantity, "--lang", "c"],
        ["plot", str(path), quantity, "-o", str(tmp_path / "plot.svg")],
    ]
    for argv in runs:
        status = main(argv)
        err = capsys.readouterr().err
        assert status in (0, 1, 2), argv
        assert "Traceback" not in err, (argv, err)
        if status == 2:
            assert "error:" in err, (argv, err)
