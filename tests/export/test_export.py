"""Exported code gives the numbers of the closed form: Python, numpy and C (compiled with
gcc -std=c99 -Wall -Werror and called through ctypes) at 100 random points, to 1e-12
relative. The closed form is evaluated independently by sympy in exact arithmetic."""

import ctypes
import functools
import importlib.util
import keyword
import random
import subprocess
from fractions import Fraction
from pathlib import Path

import numpy
import pytest
import sympy

import symcirc
from symcirc.export import c as c_code
from symcirc.export import python as py_code
from symcirc.export.functions import functions, identifier
from symcirc.results import Result

ROOT = Path(__file__).resolve().parents[2]
POINTS = 100
TOLERANCE = 1e-12

R1, R2, R3, R4, C1, C2, L1, L2, k, s = sympy.symbols("R1 R2 R3 R4 C1 C2 L1 L2 k s")
UNITS = {"R1": "Ω", "R2": "Ω", "R3": "Ω", "R4": "Ω", "C1": "F", "C2": "F", "L1": "H",
         "L2": "H", "k": "", "s": "1/s", "lambda": "Ω", "double": "Ω"}
RANGES = {"Ω": (10, 1e6), "F": (1e-12, 1e-6), "H": (1e-6, 1e-1), "": (0.01, 0.99),
          "1/s": (1, 1e6), "rad/s": (1, 1e6)}


def _ladder():
    z = R4
    for r, c in ((R3, C2), (R2, C1)):
        z = r + 1 / (s * c + 1 / z)
    return sympy.cancel(sympy.together(z))


RESULTS = [
    # Unity-gain Sallen-Key low-pass (Sallen & Key 1955; TI SLOA024; from memory).
    Result("gain(Uin, out)", 1 / (1 + s * C2 * (R1 + R2) + s**2 * R1 * R2 * C1 * C2), "V/V"),
    # Wheatstone bridge Thevenin resistance R1∥R2 + R3∥R4 (Alexander & Sadiku; from memory).
    Result("thevenin(out).impedance", R1 * R2 / (R1 + R2) + R3 * R4 / (R3 + R4), "Ω"),
    # Two coupled coils in series aiding: L1 + L2 + 2*k*sqrt(L1*L2) (common practice).
    Result("Z(coil)", s * (L1 + L2 + 2 * k * sympy.sqrt(L1 * L2)), "Ω"),
    # An RC ladder's input impedance: long, with shared subexpressions.
    Result("Z(in)", _ladder(), "Ω"),
    # Names that are keywords in Python or C must still work.
    Result("V(out) where lambda >> double",
           sympy.Symbol("lambda") / (sympy.Symbol("lambda") + sympy.Symbol("double")), "V/V"),
]


@functools.cache
def _cases(frequency: bool) -> tuple[tuple[list[dict], list[complex]], ...]:
    """For each result: POINTS random points (values by circuit symbol, in a range fitting
    each unit) and the closed form there, in exact arithmetic (s = j*omega with
    frequency). Shared by the three languages, so each reference is computed once."""
    rng = random.Random(1 + frequency)
    cases = []
    for result, function in zip(RESULTS, functions(RESULTS, UNITS, {}, frequency, ()),
                                strict=True):
        points, references = [], []
        for _ in range(POINTS):
            point = {a.symbol: (10 ** rng.uniform(1, 6) if a.unit == "Ω" else
                                rng.uniform(*RANGES[a.unit])) for a in function.arguments}
            subs = {}
            for arg in function.arguments:
                value = sympy.Rational(Fraction(point[arg.symbol]))
                subs[s if arg.frequency else sympy.Symbol(arg.symbol)] = \
                    sympy.I * value if arg.frequency else value
            points.append(point)
            references.append(complex(result.expression.xreplace(subs).evalf(30)))
        cases.append((points, references))
    return tuple(cases)


def _named(function, point: dict) -> dict:
    """A point keyed by the names of the function's arguments in one language."""
    return {a.name: point[a.symbol] for a in function.arguments}


def _close(got, want) -> bool:
    return abs(complex(got) - want) <= TOLERANCE * abs(want)


def _load_module(text: str, path: Path):
    path.write_text(text, encoding="utf-8")
    spec = importlib.util.spec_from_file_location(path.stem, path)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


@pytest.mark.parametrize("frequency", [False, True])
def test_python_matches_the_closed_form(tmp_path, frequency):
    funcs = functions(RESULTS, UNITS, {}, frequency, py_code.RESERVED)
    module = _load_module(py_code.python_module("Test circuit", "t.circuit", funcs, "0"),
                          tmp_path / f"formulas_py_{frequency}.py")
    for function, (points, references) in zip(funcs, _cases(frequency), strict=True):
        for point, want in zip(points, references, strict=True):
            got = getattr(module, function.name)(**_named(function, point))
            assert _close(got, want), function.name


@pytest.mark.parametrize("frequency", [False, True])
def test_numpy_matches_the_closed_form_on_arrays(tmp_path, frequency):
    funcs = functions(RESULTS, UNITS, {}, frequency, py_code.RESERVED)
    module = _load_module(
        py_code.python_module("Test circuit", "t.circuit", funcs, "0", numpy=True),
        tmp_path / f"formulas_np_{frequency}.py")
    for function, (points, references) in zip(funcs, _cases(frequency), strict=True):
        arrays = {a.name: numpy.array([p[a.symbol] for p in points])
                  for a in function.arguments}
        got = getattr(module, function.name)(**arrays)
        assert numpy.shape(got) == (POINTS,)
        for value, want in zip(got, references, strict=True):
            assert _close(value, want), function.name


@pytest.mark.parametrize("frequency", [False, True])
def test_c_compiles_strictly_and_matches_the_closed_form(tmp_path, frequency):
    funcs = functions(RESULTS, UNITS, {}, frequency, c_code.RESERVED)
    source = tmp_path / "formulas.c"
    text = c_code.c_source("Test circuit", "t.circuit", funcs, "0")
    # Complex results come back through a wrapper: ctypes has no `double complex`.
    wrappers = []
    for f in funcs:
        if f.is_complex:
            params = ", ".join(f"double {a.name}" for a in f.arguments)
            args = ", ".join(a.name for a in f.arguments)
            wrappers.append(f"void wrap_{f.name}({params}, double *re, double *im)\n"
                            f"{{ double complex z = {f.name}({args}); "
                            "*re = creal(z); *im = cimag(z); }")
    source.write_text(text + "\n" + "\n".join(wrappers) + "\n", encoding="utf-8")
    library = tmp_path / "formulas.so"
    subprocess.run(["gcc", "-std=c99", "-Wall", "-Werror", "-O2", "-shared", "-fPIC",
                    str(source), "-o", str(library), "-lm"], check=True)
    lib = ctypes.CDLL(str(library))
    for function, (points, references) in zip(funcs, _cases(frequency), strict=True):
        n = len(function.arguments)
        for point, want in zip(points, references, strict=True):
            args = [point[a.symbol] for a in function.arguments]
            if function.is_complex:
                call = getattr(lib, f"wrap_{function.name}")
                call.argtypes = [ctypes.c_double] * n + [ctypes.POINTER(ctypes.c_double)] * 2
                re, im = ctypes.c_double(), ctypes.c_double()
                call(*args, ctypes.byref(re), ctypes.byref(im))
                got = complex(re.value, im.value)
            else:
                call = getattr(lib, function.name)
                call.argtypes, call.restype = [ctypes.c_double] * n, ctypes.c_double
                got = call(*args)
            assert _close(got, want), function.name


def test_names_arguments_and_documentation():
    funcs = functions(RESULTS, UNITS, {"R1": Fraction(10000)}, True, py_code.RESERVED)
    names = [f.name for f in funcs]
    assert names[:3] == ["gain_Uin_out", "thevenin_out_impedance", "Z_coil"]
    assert all(n.isidentifier() and not keyword.iskeyword(n) for n in names)
    assert [a.name for a in funcs[0].arguments] == ["C1", "C2", "R1", "R2", "omega"]
    assert [a.name for a in funcs[4].arguments] == ["double", "lambda_"]
    text = py_code.python_module("Sensor \"front\" end", "t.circuit", funcs, "0")
    assert 'def gain_Uin_out(*, C1, C2, R1, R2, omega):' in text
    assert '"""gain(Uin, out) of Sensor \\"front\\" end, in V/V.' in text
    assert "R1: Ω, nominal 10 kΩ" in text
    assert "omega: angular frequency in rad/s (s = j*omega)" in text
    assert "lambda_: Ω (the circuit's lambda)" in text


def test_common_subexpressions_are_shared():
    (function,) = functions([RESULTS[3]], UNITS, {}, False, py_code.RESERVED)
    assert function.steps, "no common subexpression found in the ladder"
    text = py_code.python_module("t", "t.circuit", [function], "0")
    assert "    t0 = " in text


def test_identifiers():
    assert identifier("thevenin(out).impedance") == "thevenin_out_impedance"
    assert identifier("twoport(p1, p2).z21") == "twoport_p1_p2_z21"
    assert identifier("sensitivity(V(out), T)") == "sensitivity_V_out_T"
    assert identifier("V(3)") == "V_3"
    assert identifier("3dB") == "q_3dB"
    assert identifier("if", {"if"}) == "if_"


# ---------------------------------------------------------------- the command


def test_export_command_c_for_a_filter(tmp_path, cli):
    out = tmp_path / "filter.c"
    assert cli("export", str(ROOT / "examples" / "antialias_filter.circuit"),
               "gain(Uin, out)", "--lang", "c", "--frequency", "-o", str(out)).status == 0
    text = out.read_text(encoding="utf-8")
    assert "Anti-alias filter for a 1 kS/s data-logger channel" in text
    assert "double complex gain_Uin_out(double C1, double C2, double R1, double R2, " \
           "double omega)" in text
    subprocess.run(["gcc", "-std=c99", "-Wall", "-Werror", "-c", str(out), "-o",
                    str(tmp_path / "filter.o")], check=True)


def test_export_command_python_for_a_bridge(cli, tmp_path):
    out = tmp_path / "bridge_formulas.py"
    assert cli("export", str(ROOT / "examples" / "bridge_adc.circuit"), "thevenin(out)",
               "--lang", "python", "-o", str(out)).status == 0
    module = _load_module(out.read_text(encoding="utf-8"), tmp_path / "bridge_mod.py")
    values = {"R1": 1000.0, "R2": 1000.0, "Rt": 1096.25, "R4": 1000.0, "Rin": 2.2e6,
              "Uref": 2.5}
    impedance = module.thevenin_out_impedance(
        **{k: v for k, v in values.items() if k != "Uref"})
    # Bridge with the ADC input across its diagonal: (R1∥R2 + Rt∥R4) ∥ Rin
    # (Alexander & Sadiku, Thevenin of a bridge; from memory).
    bridge = 1 / (1 / (500.0 + 1096.25 * 1000.0 / 2096.25) + 1 / 2.2e6)
    assert abs(impedance - bridge) <= 1e-12 * bridge


def test_export_command_without_quantities_or_derives_is_bad_input(tmp_path, cli):
    plain = tmp_path / "plain.circuit"
    plain.write_text("resistor R1 (a, gnd)\nport p (a, gnd)\n", encoding="utf-8")
    run = cli("export", str(plain), "--lang", "python")
    assert run.status == 2
    assert "no derive statements" in run.err


@pytest.mark.parametrize("lang", ["python", "numpy", "c"])
def test_exported_file_formulas_match_the_derived_closed_form(cli, tmp_path, lang):
    # The anti-alias example's derive statements (its gain, and two relative sensitivities,
    # long rational functions of s) exported by the command with --frequency, against the
    # closed forms symcirc derives, evaluated by sympy at s = j*omega exactly.
    example = ROOT / "examples" / "antialias_filter.circuit"
    out = tmp_path / ("formulas.c" if lang == "c" else f"formulas_{lang}.py")
    assert cli("export", str(example), "--lang", lang, "--frequency", "-o", str(out)).status == 0
    circuit = symcirc.load(str(example))
    results = [r for d in circuit.derives for q in d.texts for r in circuit.derive(q)]
    assert len(results) == 3
    funcs = functions(results, {}, {}, True, c_code.RESERVED if lang == "c" else ())
    if lang == "c":
        wrappers = [f"void wrap_{f.name}(const double *x, double *re, double *im)\n"
                    f"{{ double complex z = {f.name}("
                    + ", ".join(f"x[{i}]" for i in range(len(f.arguments)))
                    + "); *re = creal(z); *im = cimag(z); }" for f in funcs]
        out.write_text(out.read_text(encoding="utf-8") + "\n".join(wrappers) + "\n",
                       encoding="utf-8")
        library = tmp_path / "formulas.so"
        subprocess.run(["gcc", "-std=c99", "-Wall", "-Werror", "-shared", "-fPIC", str(out),
                        "-o", str(library), "-lm"], check=True)
        lib = ctypes.CDLL(str(library))
    else:
        module = _load_module(out.read_text(encoding="utf-8"), out)
    rng = random.Random(5)
    for result, function in zip(results, funcs, strict=True):
        assert [a.name for a in function.arguments] == ["C1", "C2", "R1", "R2", "omega"]
        points = [[rng.uniform(1e-9, 1e-6), rng.uniform(1e-9, 1e-6), 10 ** rng.uniform(3, 5),
                   10 ** rng.uniform(3, 5), rng.uniform(1, 1e5)] for _ in range(POINTS)]
        if lang == "numpy":
            columns = numpy.array(points).T
            got = getattr(module, function.name)(**{a.name: columns[i] for i, a in
                                                     enumerate(function.arguments)})
        elif lang == "python":
            got = [getattr(module, function.name)(
                **{a.name: p[i] for i, a in enumerate(function.arguments)}) for p in points]
        else:
            call = getattr(lib, f"wrap_{function.name}")
            call.argtypes = [ctypes.POINTER(ctypes.c_double)] + \
                [ctypes.POINTER(ctypes.c_double)] * 2
            got = []
            for p in points:
                re, im = ctypes.c_double(), ctypes.c_double()
                call((ctypes.c_double * 5)(*p), ctypes.byref(re), ctypes.byref(im))
                got.append(complex(re.value, im.value))
        for value, p in zip(got, points, strict=True):
            exact = [sympy.Rational(Fraction(v)) for v in p]
            subs = dict(zip((C1, C2, R1, R2), exact[:4], strict=True))
            subs[s] = sympy.I * exact[4]
            want = complex(result.expression.xreplace(subs).evalf(30))
            assert _close(value, want), (function.name, p)
