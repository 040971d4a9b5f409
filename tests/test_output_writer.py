"""The one output writer: random exclusive temporaries, no link followed, never over an
input, never replacing a device, FIFO, folder or link; a note and its figures committed
together; temporaries removed on errors, interruptions and after killed runs."""

import errno
import os
import re
import signal
import stat
import subprocess
import sys
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest

import symcirc.output as output
from symcirc.cli import main
from symcirc.errors import SymcircError
from symcirc.output import Transaction, check_target, write_file

RC = """\
title "RC low-pass of a test fixture (invented)"
voltage source U (in, gnd) = 1 V
resistor R (in, o) = 1 kΩ
capacitor C (o, gnd) = 1 µF
port out (o, gnd)
derive gain(U, out)
"""

COMMANDS = {  # command line writing OUT from the circuit IN
    "note": lambda source, out: ["note", source, "-o", out, "--format", "md"],
    "sheet": lambda source, out: ["sheet", source, "-o", out, "--format", "md"],
    "export": lambda source, out: ["export", source, "--lang", "python", "-o", out],
    "plot": lambda source, out: ["plot", source, "gain(U, out)", "-o", out],
}


@pytest.fixture()
def rc(tmp_path):
    source = tmp_path / "rc.circuit"
    source.write_text(RC, encoding="utf-8")
    return source


def _hidden(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.rglob(".*"))


def _run(command: str, source: Path, out: Path, capsys) -> tuple[int, str]:
    capsys.readouterr()
    status = main(COMMANDS[command](str(source), str(out)))
    err = capsys.readouterr().err
    assert "Traceback" not in err
    return status, err


# ---------------------------------------------------------------- targets refused


@pytest.mark.parametrize("command", sorted(COMMANDS))
def test_a_link_as_output_is_refused_and_its_target_untouched(command, rc, tmp_path, capsys):
    victim = tmp_path / "victim.txt"
    victim.write_bytes(b"precious")
    link = tmp_path / "out.svg"
    link.symlink_to(victim)
    status, err = _run(command, rc, link, capsys)
    assert status == 2 and f"{link}: error: the output is a symbolic link" in err
    assert victim.read_bytes() == b"precious" and link.is_symlink()
    assert _hidden(tmp_path) == []


@pytest.mark.parametrize("command", sorted(COMMANDS))
def test_the_input_as_output_is_refused(command, tmp_path, capsys):
    source = tmp_path / "in.svg"  # `plot in.svg ... -o in.svg`
    source.write_text(RC, encoding="utf-8")
    for target in (source, tmp_path / "hard.svg", tmp_path / "soft.svg"):
        if target.name == "hard.svg":
            os.link(source, target)
        elif target.name == "soft.svg":
            target.symlink_to(source)
        status, err = _run(command, source, target, capsys)
        assert status == 2 and "refusing to write the output over the input file" in err
        assert source.read_text(encoding="utf-8") == RC


def test_a_second_input_of_a_sheet_is_refused(rc, tmp_path, capsys):
    other = tmp_path / "other.circuit"
    other.write_text(RC, encoding="utf-8")
    capsys.readouterr()
    assert main(["sheet", str(rc), str(other), "-o", str(other), "--format", "md"]) == 2
    assert "over the input file" in capsys.readouterr().err
    assert other.read_text(encoding="utf-8") == RC


def test_writing_into_the_template_folder_is_refused(rc, tmp_path, capsys):
    templates = tmp_path / "mine"
    templates.mkdir()
    capsys.readouterr()
    assert main(["note", str(rc), "-o", str(templates / "note.md.j2"), "--format", "md",
                 "--template", str(templates)]) == 2
    assert "into the template folder" in capsys.readouterr().err
    assert list(templates.iterdir()) == []


@pytest.mark.parametrize("command", ["export", "plot"])
def test_a_fifo_is_refused_without_blocking(command, rc, tmp_path, capsys):
    fifo = tmp_path / "out.png"
    os.mkfifo(fifo)
    status, err = _run(command, rc, fifo, capsys)
    assert status == 2 and "a FIFO (named pipe), not a regular file" in err
    assert stat.S_ISFIFO(os.lstat(fifo).st_mode)


def test_a_device_is_never_replaced(rc, capsys):
    status, err = _run("export", rc, Path(os.devnull), capsys)
    assert status == 2 and "a character device, not a regular file" in err
    assert stat.S_ISCHR(os.lstat(os.devnull).st_mode)


@pytest.mark.parametrize("command", sorted(COMMANDS))
def test_a_folder_as_output_is_a_located_error(command, rc, tmp_path, capsys):
    folder = tmp_path / "out.svg"
    folder.mkdir()
    status, err = _run(command, rc, folder, capsys)
    assert status == 2 and f"{folder}: error: the output is a folder" in err


def test_a_missing_folder_is_a_located_error(rc, tmp_path, capsys):
    target = tmp_path / "rc.circuit" / "out.py"  # a file where a folder should be
    status, err = _run("export", rc, target, capsys)
    assert status == 2 and f"{target}: error: folder '{rc}' is not a folder" in err


@pytest.mark.parametrize("command", ["export", "plot"])
def test_a_read_only_folder_is_a_located_error(command, rc, tmp_path, capsys, monkeypatch):
    # The tests run as root, for whom permissions do not hold: the refusal the system gives
    # a read-only folder is made to happen instead.
    def refused(*args, **kwargs):
        raise PermissionError(errno.EACCES, os.strerror(errno.EACCES))

    monkeypatch.setattr(output.tempfile, "mkstemp", refused)
    status, err = _run(command, rc, tmp_path / "out.png", capsys)
    assert status == 2
    assert f"{tmp_path}: error: cannot write into the folder: Permission denied" in err
    assert "read-only" in err and not (tmp_path / "out.png").exists()


# ---------------------------------------------------------------- temporaries


def test_planted_links_at_plausible_temporary_names_are_not_followed(rc, tmp_path, capsys):
    victim = tmp_path / "victim.txt"
    victim.write_bytes(b"precious")
    names = [".p1.png.partial", ".p1.png.tmp", "p1.png.tmp", ".p1.png~",
             f".p1.png.symcirc-{os.getpid()}-.tmp", f".p1.png.symcirc-{os.getpid()}-aaaaaaaa.tmp"]
    for name in names:
        (tmp_path / name).symlink_to(victim)
    status, _ = _run("plot", rc, tmp_path / "p1.png", capsys)
    assert status == 0
    assert victim.read_bytes() == b"precious"
    assert (tmp_path / "p1.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert all((tmp_path / name).is_symlink() for name in names)


def test_temporaries_are_random_exclusive_and_gone_afterwards(tmp_path, monkeypatch):
    seen = []
    real = output.tempfile.mkstemp

    def spy(*args, **kwargs):
        handle, name = real(*args, **kwargs)
        seen.append(Path(name).name)
        return handle, name

    monkeypatch.setattr(output.tempfile, "mkstemp", spy)
    for _ in range(2):
        write_file(tmp_path / "n.md", b"text")
    assert len(set(seen)) == 2
    assert all(re.fullmatch(rf"\.n\.md\.symcirc-{os.getpid()}-\w+\.tmp", n) for n in seen)
    assert sorted(os.listdir(tmp_path)) == ["n.md"]


def test_stale_temporaries_of_killed_runs_are_removed(tmp_path):
    dead = tmp_path / ".n.md.symcirc-999999999-abcdefgh.tmp"  # no such process
    live = tmp_path / f".n.md.symcirc-{os.getpid()}-abcdefgh.tmp"  # this one still runs
    other = tmp_path / ".notes.txt"  # not ours
    for path in (dead, live, other):
        path.write_bytes(b"x")
    write_file(tmp_path / "n.md", b"text")
    assert not dead.exists() and live.exists() and other.exists()


def test_concurrent_writes_leave_one_whole_file(tmp_path):
    target = tmp_path / "n.md"
    contents = [bytes([65 + i]) * 50_000 for i in range(8)]
    with ThreadPoolExecutor(4) as pool:
        list(pool.map(lambda data: write_file(target, data), contents))
    assert target.read_bytes() in contents
    assert sorted(os.listdir(tmp_path)) == ["n.md"]


def test_permissions_of_the_replaced_file_are_kept(tmp_path):
    target = tmp_path / "n.md"
    target.write_bytes(b"old")
    os.chmod(target, 0o640)
    write_file(target, b"new")
    assert target.read_bytes() == b"new" and stat.S_IMODE(os.stat(target).st_mode) == 0o640


def test_sigterm_while_writing_removes_the_temporaries(tmp_path, monkeypatch):
    real = output.os.fsync

    def terminated(handle):
        real(handle)
        os.kill(os.getpid(), signal.SIGTERM)

    monkeypatch.setattr(output.os, "fsync", terminated)
    before = signal.getsignal(signal.SIGTERM)
    with pytest.raises(SystemExit) as caught:
        write_file(tmp_path / "n.md", b"text")
    assert caught.value.code == 128 + signal.SIGTERM
    assert os.listdir(tmp_path) == []
    assert signal.getsignal(signal.SIGTERM) == before


def test_an_unfinished_transaction_leaves_the_folder_as_it_was(tmp_path):
    (tmp_path / "keep.md").write_bytes(b"old")
    with Transaction() as files:
        figures = files.folder(tmp_path / "keep_figures")
        files.add(figures / "a.svg", b"<svg/>")
        files.add(tmp_path / "keep.md", b"new")
    assert sorted(os.listdir(tmp_path)) == ["keep.md"]
    assert (tmp_path / "keep.md").read_bytes() == b"old"


def test_check_target_accepts_a_new_or_regular_file(tmp_path):
    assert check_target(tmp_path / "new.md") == tmp_path / "new.md"
    (tmp_path / "old.md").write_bytes(b"x")
    assert check_target(tmp_path / "old.md", [tmp_path / "other"]) == tmp_path / "old.md"
    with pytest.raises(SymcircError, match="symbolic link"):
        (tmp_path / "dangling.md").symlink_to(tmp_path / "nowhere")
        check_target(tmp_path / "dangling.md")


# ---------------------------------------------------------------- a note and its figures


def _figures(folder: Path) -> set[str]:
    return {p.name for p in folder.iterdir()} if folder.is_dir() else set()


def test_figures_and_note_are_committed_together(rc, tmp_path):
    note, folder = tmp_path / "rc.md", tmp_path / "rc_figures"
    assert main(["note", str(rc), "-o", str(note)]) == 0
    first, old_figures = note.read_text(encoding="utf-8"), _figures(folder)
    # the schematic and the frequency response
    assert len(old_figures) == 2 and all(name in first for name in old_figures)
    rc.write_text(RC.replace("1 kΩ", "2 kΩ"), encoding="utf-8")
    assert main(["note", str(rc), "-o", str(note)]) == 0
    second, new_figures = note.read_text(encoding="utf-8"), _figures(folder)
    # A new picture gets a new name; the old note's figures go once the new note is in place.
    assert new_figures.isdisjoint(old_figures) and len(new_figures) == 2
    assert all(name in second for name in new_figures)
    assert _hidden(tmp_path) == []


@pytest.mark.parametrize("first_time", [False, True])
def test_an_interrupted_note_leaves_the_old_note_with_its_figures(rc, tmp_path, monkeypatch,
                                                                  capsys, first_time):
    note, folder = tmp_path / "rc.md", tmp_path / "rc_figures"
    if not first_time:
        assert main(["note", str(rc), "-o", str(note)]) == 0
        rc.write_text(RC.replace("1 kΩ", "2 kΩ"), encoding="utf-8")
    before = note.read_bytes() if not first_time else None
    figures_before = {p.name: p.read_bytes() for p in folder.iterdir()} if not first_time else {}
    real = output.os.replace

    def interrupted(source, target):
        if Path(target) == note:
            raise KeyboardInterrupt
        real(source, target)

    monkeypatch.setattr(output.os, "replace", interrupted)
    assert main(["note", str(rc), "-o", str(note)]) == 130
    assert "interrupted" in capsys.readouterr().err
    if first_time:
        assert not note.exists() and not folder.exists()
    else:
        assert note.read_bytes() == before
        assert {p.name: p.read_bytes() for p in folder.iterdir()} == figures_before
    assert _hidden(tmp_path) == []


# ---------------------------------------------------------------- the parser's cache

PARSE = "import symcirc; symcirc.parse('resistor R1 (a, gnd) = 1k')"


def _parse_in_a_fresh_process(cache: Path, temporary: Path) -> None:
    environment = dict(os.environ, XDG_CACHE_HOME=str(cache), TMPDIR=str(temporary))
    subprocess.run([sys.executable, "-c", PARSE], env=environment, check=True, timeout=120)


def test_the_parser_cache_is_private_and_never_in_the_shared_temporary_folder(tmp_path):
    # lark's own cache file is a pickle under a predictable name in the temporary folder:
    # anyone able to write there could make every user's run load their code.
    cache, temporary = tmp_path / "cache", tmp_path / "tmp"
    temporary.mkdir()
    _parse_in_a_fresh_process(cache, temporary)
    assert os.listdir(temporary) == []
    folder = cache / "symcirc"
    assert stat.S_IMODE(os.stat(folder).st_mode) == 0o700
    assert [p.suffix for p in folder.iterdir()] == [".lark"]


def test_a_parser_cache_others_may_write_is_not_used(tmp_path):
    cache, temporary = tmp_path / "cache", tmp_path / "tmp"
    (cache / "symcirc").mkdir(parents=True)
    temporary.mkdir()
    os.chmod(cache / "symcirc", 0o777)
    _parse_in_a_fresh_process(cache, temporary)
    assert os.listdir(cache / "symcirc") == [] and os.listdir(temporary) == []


def test_a_link_planted_between_writing_and_renaming_is_refused(tmp_path):
    victim = tmp_path / "victim.txt"
    victim.write_bytes(b"precious")
    target = tmp_path / "n.md"
    with pytest.raises(SymcircError, match="symbolic link"):
        with Transaction() as files:
            files.add(target, b"new")
            target.symlink_to(victim)  # planted after the check, before the rename
            files.commit()
    assert victim.read_bytes() == b"precious" and target.is_symlink()
    assert sorted(os.listdir(tmp_path)) == ["n.md", "victim.txt"]


def test_standard_output_as_a_link_is_refused(rc, capsys):
    status, err = _run("export", rc, Path("/dev/stdout"), capsys)
    assert status == 2 and "use `-o -` for standard output" in err


@pytest.mark.parametrize("command", sorted(COMMANDS))
def test_a_read_only_file_is_not_replaced(command, rc, tmp_path, capsys):
    target = tmp_path / "out.svg"
    target.write_bytes(b"kept")
    os.chmod(target, 0o444)  # no write permission for anyone: refused even for root
    status, err = _run(command, rc, target, capsys)
    assert status == 2 and f"{target}: error: the output is read-only" in err
    assert target.read_bytes() == b"kept"


def test_concurrent_runs_both_succeed(rc, tmp_path):
    target = tmp_path / "p.py"
    command = [sys.executable, "-m", "symcirc.cli", "export", str(rc), "--lang", "python",
               "-o", str(target)]
    runs = [subprocess.Popen(command, stdout=subprocess.PIPE, stderr=subprocess.PIPE)
            for _ in range(2)]
    results = [run.communicate(timeout=300) for run in runs]
    assert [run.returncode for run in runs] == [0, 0]
    assert all(b"Traceback" not in err for _, err in results)
    assert b"def " in target.read_bytes() and _hidden(tmp_path) == []


def test_the_parser_cache_appears_whole_under_its_name(tmp_path, monkeypatch):
    # lark writes its cache file in place: a second process starting meanwhile would read
    # half a parser. The file is written under a name of this process and renamed.
    import lark

    from symcirc.language import parser

    seen = []
    build = lark.Lark

    def spy(*args, **options):
        cache = options["cache"]
        seen.append((cache, os.path.exists(cache)))
        return build(*args, **options)

    (tmp_path / "cache").mkdir(mode=0o700)
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "cache"))
    monkeypatch.setattr(lark, "Lark", spy)
    parser._parser.cache_clear()
    try:
        parser._parser()
        parser._parser.cache_clear()
        parser._parser()
    finally:
        parser._parser.cache_clear()
    folder = tmp_path / "cache" / "symcirc"
    (final,) = folder.iterdir()
    (first, existed), (second, found) = seen
    assert first != str(final) and not existed and first.endswith(".tmp")
    assert second == str(final) and found
