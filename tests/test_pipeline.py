"""Every command answers through one pipeline: a claim holds or fails the same way under
`check`, in the note and in Python; input checks run whichever command reads the file;
couplings and transformers read in the language's terms everywhere."""

from __future__ import annotations

import json

import pytest
import sympy
from pipeline_support import (
    BAD_WHERE,
    COUPLED_COILS,
    COUPLED_PAIR,
    RTD_DIVIDER,
    STRAIN_BRIDGE,
    TRANSFORMER,
    write,
)

import symcirc
from symcirc.cli import main
from symcirc.errors import SymcircError
from symcirc.pipeline import Pipeline


def _note_statuses(path, tmp_path) -> list[str]:
    from symcirc.report.note import build_note

    note, _ = build_note(path, "markdown", None, None, tmp_path / "n.md", False)
    return [c.status for c in note.claims]


@pytest.mark.parametrize("text", [RTD_DIVIDER, STRAIN_BRIDGE], ids=["rtd", "strain-bridge"])
def test_a_claim_on_parts_defined_by_expressions_holds_everywhere(tmp_path, capsys, text):
    """The claim is written in the parameters (R0, alpha, T; R0, kg, eps), the results in
    the parts (Rt; G1 … G4): check, the note and Python all say it holds."""
    path = write(tmp_path, "circuit", text)
    assert main(["check", str(path)]) == 0
    assert "does not hold" not in capsys.readouterr().out
    assert set(_note_statuses(path, tmp_path)) == {"holds"}
    assert {o.status for o in symcirc.load(path).check()} == {"holds"}
    out = tmp_path / "note.md"
    assert main(["note", str(path), "-o", str(out)]) == 0
    assert "does not hold" not in out.read_text(encoding="utf-8")
    assert "does not hold" not in capsys.readouterr().err


def test_a_wrong_claim_fails_alike_in_check_and_note(tmp_path, capsys):
    path = write(tmp_path, "rtd", RTD_DIVIDER.replace("*R2/(R0*(1 + alpha*T) + R2)",
                                                      "/(R0*(1 + alpha*T) + R2)"))
    assert main(["check", str(path)]) == 1
    assert _note_statuses(path, tmp_path) == ["does not hold"]


@pytest.mark.parametrize("command", [
    ["derive", "{f}"], ["note", "{f}", "-o", "{d}/n.md"], ["sheet", "{f}", "-o", "{d}/s.md"],
    ["export", "{f}", "--lang", "python"], ["check", "{f}", "V(out) = 1"],
    ["plot", "{f}", "V(out)", "-o", "{d}/p.svg"], ["inspect", "{f}"],
])
def test_a_where_clause_comparing_unlike_parts_is_refused_by_every_command(
        tmp_path, capsys, command):
    path = write(tmp_path, "bad", BAD_WHERE)
    argv = [a.format(f=path, d=tmp_path) for a in command]
    status = main(argv)
    err = capsys.readouterr().err
    if command[0] == "inspect":  # shows what was read, problems included
        assert status in (0, 2)
        return
    assert status == 2
    assert "bad.circuit:5:21: error: dimension mismatch: `R1 >> C1` compares Ω with F" in err
    assert not any(p.name.endswith(("n.md", "s.md", "p.svg")) for p in tmp_path.iterdir())


def test_verify_refuses_a_note_whose_source_gained_a_bad_where_clause(tmp_path, capsys):
    good = BAD_WHERE.replace("R1 >> C1", "R1 >> R1")
    path = write(tmp_path, "stage", good.replace("derive V(out) where R1 >> R1",
                                                 "derive V(out)"))
    note = tmp_path / "stage.md"
    assert main(["note", str(path), "-o", str(note)]) == 0
    path.write_text(BAD_WHERE, encoding="utf-8")
    assert main(["verify", str(note)]) == 2
    # verify names the place in the source (the `where` clause) without quoting it
    assert "cannot be read as a circuit (line 5, column 21)" in capsys.readouterr().err


def test_python_refuses_the_bad_where_clause_on_reading():
    with pytest.raises(SymcircError, match="compares Ω with F"):
        symcirc.parse(BAD_WHERE, "bad.circuit")


def test_coupled_coils_are_written_with_k_and_the_inductances(tmp_path, capsys):
    """z12 = s·k·√(L1·L2) for coupled coils (the definition of the coupling factor,
    common practice); no symbol of the engine's own (M_k12) reaches a result."""
    path = write(tmp_path, "pair", COUPLED_PAIR)
    assert main(["check", str(path)]) == 0
    assert capsys.readouterr().out.count("holds") == 2
    (z12,) = symcirc.load(path).derive("twoport(p1, p2).z12")
    k, l1, l2, s = sympy.symbols("k12 L1 L2 s", positive=True)
    assert sympy.simplify(z12.expression.subs(dict(zip(sympy.symbols("k12 L1 L2 s"),
                                                           (k, l1, l2, s), strict=True)))
                          - s * k * sympy.sqrt(l1 * l2)) == 0
    assert not any(name.startswith("M_") for name in z12.symbols)
    assert main(["derive", str(path), "--format", "json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert all("M_" not in r["expression"] for r in data["results"])


def test_a_claim_may_name_the_coupling_and_means_the_same_everywhere(tmp_path, capsys):
    path = write(tmp_path, "pair", COUPLED_PAIR)
    claim = "twoport(p1, p2).z21 = s*k12*sqrt(L1*L2)"
    assert main(["check", str(path), claim]) == 0
    assert "M_k12" not in capsys.readouterr().out
    assert main(["check", str(path), "twoport(p1, p2).z21 = s*sqrt(L1*L2)"]) == 1
    assert _note_statuses(path, tmp_path) == ["holds", "holds"]


def test_the_note_of_a_coupled_stage_is_written_with_its_figures(tmp_path, capsys):
    path = write(tmp_path, "coils", COUPLED_COILS)
    out = tmp_path / "coils.md"
    assert main(["note", str(path), "-o", str(out)]) == 0
    text = out.read_text(encoding="utf-8")
    assert "M_{" not in text and "M_k12" not in text
    figures = sorted(p.name for p in (tmp_path / "coils_figures").iterdir())
    assert figures and all(name.endswith(".svg") for name in figures)
    assert main(["plot", str(path), "V(c)", "-o", str(tmp_path / "v.svg")]) == 0
    assert (tmp_path / "v.svg").stat().st_size > 1000
    assert main(["export", str(path), "V(c)", "--lang", "python"]) == 0
    code = capsys.readouterr().out
    assert "def V_c(*, L1, L2, R1, R2, Uin, k12, s)" in code and "M_k12" not in code


def test_sensitivity_to_a_coupled_inductance_follows_the_mutual_inductance(tmp_path):
    """∂z12/∂L1 = s·k·√L2/(2·√L1): M = k·√(L1·L2) moves with L1 (chain rule)."""
    circuit = symcirc.parse(COUPLED_PAIR)
    (result,) = circuit.derive("sensitivity(twoport(p1, p2).z12, L1)")
    k, l1, l2, s = sympy.symbols("k12 L1 L2 s")
    expected = sympy.diff(s * k * sympy.sqrt(l1 * l2), l1)
    point = {k: sympy.Rational(9, 10), l1: 3, l2: 7, s: 5}
    assert abs(complex(result.expression.subs(point)) - complex(expected.subs(point))) < 1e-12


def test_a_transformer_reads_in_its_turns_ratio(tmp_path, capsys):
    """`transformer Tx (..) = N`: results in N, the ratio the language names; a claim in
    N or in the element's name Tx means the same."""
    path = write(tmp_path, "tx", TRANSFORMER)
    assert main(["derive", str(path)]) == 0
    out = capsys.readouterr().out
    assert "Tx" not in out and "N**2*R2" in out
    assert main(["check", str(path)]) == 0
    assert main(["check", str(path), "Z(out) = R1*R2/(R1 + R2*Tx^2)"]) == 0
    assert _note_statuses(path, tmp_path) == ["holds", "holds"]


def test_a_claim_of_a_quantity_with_several_parts_is_refused_alike(tmp_path, capsys):
    path = write(tmp_path, "bridge", STRAIN_BRIDGE.replace("claim thevenin(out).voltage",
                                                           "claim thevenin(out)"))
    assert main(["check", str(path)]) == 2
    assert main(["note", str(path), "-o", str(tmp_path / "n.md")]) == 2
    assert "has 2 parts" in capsys.readouterr().err


def test_the_pipeline_decides_each_claim_once():
    pipeline = Pipeline.parse(RTD_DIVIDER)
    first = pipeline.claims()
    assert [o is p for o, p in zip(first, pipeline.claims(), strict=True)] == [True]


def test_options_may_stand_between_positional_arguments(tmp_path, capsys):
    path = write(tmp_path, "tx", TRANSFORMER)
    assert main(["derive", "--values", str(path), "V(out)", "--format", "json", "Z(out)"]) == 0
    assert len(json.loads(capsys.readouterr().out)["results"]) == 2
    assert main(["check", str(path), "Z(out) = R1"]) == 1


def test_a_where_clause_given_with_a_quantity_is_checked_by_every_command(tmp_path, capsys):
    path = write(tmp_path, "stage", BAD_WHERE.replace(" where R1 >> C1", ""))
    asked = "V(out) where R1 >> C1"
    for argv in (["derive", str(path), asked], ["export", str(path), asked, "--lang", "c"],
                 ["note", str(path), asked, "-o", str(tmp_path / "n.md")],
                 ["plot", str(path), asked, "-o", str(tmp_path / "p.svg")]):
        assert main(argv) == 2, argv
        assert "compares Ω with F" in capsys.readouterr().err, argv
    circuit = symcirc.load(path)
    for kind in ({"where": "R1 >> C1"}, {}):
        with pytest.raises(SymcircError, match="compares Ω with F"):
            circuit.derive("V(out)" if kind else asked, **kind)
