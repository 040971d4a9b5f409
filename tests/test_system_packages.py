"""`.ci/system-packages` checks each LaTeX file and command it needs (not just pdflatex) and
waits, bounded, for another package manager's lock. Run against stand-in commands: apt-get
records what it was asked, fuser says whether the lock is held, sleep returns at once."""

import os
import subprocess
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SCRIPT = ROOT / ".ci" / "system-packages"


def stand_ins(tmp_path: Path, missing: str = "", lock_held: int = 0) -> Path:
    """A folder of stand-in commands: kpsewhich finds every file but `missing`, and every
    tool but `missing` is there; fuser reports the lock held for its first `lock_held`
    calls."""
    bin_dir = tmp_path / "bin"
    bin_dir.mkdir()
    scripts = {
        "kpsewhich": f'[ "$1" = "{missing}" ] && exit 1; echo "/texmf/$1"',
        "apt-get": f'echo "$@" >> "{tmp_path}/apt.log"',
        "fuser": (f'n=$(cat "{tmp_path}/fuser.count" 2>/dev/null || echo 0); '
                  f'echo $((n + 1)) > "{tmp_path}/fuser.count"; '
                  f'[ "$n" -lt {lock_held} ]'),
        "sleep": "exit 0",
    }
    for name in ("pdflatex", "pdfinfo", "chromium", "gcc", "pandoc"):
        if name != missing:
            scripts[name] = "exit 0"
    for name, body in scripts.items():
        path = bin_dir / name
        path.write_text(f"#!/bin/sh\n{body}\n", encoding="utf-8")
        path.chmod(0o755)
    return bin_dir


def system_without(tmp_path: Path, program: str) -> str:
    """The system's command folders as one folder of links, without `program`."""
    shadow = tmp_path / "system"
    shadow.mkdir()
    for folder in (Path("/usr/bin"), Path("/bin")):
        for entry in folder.iterdir():
            if entry.name != program and not os.path.lexists(shadow / entry.name):
                (shadow / entry.name).symlink_to(entry)
    return str(shadow)


def run(tmp_path: Path, bin_dir: Path, system: str = "/usr/bin:/bin",
        **env: str) -> subprocess.CompletedProcess:
    environment = {**os.environ, "PATH": f"{bin_dir}:{system}", **env}
    if os.geteuid() != 0:  # the script asks sudo when not root: let a stand-in pass through
        (bin_dir / "sudo").write_text('#!/bin/sh\nexec "$@"\n', encoding="utf-8")
        (bin_dir / "sudo").chmod(0o755)
    return subprocess.run(["bash", str(SCRIPT)], capture_output=True, text=True,
                          env=environment, timeout=60)


def apt_log(tmp_path: Path) -> list[str]:
    log = tmp_path / "apt.log"
    return log.read_text(encoding="utf-8").splitlines() if log.exists() else []


def test_missing_siunitx_installs_texlive_science_although_pdflatex_exists(tmp_path):
    done = run(tmp_path, stand_ins(tmp_path, missing="siunitx.sty"))
    assert done.returncode == 0, done.stderr
    update, install = apt_log(tmp_path)
    assert "update" in update and "DPkg::Lock::Timeout=300" in update
    assert install.endswith("install -y -qq --no-install-recommends texlive-science")
    assert "DPkg::Lock::Timeout=300" in install


def test_missing_lmodern_installs_lmodern_only(tmp_path):
    done = run(tmp_path, stand_ins(tmp_path, missing="t1lmr.fd"))
    assert done.returncode == 0, done.stderr
    assert apt_log(tmp_path)[-1].endswith("--no-install-recommends lmodern")


def test_missing_pandoc_installs_pandoc_only(tmp_path):
    done = run(tmp_path, stand_ins(tmp_path, missing="pandoc"),
               system_without(tmp_path, "pandoc"))
    assert done.returncode == 0, done.stderr
    assert apt_log(tmp_path)[-1].endswith("--no-install-recommends pandoc")


def test_nothing_missing_installs_nothing(tmp_path):
    done = run(tmp_path, stand_ins(tmp_path))
    assert done.returncode == 0, done.stderr
    assert apt_log(tmp_path) == []


def test_a_held_lock_is_waited_for(tmp_path):
    done = run(tmp_path, stand_ins(tmp_path, missing="siunitx.sty", lock_held=3),
               LOCK_POLL="1")
    assert done.returncode == 0, done.stderr
    assert "waiting for another apt/dpkg run" in done.stderr
    assert apt_log(tmp_path)[-1].endswith("texlive-science")


def test_a_lock_held_past_the_bound_stops_with_a_message(tmp_path):
    done = run(tmp_path, stand_ins(tmp_path, missing="siunitx.sty", lock_held=10_000),
               LOCK_WAIT="4", LOCK_POLL="1")
    assert done.returncode == 1
    assert "still holds the lock after 4 s" in done.stderr
    assert apt_log(tmp_path) == []
