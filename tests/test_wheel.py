"""The built wheel works on its own: grammar and templates ship inside it.

Builds the wheel from a copy of the source tree (`python -m build`, whose isolated
build environment comes from the package index), installs it into a fresh virtual
environment that sees the running interpreter's site-packages for the runtime dependencies
(through a `.pth` file, which adds the paths without running their install hooks), and
runs `symcirc inspect` on an example from a directory outside the tree.
"""

import json
import shutil
import site
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
IGNORE = shutil.ignore_patterns(".git", ".venv", "build", "dist", "*.egg-info", "__pycache__",
                                ".pytest_cache", ".hypothesis", "out")


def _run(*command: str, cwd: Path) -> subprocess.CompletedProcess:
    done = subprocess.run(command, cwd=cwd, capture_output=True, text=True, timeout=600)
    assert done.returncode == 0, f"{command}\n{done.stdout}\n{done.stderr}"
    return done


def test_wheel_installs_and_reads_an_example(tmp_path: Path):
    source = tmp_path / "source"
    shutil.copytree(ROOT, source, ignore=IGNORE)
    wheels = tmp_path / "wheels"
    _run(sys.executable, "-m", "build", "--wheel", "--outdir", str(wheels), str(source),
         cwd=tmp_path)
    (wheel,) = wheels.glob("circuit_formulary-*.whl")

    venv = tmp_path / "venv"
    _run(sys.executable, "-m", "venv", str(venv), cwd=tmp_path)
    python = venv / "bin" / "python"
    (own,) = venv.glob("lib/python*/site-packages")
    (own / "runtime-dependencies.pth").write_text("\n".join(site.getsitepackages()) + "\n")
    _run(str(python), "-m", "pip", "install", "--quiet", "--no-deps", "--force-reinstall",
         str(wheel), cwd=tmp_path)

    work = tmp_path / "elsewhere"
    work.mkdir()
    example = work / "bridge_adc.circuit"
    shutil.copy(ROOT / "examples" / "bridge_adc.circuit", example)

    # the package, its grammar and its templates come from the venv, not the source tree
    where = _run(str(python), "-c", (
        "import json, symcirc; from importlib.resources import files;"
        "print(json.dumps([symcirc.__file__,"
        " str(files('symcirc.grammar').joinpath('circuit.lark')),"
        " str(files('symcirc.templates'))]))"
    ), cwd=work)
    package, grammar, templates = json.loads(where.stdout)
    for path in (package, grammar, templates):
        assert path.startswith(str(venv)), path
    assert Path(grammar).is_file()

    shown = _run(str(venv / "bin" / "symcirc"), "inspect", example.name, "--format", "json",
                 cwd=work)
    data = json.loads(shown.stdout)
    assert data["title"] == "Platinum sensor bridge on a data-logger ADC input"
    assert [e["name"] for e in data["elements"]] == ["Uref", "R1", "R2", "Rt", "R4", "Rin"]
    assert data["claims"][0]["quantity"] == "thevenin(out).impedance"
