"""One answer per question: each quantity and claim of every example, every valid-corpus
file and the circuits of `pipeline_support` gives the identical expression, nominal value
and verdict through the Python API, `derive --format json`, `check`, the note's data
(Markdown, HTML, LaTeX), `sheet`, `verify` and `export` (evaluated at 20 points)."""

from __future__ import annotations

import importlib.util
import json
import random
import re

import pytest
import sympy
from pipeline_support import CIRCUITS, EXAMPLES, VALID, write

import symcirc
from symcirc.cli import main
from symcirc.report.note import build_note
from symcirc.report.sheet import build_sheet

FILES = [*(p.stem for p in EXAMPLES), *(f"valid/{p.stem}" for p in VALID), *CIRCUITS]


def _path(name, folder):
    if name in CIRCUITS:
        return write(folder, name, CIRCUITS[name])
    pool = VALID if name.startswith("valid/") else EXAMPLES
    original = next(p for p in pool if p.stem == name.removeprefix("valid/"))
    # beside the notes written from it: verify reads sources inside a note's folder only
    return write(folder, original.stem, original.read_text(encoding="utf-8"))


def _note_results(note) -> list:
    return [view.result for section in note.sections for view in section.results]


def _close(a, b) -> bool:
    if a is None or b is None:
        return a is b
    return abs(a - b) <= 1e-9 * max(abs(a), abs(b), 1e-30)


@pytest.mark.parametrize("name", FILES)
def test_every_entry_point_gives_the_same_answer(name, tmp_path, capsys):
    path = _path(name, tmp_path)
    circuit = symcirc.load(path)
    quantities = None if circuit.derives else [f"V({circuit.nodes[1]})"]
    api = (circuit.derive_statements() if quantities is None
           else [r for q in quantities for r in circuit.derive(q)])
    shown = [(r.quantity, r.text(), r.nominal) for r in api]

    # derive --format json
    assert main(["derive", str(path), *(quantities or []), "--format", "json"]) == 0
    data = json.loads(capsys.readouterr().out)["results"]
    assert [(r["quantity"], r["expression"], r["nominal"]) for r in data] == shown

    # the note's data in each format, and verify of the written note
    for fmt, suffix in (("markdown", "md"), ("html", "html"), ("latex", "tex")):
        note, _ = build_note(path, fmt, quantities, None, tmp_path / f"n.{suffix}", False,
                             circuit.pipeline)
        results = _note_results(note)
        assert [(r.quantity, r.text()) for r in results] == [s[:2] for s in shown], fmt
        assert all(_close(r.nominal, s[2]) for r, s in zip(results, shown, strict=True))
        statuses = [c.status for c in note.claims]
        assert statuses == [o.status for o in circuit.check()], fmt
    out = tmp_path / "written.md"
    assert main(["note", str(path), *(quantities or []), "-o", str(out)]) == 0
    assert main(["verify", str(out)]) == 0
    capsys.readouterr()

    # check prints one line per claim, with the verdict the note shows
    if circuit.claims:
        status = main(["check", str(path)])
        printed = capsys.readouterr().out
        verdicts = [o.status for o in circuit.check()]
        assert status == (0 if set(verdicts) == {"holds"} else 1)
        for claim, verdict in zip(circuit.claims, verdicts, strict=True):
            held = re.search(rf"^{re.escape(claim.quantity_text)} holds$", printed, re.M)
            assert (held is not None) == (verdict == "holds"), claim.quantity_text

    # the sheet of the file's derive statements
    if quantities is None:
        sheet = build_sheet([path], "markdown")
        views = sheet.circuits[0].results
        assert [(v.result.quantity, v.result.text()) for v in views] == [s[:2] for s in shown]

    # export: the same functions, evaluated at 20 points
    code = tmp_path / "formulas.py"
    assert main(["export", str(path), *(quantities or []), "--lang", "python",
                 "-o", str(code)]) == 0
    spec = importlib.util.spec_from_file_location(f"formulas_{abs(hash(name))}", code)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    functions = [v for k, v in vars(module).items()
                 if callable(v) and getattr(v, "__module__", None) == module.__name__
                 and not k.startswith("_")]
    assert len(functions) == len(api)
    rng = random.Random(7)
    for function, result in zip(functions, api, strict=True):
        names = function.__code__.co_varnames[:function.__code__.co_kwonlyargcount]
        expression = result.expression
        for _ in range(20):
            point = {n: rng.uniform(0.5, 3.0) for n in names}
            expected = complex(expression.xreplace(
                {sympy.Symbol(n): sympy.Float(v, 30) for n, v in point.items()}).evalf(20))
            got = complex(function(**point))
            assert abs(got - expected) <= 1e-9 * max(abs(expected), 1.0), (result.quantity,
                                                                           point)
