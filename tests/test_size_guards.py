"""Hostile inputs are refused before memory grows, and Ctrl-C ends the command promptly.

Each abuse case runs the real command line in a child process under an address-space
ceiling (`resource.setrlimit`), so a guard that failed would show as a crash or a timeout
rather than as a machine out of memory; each must end with exit status 2 and a message.
"""

from __future__ import annotations

import os
import resource
import signal
import subprocess
import sys
from pathlib import Path

import pytest

from symcirc import limits, parse
from symcirc.errors import SymcircError

CEILING = 3 * 2**30
"""Address space a child may use: more than any of these commands needs when guarded."""
DEADLINE = 10
"""Seconds a child may run before the test fails (a guard answers within a few)."""


def _ceiling() -> None:
    resource.setrlimit(resource.RLIMIT_AS, (CEILING, CEILING))


def symcirc(*args: str, cwd: Path) -> subprocess.CompletedProcess:
    """`python -m symcirc.cli ARGS` under the memory ceiling, bounded by DEADLINE."""
    return subprocess.run([sys.executable, "-m", "symcirc.cli", *args], cwd=cwd,
                          capture_output=True, text=True, timeout=DEADLINE,
                          preexec_fn=_ceiling)


def refused(result: subprocess.CompletedProcess, *words: str) -> str:
    """The one error message of a refused command (exit 2, no traceback)."""
    assert result.returncode == 2, result.stderr
    assert "Traceback" not in result.stderr
    for word in words:
        assert word in result.stderr, result.stderr
    return result.stderr


def doubling_blocks(levels: int) -> str:
    """`levels` blocks, each instantiating the one before twice: 2**(levels-1) resistors."""
    lines = ["block b0 (a, b)", "    resistor R (a, b) = 1 kΩ", "end"]
    for i in range(1, levels):
        lines += [f"block b{i} (a, b)", f"    b{i - 1} left (a, m)", f"    b{i - 1} right (m, b)",
                  "end"]
    lines += [f"b{levels - 1} top (in, gnd)", "voltage source U (in, gnd) = 1 V",
              "port p (in, gnd)"]
    return "\n".join(lines) + "\n"


def nested_chain(levels: int) -> str:
    """`levels` blocks, each holding one instance of the one before."""
    lines = ["block b0 (a, b)", "    resistor R (a, b) = 1 kΩ", "end"]
    for i in range(1, levels):
        lines += [f"block b{i} (a, b)", f"    b{i - 1} inner (a, b)", "end"]
    lines += [f"b{levels - 1} top (in, gnd)", "voltage source U (in, gnd) = 1 V",
              "port p (in, gnd)"]
    return "\n".join(lines) + "\n"


@pytest.mark.parametrize("levels", [30, 50])
def test_expansion_bomb_is_refused_before_expanding(tmp_path: Path, levels: int) -> None:
    (tmp_path / "bomb.circuit").write_text(doubling_blocks(levels), encoding="utf-8")
    message = refused(symcirc("inspect", "bomb.circuit", cwd=tmp_path),
                      f"bomb.circuit:{3 + 4 * (levels - 1) + 1}:1: error: instance `top`",
                      f"{2 ** (levels - 1):,} elements, parameters and ports",
                      f"{limits.MAX_STATEMENTS:,}")
    assert "^" in message  # the line, with a caret under the instance


def test_deep_instance_chain_is_refused_with_a_location(tmp_path: Path) -> None:
    (tmp_path / "chain.circuit").write_text(nested_chain(500), encoding="utf-8")
    refused(symcirc("inspect", "chain.circuit", cwd=tmp_path),
            "chain.circuit:1501:1: error:", "500 levels deep", "the limit is 50 levels")


def test_instance_depth_limit_admits_fifty_levels() -> None:
    circuit = parse(nested_chain(limits.MAX_INSTANCE_DEPTH))
    innermost = "R_" + "inner_" * (limits.MAX_INSTANCE_DEPTH - 1) + "top"
    assert list(circuit.elements) == [innermost, "U"]
    with pytest.raises(SymcircError, match="51 levels deep"):
        parse(nested_chain(limits.MAX_INSTANCE_DEPTH + 1))


def test_long_flat_file_stops_being_read_at_the_limit() -> None:
    count = limits.MAX_STATEMENTS + 50
    lines = ["voltage source U (n0, gnd) = 1 V"]
    lines += [f"resistor R{i} (n{i}, n{i + 1}) = 1k" for i in range(count)]
    with pytest.raises(SymcircError, match=f"holds more than {limits.MAX_STATEMENTS:,}") \
            as raised:
        parse("\n".join(lines) + "\n", "flat.circuit")
    assert (raised.value.file, raised.value.line) == ("flat.circuit", limits.MAX_STATEMENTS + 1)


def test_endless_input_is_read_only_to_the_size_limit(tmp_path: Path) -> None:
    done = symcirc("inspect", "/dev/zero", cwd=tmp_path)
    refused(done, "/dev/zero: error: the file is larger than 16 MiB")


def test_many_small_instances_count_together() -> None:
    lines = ["block pair (a, b)", "    resistor Ra (a, m) = 1k", "    resistor Rb (m, b) = 1k",
             "end"]
    half = limits.MAX_STATEMENTS // 2
    lines += [f"pair p{i} (n{i}, n{i + 1})" for i in range(half + 1)]
    with pytest.raises(SymcircError, match="with its blocks expanded") as raised:
        parse("\n".join(lines) + "\n")
    assert raised.value.line == 4 + half + 1  # the instance that passes the limit


def test_controlled_source_ladder_is_refused_before_the_work(tmp_path: Path) -> None:
    """Its determinant's terms are bounded by spanning-tree counts before anything is
    expanded (engine.controlled.check_size): 137.4 G, far past the limit."""
    lines = ["voltage source Uin (n0, gnd)"]
    for i in range(1, 21):
        lines += [f"param gm{i}", f"resistor Rs{i} (n{i - 1}, n{i})",
                  f"capacitor C{i} (n{i}, gnd)",
                  f"current source Ibeta{i} (n{i}, gnd) = gm{i}*V(n{i - 1})"]
    lines += ["port out (n20, gnd)", "derive gain(Uin, out)"]
    (tmp_path / "ladder.circuit").write_text("\n".join(lines) + "\n", encoding="utf-8")
    refused(symcirc("derive", "ladder.circuit", cwd=tmp_path),
            "ladder.circuit:", "the exact derivation is too large", "137.4 G terms",
            "refused before any work", "derive the circuit in parts")


def test_huge_claim_is_refused_before_expanding(tmp_path: Path) -> None:
    parts = [f"R{i}" for i in range(1, 11)]
    lines = ["voltage source U (a, gnd)", "param T"]
    lines += [f"resistor {name} (a, gnd)" for name in parts]
    lines += ["port p (a, gnd)", f"claim Z(p) = ({' + '.join(parts)} + T)^60"]
    (tmp_path / "claim.circuit").write_text("\n".join(lines) + "\n", encoding="utf-8")
    # (11 terms)^60 has C(70, 10) terms: the number of ways to share 60 among 11 terms
    refused(symcirc("check", "claim.circuit", cwd=tmp_path),
            "claim.circuit:14:1: error: the claim is too large", "396,704,524,216 terms")


def test_substituted_sensitivity_table_is_refused_by_size(tmp_path: Path) -> None:
    # eight sections: the substituted result has 83,737 terms, and its 18 rows 1,507,266
    lines = ["voltage source U (n0, gnd) = 1 V", "param T = 25", "param R0 = 1k"]
    for i in range(1, 9):
        lines += [f"param a{i} = 0.004", f"param b{i} = 0.001",
                  f"resistor Rs{i} (n{i - 1}, n{i}) = R0*(1 + a{i}*T + b{i}*T^2)",
                  f"resistor Rp{i} (n{i}, gnd) = R0*(2 + b{i}*T)"]
    lines.append("port out (n8, gnd)")
    (tmp_path / "drift.circuit").write_text("\n".join(lines) + "\n", encoding="utf-8")
    refused(symcirc("derive", "drift.circuit", "--substitute", "sensitivities(V(out))",
                    cwd=tmp_path),
            "<command line>:1:1: error: the sensitivity table of V(out) is too large",
            "without --substitute")


def test_substituting_a_huge_definition_is_refused_before_expanding(tmp_path: Path) -> None:
    names = [f"a{i}" for i in range(1, 12)]
    lines = [f"param {name} = 1" for name in names]
    lines += ["voltage source U (in, gnd) = 1 V",
              f"resistor R1 (in, mid) = ({' + '.join(names)})^14",
              "resistor R2 (mid, gnd) = 1k", "port out (mid, gnd)"]
    (tmp_path / "power.circuit").write_text("\n".join(lines) + "\n", encoding="utf-8")
    # (11 terms)^14 has C(24, 10) = 1,961,256 terms over the denominator 1: refused before
    # the definition itself is multiplied out
    refused(symcirc("derive", "power.circuit", "--substitute", "V(out)", cwd=tmp_path),
            "error: substituting the definition of R1 would expand the result",
            "1,961,257 terms", "without --substitute")


def test_power_terms_is_the_binomial_count() -> None:
    # (x + y)^n has n + 1 terms; (a + b + c)^2 has 6 (common practice: multisets)
    assert limits.power_terms(2, 7) == 8
    assert limits.power_terms(3, 2) == 6
    assert limits.power_terms(1, 60) == 1
    assert limits.power_terms(5, 1) == 5
    assert limits.power_terms(5, 0) == 1


def test_memory_ceiling_follows_the_environment() -> None:
    assert limits.memory_ceiling({limits.MEMORY_VARIABLE: "8G"}) == 8 * 2**30
    assert limits.memory_ceiling({limits.MEMORY_VARIABLE: "512M"}) == 512 * 2**20
    assert limits.memory_ceiling({limits.MEMORY_VARIABLE: "none"}) is None
    physical = os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES")
    assert limits.memory_ceiling({}) == max(int(physical * limits.MEMORY_FRACTION),
                                            limits.MEMORY_FLOOR)
    for wrong in ("lots", "-1G", "inf", "nan"):
        with pytest.raises(ValueError):
            limits.memory_ceiling({limits.MEMORY_VARIABLE: wrong})


def test_a_bad_memory_setting_is_an_error_message(tmp_path: Path) -> None:
    (tmp_path / "one.circuit").write_text("resistor R (a, gnd) = 1k\n", encoding="utf-8")
    done = subprocess.run([sys.executable, "-m", "symcirc.cli", "inspect", "one.circuit"],
                          cwd=tmp_path, capture_output=True, text=True, timeout=DEADLINE,
                          env={**os.environ, limits.MEMORY_VARIABLE: "lots"})
    refused(done, "SYMCIRC_MEMORY_LIMIT: error: `lots` is not a size")


def _terminal_child() -> None:
    """The child as a terminal starts it: Ctrl-C is not ignored even when the test run was
    started in the background (a shell starts background jobs with SIGINT ignored)."""
    _ceiling()
    signal.signal(signal.SIGINT, signal.SIG_DFL)


def _interrupt(command: list[str], cwd: Path) -> subprocess.CompletedProcess:
    """Start `command`, wait for its first line on stderr (it is then at work), send SIGINT
    and wait for it to end (TimeoutExpired if it does not: the test fails)."""
    child = subprocess.Popen(command, cwd=cwd, stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                             text=True, preexec_fn=_terminal_child)
    try:
        first = child.stderr.readline()
        child.send_signal(signal.SIGINT)
        out, err = child.communicate(timeout=30)
    finally:
        child.kill()
        child.wait()
    return subprocess.CompletedProcess(command, child.returncode, out, first + err)


def test_ctrl_c_ends_a_long_derivation(tmp_path: Path) -> None:
    # a fifteen-section ladder whose reference is not called gnd: the notice about it is the
    # first line, then deriving and printing its 1,346,269-term result take seconds
    lines = ["voltage source U (n0, ref) = 1 V"]
    for i in range(1, 16):
        lines += [f"resistor Rs{i} (n{i - 1}, n{i}) = 1k", f"resistor Rp{i} (n{i}, ref) = 2k"]
    lines.append("port out (n15, ref)")
    (tmp_path / "ladder.circuit").write_text("\n".join(lines) + "\n", encoding="utf-8")
    done = _interrupt([sys.executable, "-m", "symcirc.cli", "derive", "ladder.circuit",
                       "V(out)"], tmp_path)
    assert done.returncode in (130, -signal.SIGKILL), done.stderr
    assert "symcirc: interrupted" in done.stderr
    assert "Traceback" not in done.stderr


def test_ctrl_c_ends_a_flint_call_that_ignores_signals(tmp_path: Path) -> None:
    # Factoring the product of the Mersenne primes 2^127 - 1 and 2^521 - 1 runs far longer
    # than any test, inside one flint call that holds the interpreter lock throughout.
    script = (
        "import sys, flint\n"
        "from symcirc.limits import guard_process\n"
        "guard_process()\n"
        "n = (flint.fmpz(2)**127 - 1) * (flint.fmpz(2)**521 - 1)\n"
        "try:\n"
        "    print('factoring', file=sys.stderr, flush=True)\n"
        "    n.factor()\n"
        "except KeyboardInterrupt:\n"
        "    print('symcirc: interrupted', file=sys.stderr)\n"
        "    sys.exit(130)\n"
    )
    done = _interrupt([sys.executable, "-c", script], tmp_path)
    assert done.returncode in (130, -signal.SIGKILL), done.stderr
    assert "symcirc: interrupted" in done.stderr


def test_running_out_of_memory_is_an_error_message(monkeypatch, capsys, tmp_path) -> None:
    from symcirc import cli
    from symcirc.commands import inspect

    def exhausted(args):
        raise MemoryError

    monkeypatch.setattr(inspect, "run", exhausted)
    (tmp_path / "one.circuit").write_text("resistor R (a, gnd) = 1k\n", encoding="utf-8")
    assert cli.main(["inspect", str(tmp_path / "one.circuit")]) == 2
    assert capsys.readouterr().err.startswith("symcirc: error: out of memory")
