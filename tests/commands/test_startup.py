"""Start-up: commands that only print the version, help or a usage error import none of
sympy, numpy or jinja2 (the modules whose import dominates a cold start); neither does
`inspect`, nor `derive` of a quantity with rational values and no steps, through
definitions and limits, with values and in every format (no sympy). The tests check
the set of imported modules in a fresh interpreter, not a time."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
EXAMPLES, VALID = ROOT / "examples", ROOT / "tests" / "valid"
BRIDGE = EXAMPLES / "bridge_adc.circuit"
HEAVY = ("sympy", "numpy", "jinja2", "matplotlib", "flint")

PROBE = """
import json, sys
import symcirc.cli
try:
    status = symcirc.cli.main(json.loads(sys.argv[1]))
except SystemExit as exit_:
    status = exit_.code
heavy = json.loads(sys.argv[2])
print(json.dumps({"status": status, "loaded": sorted(m for m in heavy if m in sys.modules)}),
      file=sys.__stderr__)
"""

LIGHT_CALLS = [
    ["--version"],
    ["--help"],
    [],
    ["bogus-command"],
    *[[command, "--help"] for command in
      ("inspect", "derive", "note", "sheet", "check", "verify", "export", "plot")],
    ["derive"],                       # usage error: FILE missing
    ["inspect", "--format", "yaml", "x.circuit"],  # usage error: bad choice
]


def _probe(argv: list[str]) -> dict:
    done = subprocess.run([sys.executable, "-c", PROBE, json.dumps(argv), json.dumps(HEAVY)],
                          capture_output=True, text=True, check=True)
    return json.loads(done.stderr.strip().splitlines()[-1])


def test_version_help_and_usage_errors_import_no_heavy_library():
    for argv in LIGHT_CALLS:
        outcome = _probe(argv)
        assert outcome["loaded"] == [], (argv, outcome)
        assert outcome["status"] in (0, 2), (argv, outcome)


def test_package_attributes_stay_available_lazily():
    done = subprocess.run(
        [sys.executable, "-c",
         "import sys, symcirc\n"
         "assert 'sympy' not in sys.modules\n"
         "from symcirc import Circuit\n"
         "from symcirc.api import Circuit as Api\n"
         "assert Circuit is Api and 'sympy' not in sys.modules\n"
         "try:\n    symcirc.no_such_name\nexcept AttributeError:\n    print('ok')\n"],
        capture_output=True, text=True, check=True)
    assert done.stdout.strip() == "ok"


def test_inspect_reads_and_checks_a_circuit_without_a_heavy_library():
    """Reading, elaborating and checking (every input check of the pipeline) and printing
    the tables need no computer algebra: the model's values are formulas of its own (sympy
    prints an expression in the JSON only)."""
    for argv in (["inspect", str(BRIDGE)], ["inspect", str(EXAMPLES / "diff_amp.circuit")],
                 ["inspect", str(VALID / "sources_controls.circuit")],
                 ["inspect", str(VALID / "no_reference.circuit"), "--format", "json"]):
        outcome = _probe(argv)
        assert outcome == {"status": 0, "loaded": []}, (argv, outcome)


def test_derive_without_steps_computes_in_the_algebra_alone():
    """A quantity whose values are rational (no π, no roots) derives and prints through
    the model's formulas and the exact algebra: sympy, numpy and jinja2 stay unloaded."""
    for argv in (["derive", str(BRIDGE), "gain(Uref, out)", "thevenin(out)"],
                 ["derive", str(EXAMPLES / "diff_amp.circuit"), "gain(Iload, sense)"]):
        outcome = _probe(argv)
        assert outcome["status"] == 0 and "sympy" not in outcome["loaded"], (argv, outcome)


def test_definitions_limits_values_and_formats_compute_without_sympy():
    """A sensitivity or a limit through a defined part (`Rt = R0*(1 + alpha*T)`),
    `--substitute`, `--values` (nominal values and the safety cautions) and every output
    format of such results: the definitions are built from the model's formulas in the
    algebra, LaTeX names by the typesetting rules, so sympy stays unloaded."""
    calls = [
        ["derive", str(BRIDGE), "sensitivity(V(out), T)"],
        ["derive", str(BRIDGE), "relative_sensitivity(V(out), R0)", "--format", "json"],
        ["derive", str(BRIDGE), "V(out) where T -> oo", "--format", "latex"],
        ["derive", str(BRIDGE), "thevenin(out) where alpha -> 0", "--format", "markdown"],
        ["derive", str(BRIDGE), "thevenin(out)", "--substitute", "--values"],
        ["derive", str(BRIDGE), "V(out) where Rin -> oo", "gain(Uref, out)", "--values"],
    ]
    for argv in calls:
        outcome = _probe(argv)
        assert outcome["status"] == 0 and "sympy" not in outcome["loaded"], (argv, outcome)


def test_the_probe_sees_a_heavy_import_when_there_is_one():
    """A command that derives loads the exact algebra: the probe would notice a regression."""
    outcome = _probe(["derive", str(BRIDGE), "gain(Uref, out)"])
    assert "flint" in outcome["loaded"]
    assert outcome["status"] == 0
    # an approximation `where Rin >> R1` is typeset by the design forms, on sympy
    outcome = _probe(["derive", str(BRIDGE), "sensitivity(V(out), T) where Rin >> R1"])
    assert outcome["status"] == 0 and "sympy" in outcome["loaded"]
