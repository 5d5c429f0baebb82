"""Write-then-rename, so that a failed or cancelled write never leaves a partial file.

The temporary file sits in the target folder, because ``os.replace`` is only atomic within
one file system (POSIX rename(2); Windows MoveFileEx with MOVEFILE_REPLACE_EXISTING).
"""

from __future__ import annotations

import contextlib
import os
import signal
import stat
import tempfile
import threading
from collections.abc import Iterator
from pathlib import Path

from ..errors import WriteError

# Read once at import: changing the umask later to read it would race with other threads.
_UMASK = os.umask(0o022)
os.umask(_UMASK)


@contextlib.contextmanager
def signals_held() -> Iterator[None]:
    """Hold Ctrl-C and SIGTERM while a temporary file or folder is made or removed.

    The command line turns those signals into an exception; one arriving inside
    ``mkstemp`` or ``rmtree`` would leave a file behind, unrecorded or half removed. Held,
    it is delivered right after the block, where the usual clean-up runs. (Only the main
    thread receives signals; elsewhere this does nothing.)
    """
    if threading.current_thread() is not threading.main_thread() or not hasattr(
        signal, "pthread_sigmask"
    ):
        yield
        return
    previous = signal.pthread_sigmask(signal.SIG_BLOCK, {signal.SIGINT, signal.SIGTERM})
    try:
        yield
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, previous)


@contextlib.contextmanager
def atomic_path(target: str | os.PathLike, *, keep_suffix: bool = False) -> Iterator[Path]:
    """Yield a temporary path beside ``target``; on success it replaces ``target``.

    A file that is replaced keeps its permission bits; a new file gets the usual ones
    (0666 less the umask). With ``keep_suffix`` the temporary name ends in the target's
    extension, for writers that choose the format by it. Any exception (including
    ``Cancelled``) deletes the temporary file and propagates; operating-system errors
    become ``WriteError`` naming the target.
    """
    target = Path(target)
    folder = target.parent
    if not folder.is_dir():
        raise WriteError(target, "the folder does not exist")
    suffix = ".part" + (target.suffix if keep_suffix else "")
    tmp: Path | None = None
    try:
        # Made and recorded with the signals held: a Ctrl-C is delivered only once ``tmp``
        # names the file, inside this try, so the file is removed below.
        with signals_held():
            fd, name = tempfile.mkstemp(prefix=f".{target.name}.", suffix=suffix, dir=folder)
            tmp = Path(name)
            os.close(fd)
        yield tmp
        os.chmod(tmp, _mode_for(target))
        os.replace(tmp, target)
    except OSError as err:
        if tmp is None:
            raise WriteError(target, f"cannot write in this folder ({err.strerror})") from None
        _remove(tmp)
        raise WriteError(target, f"the file could not be written ({err.strerror or err})") from None
    except BaseException:
        if tmp is not None:
            _remove(tmp)
        raise


def _mode_for(target: Path) -> int:
    """The permission bits of the file being replaced, or the usual ones for a new file."""
    try:
        return stat.S_IMODE(os.stat(target).st_mode)
    except OSError:
        return 0o666 & ~_UMASK


def _remove(path: Path) -> None:
    with signals_held(), contextlib.suppress(OSError):
        path.unlink()


def ensure_not_source(target: str | os.PathLike, source: str | os.PathLike | None) -> None:
    """Refuse to write over the file the data was read from."""
    if source is None:
        return
    t, s = Path(target), Path(source)
    same = t.resolve() == s.resolve()
    if not same and t.exists() and s.exists():
        same = os.path.samefile(t, s)
    if same:
        raise WriteError(
            target,
            "this is the file the data was read from; "
            "choose another name so the original stays as it is",
        )
