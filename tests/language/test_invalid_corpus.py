"""Every file in tests/invalid/ is rejected with the line, column and message it announces.

The first line of each file is `# expect: LINE:COL: TEXT`, TEXT being part of the message.
Each file is checked twice: through the Python API (the one exception type, at the right
place) and through the command line (`FILE:LINE:COL: error:`, exit status 2, no traceback).
"""

import re
import subprocess
import sys
from pathlib import Path

import pytest

import symcirc

INVALID = Path(__file__).parents[1] / "invalid"
FILES = sorted(INVALID.glob("*.circuit"))
EXPECT = re.compile(r"# expect: (\d+):(\d+): (.+)")


def _expectation(path: Path) -> tuple[int, int, str]:
    first = path.read_bytes().split(b"\n", 1)[0].decode("utf-8")
    match = EXPECT.fullmatch(first.strip())
    assert match, f"{path.name}: first line must be `# expect: LINE:COL: TEXT`"
    return int(match[1]), int(match[2]), match[3]


def test_corpus_is_large_enough():
    # The issue asks for at least 40 distinct invalid files, 20 of them semantic.
    assert len(FILES) >= 40
    assert len([f for f in FILES if f.name.startswith("model_")]) >= 20
    messages = [_expectation(f)[2] for f in FILES]
    assert len(set(messages)) == len(messages), "two files expect the same message"


@pytest.mark.parametrize("path", FILES, ids=lambda p: p.stem)
def test_api_reports_line_column_and_message(path: Path):
    line, column, text = _expectation(path)
    with pytest.raises(symcirc.SymcircError) as caught:
        symcirc.load(str(path))
    error = caught.value
    assert (error.line, error.column) == (line, column), error.format()
    assert text in error.message, error.format()
    assert error.file == str(path)


@pytest.mark.parametrize("path", FILES, ids=lambda p: p.stem)
def test_command_line_prints_error_and_exits_2(path: Path, cli):
    line, column, _ = _expectation(path)
    status, _, err = cli("inspect", str(path))
    assert status == 2
    assert err.startswith(f"{path}:{line}:{column}: error: ")
    assert "Traceback" not in err
    # the source line is quoted, with a caret under the column
    lines = err.splitlines()
    assert lines[2].strip() == "^"


def test_command_line_in_a_process_has_no_traceback():
    # One real process (the others run in-process for speed): exit status and stderr.
    path = INVALID / "model_voltage_loop.circuit"
    done = subprocess.run([sys.executable, "-m", "symcirc.cli", "inspect", str(path)],
                          capture_output=True, text=True, timeout=60)
    assert done.returncode == 2
    assert f"{path}:4:1: error: voltage sources" in done.stderr
    assert "Traceback" not in done.stderr and done.stdout == ""
