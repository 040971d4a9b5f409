"""Every file symcirc writes goes through here (notes, figures, sheets, exports, plots).

- Data goes to a temporary file with a random name in the target's folder (`mkstemp`:
  created exclusively, never through an existing name or link), then is renamed over the
  target: readers see the old file or the new one, never half of one.
- A target that is a symbolic link, a folder or anything but a regular file (a device, a
  FIFO, a socket) is refused, never replaced; so is a read-only file (no write permission
  for anyone, or not for this user) and a target that is one of the command's own inputs
  (same device and inode: links and hard links to an input count).
- Several files are committed together (`Transaction`): all go to temporaries first, then
  are renamed in the order they were added, the document last. Figures of a note are named
  after what they show (see `report.figures`), so a new figure never takes the name of one
  the old note shows: at every instant the note in place and the figures it names belong
  together. An error, Ctrl-C or SIGTERM before the document is in place removes every
  temporary and every file the transaction had put in place; nothing else changes.
- Temporary names start with `.`, carry `.symcirc-PID-` and end in `.tmp`; those left by a
  process that no longer runs (killed outright) are removed at the next write in the folder.
- A program symcirc runs (pdflatex, pandoc) works in a `private_folder`: made by `mkdtemp`
  (readable by this user only), filled through `Transaction`, removed with everything in it
  when the work is done or fails.

This is a utility like `errors`, usable from every stage; it imports no stage.
"""

from __future__ import annotations

import errno
import os
import re
import shutil
import signal
import stat
import tempfile
import threading
from collections.abc import Iterable, Iterator
from contextlib import contextmanager
from pathlib import Path

from .errors import SymcircError

TEMPORARY_TAG = ".symcirc-"
_TEMPORARY = re.compile(r"^\..*\.symcirc-(\d+)-[A-Za-z0-9_]+\.tmp$")
_NAME_KEPT = 100
"""Characters of the target's name kept in a temporary name (names stay under NAME_MAX)."""

_KINDS = {stat.S_ISFIFO: "a FIFO (named pipe)", stat.S_ISCHR: "a character device",
          stat.S_ISBLK: "a block device", stat.S_ISSOCK: "a socket"}


def identities(paths: Iterable[str | os.PathLike]) -> dict[tuple[int, int], str]:
    """(device, inode) of each existing input, links followed, with the name it was given."""
    found: dict[tuple[int, int], str] = {}
    for path in paths:
        try:
            info = os.stat(path)
        except (OSError, ValueError):
            continue
        found.setdefault((info.st_dev, info.st_ino), os.fspath(path))
    return found


def check_target(path: str | os.PathLike, inputs: Iterable[str | os.PathLike] = ()) -> Path:
    """`path` as a Path when symcirc may write it; a located error when it may not: a link,
    a folder, a device or FIFO, one of `inputs`, or a missing folder."""
    return _check(Path(path), identities(inputs))


def _check(path: Path, inputs: dict[tuple[int, int], str]) -> Path:
    try:
        info = os.lstat(path)
    except (FileNotFoundError, NotADirectoryError):
        info = None
    except OSError as err:
        raise _error(path, err) from None
    except ValueError:  # a NUL in the name
        raise SymcircError("not a valid file name", file=repr(str(path))) from None
    if info is not None:
        try:
            followed = os.stat(path)
            source = inputs.get((followed.st_dev, followed.st_ino))
        except OSError:
            source = None  # a dangling link
        if source is not None:
            raise SymcircError(f"refusing to write the output over the input file '{source}'",
                               file=str(path))
        if stat.S_ISLNK(info.st_mode):
            raise SymcircError(f"the output is a symbolic link (to '{_link_target(path)}'); "
                               "symcirc does not write through links: remove it, name the file "
                               "itself, or use `-o -` for standard output", file=str(path))
        if stat.S_ISDIR(info.st_mode):
            raise SymcircError("the output is a folder; give a file name", file=str(path))
        if not stat.S_ISREG(info.st_mode):
            kind = next((k for test, k in _KINDS.items() if test(info.st_mode)), "not a file")
            raise SymcircError(f"the output is {kind}, not a regular file; symcirc writes only "
                               "regular files (`-o -` writes to standard output)", file=str(path))
        if not info.st_mode & 0o222 or not os.access(path, os.W_OK):
            raise SymcircError("the output is read-only; make it writable or choose another "
                               "name", file=str(path))
    folder = path.parent
    if not folder.is_dir():
        problem = "is not a folder" if os.path.lexists(folder) else "does not exist"
        raise SymcircError(f"folder '{folder}' {problem}", file=str(path))
    if not os.access(folder, os.W_OK | os.X_OK):
        raise SymcircError(f"cannot write into folder '{folder}': it is read-only for this user",
                           file=str(path))
    return path


def _link_target(path: Path) -> str:
    try:
        return os.readlink(path)
    except OSError:
        return "?"


def write_file(path: str | os.PathLike, data: bytes,
               inputs: Iterable[str | os.PathLike] = ()) -> None:
    """Write one file through a temporary and a rename (see the module's rules)."""
    with Transaction(inputs) as files:
        files.add(path, data)
        files.commit()


class Transaction:
    """Files written together: `add` each (to a temporary), then `commit` (renames in the
    order added, then removes the files given to `remove_after_commit`). Leaving the `with`
    block without committing, or failing during the commit, leaves the folder as it was."""

    def __init__(self, inputs: Iterable[str | os.PathLike] = ()) -> None:
        self._inputs = identities(inputs)
        self._staged: list[tuple[Path, Path]] = []  # (temporary, target)
        self._placed: list[Path] = []  # targets that did not exist before the commit
        self._made: list[Path] = []  # folders this transaction created
        self._obsolete: list[Path] = []
        self._cleaned: set[Path] = set()
        self._committed = False
        self._terminate: _TerminateRaises | None = None

    def __enter__(self) -> Transaction:
        self._terminate = _TerminateRaises()
        self._terminate.__enter__()
        return self

    def __exit__(self, kind, value, traceback) -> None:
        try:
            if not self._committed:
                self._discard()
        finally:
            if self._terminate is not None:
                self._terminate.__exit__(kind, value, traceback)

    def folder(self, path: str | os.PathLike) -> Path:
        """A folder for outputs, created when missing (and removed again if the transaction
        does not commit); refuses a link or a file in its place."""
        path = Path(path)
        try:
            os.mkdir(path)
            self._made.append(path)
        except FileExistsError:
            pass
        except OSError as err:
            raise _error(path, err) from None
        info = os.lstat(path)
        if stat.S_ISLNK(info.st_mode):
            raise SymcircError("cannot write: the folder is a symbolic link; symcirc does not "
                               "write through links", file=str(path))
        if not stat.S_ISDIR(info.st_mode):
            raise SymcircError("cannot write: a file stands where this folder goes",
                               file=str(path))
        return path

    def add(self, path: str | os.PathLike, data: bytes) -> None:
        """Write `data` to a temporary beside `path`, to be renamed over it on commit."""
        target = _check(Path(path), self._inputs)
        folder = target.parent
        if folder not in self._cleaned:
            remove_stale_temporaries(folder)
            self._cleaned.add(folder)
        try:
            handle, name = tempfile.mkstemp(
                prefix=f".{target.name[:_NAME_KEPT]}{TEMPORARY_TAG}{os.getpid()}-",
                suffix=".tmp", dir=folder)
        except OSError as err:
            raise _error(folder, err, "cannot write into the folder") from None
        temporary = Path(name)
        self._staged.append((temporary, target))
        try:
            with os.fdopen(handle, "wb") as stream:
                stream.write(data)
                stream.flush()
                os.fsync(stream.fileno())
            os.chmod(temporary, _mode_for(target))
        except OSError as err:
            raise _error(target, err) from None

    def remove_after_commit(self, paths: Iterable[Path]) -> None:
        """Files to delete once the commit is done (figures the old note showed)."""
        self._obsolete.extend(paths)

    def commit(self) -> None:
        """Rename every temporary over its target, in order; then remove obsolete files."""
        with _signals_deferred():
            try:
                for temporary, target in self._staged:
                    _check(target, self._inputs)  # nothing planted since `add`
                    existed = os.path.lexists(target)
                    try:
                        os.replace(temporary, target)
                    except OSError as err:
                        raise _error(target, err) from None
                    if not existed:
                        self._placed.append(target)
            except BaseException:
                self._discard()
                raise
            self._committed = True
            self._staged = []
            for folder in {target.parent for target in self._placed}:
                _sync_folder(folder)
            for path in self._obsolete:
                try:
                    if stat.S_ISREG(os.lstat(path).st_mode):
                        os.unlink(path)
                except OSError:
                    pass  # already gone (a concurrent run), or not ours to remove

    def _discard(self) -> None:
        with _signals_deferred():
            for temporary, _ in self._staged:
                _unlink(temporary)
            for target in self._placed:
                _unlink(target)
            for folder in reversed(self._made):
                try:
                    os.rmdir(folder)
                except OSError:
                    pass  # not empty: other files were there before
            self._staged, self._placed, self._made = [], [], []


@contextmanager
def private_folder() -> Iterator[Path]:
    """A new folder in the system's temporary folder that only this user can enter (mode
    0700, from `mkdtemp`), removed with everything in it on leaving the block."""
    try:
        path = Path(tempfile.mkdtemp(prefix="symcirc-"))
    except OSError as err:
        raise _error(Path(tempfile.gettempdir()), err, "cannot make a private work folder") \
            from None
    try:
        yield path
    finally:
        shutil.rmtree(path, ignore_errors=True)


def remove_stale_temporaries(folder: Path) -> None:
    """Remove temporaries of symcirc processes that no longer run (killed while writing)."""
    try:
        names = os.listdir(folder)
    except OSError:
        return
    for name in names:
        match = _TEMPORARY.match(name)
        if match is None or _running(int(match.group(1))):
            continue
        path = folder / name
        try:
            if stat.S_ISREG(os.lstat(path).st_mode):
                os.unlink(path)
        except OSError:
            pass


def _running(pid: int) -> bool:
    if pid == os.getpid():
        return True
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except (PermissionError, OverflowError, ValueError):
        return True  # someone else's process, or not a process number we can ask about
    return True


def _mode_for(target: Path) -> int:
    """The existing file's permissions, else what a new file gets under the umask."""
    try:
        return os.stat(target).st_mode & 0o7777
    except OSError:
        umask = os.umask(0)
        os.umask(umask)
        return 0o666 & ~umask


def _unlink(path: Path) -> None:
    try:
        os.unlink(path)
    except OSError:
        pass


def _sync_folder(folder: Path) -> None:
    """Make the renames durable (the folder's entries reach the disk)."""
    try:
        handle = os.open(folder, os.O_RDONLY | os.O_DIRECTORY)
    except OSError:
        return
    try:
        os.fsync(handle)
    except OSError:
        pass
    finally:
        os.close(handle)


def _error(path: Path, err: OSError, what: str = "cannot write") -> SymcircError:
    reason = err.strerror or str(err)
    if err.errno in (errno.EACCES, errno.EPERM, errno.EROFS):
        reason += " (the folder is read-only for this user)"
    return SymcircError(f"{what}: {reason}", file=str(path))


@contextmanager
def _signals_deferred() -> Iterator[None]:
    """Ctrl-C and SIGTERM wait until the renames (or their undoing) are done."""
    if not hasattr(signal, "pthread_sigmask"):
        yield
        return
    held = {signal.SIGINT, signal.SIGTERM}
    previous = signal.pthread_sigmask(signal.SIG_BLOCK, held)
    try:
        yield
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, previous)


class _TerminateRaises:
    """While files are being written, SIGTERM raises SystemExit (exit 143) so that the
    temporaries are removed, instead of ending the process where it stands."""

    def __init__(self) -> None:
        self._previous = None
        self._installed = False

    def __enter__(self) -> None:
        if threading.current_thread() is not threading.main_thread():
            return
        self._previous = signal.signal(signal.SIGTERM, _terminated)
        self._installed = True

    def __exit__(self, *_: object) -> None:
        if self._installed:
            previous = self._previous if self._previous is not None else signal.SIG_DFL
            signal.signal(signal.SIGTERM, previous)
            self._installed = False


def _terminated(signum: int, frame: object) -> None:
    raise SystemExit(128 + signum)
