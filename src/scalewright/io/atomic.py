"""Write-then-rename, so that a failed or cancelled write never leaves a partial file.

The temporary file sits in the target folder, because ``os.replace`` is only atomic within
one file system (POSIX rename(2); Windows MoveFileEx with MOVEFILE_REPLACE_EXISTING).
"""

from __future__ import annotations

import contextlib
import os
import stat
import tempfile
from collections.abc import Iterator
from pathlib import Path

from ..errors import WriteError

# Read once at import: changing the umask later to read it would race with other threads.
_UMASK = os.umask(0o022)
os.umask(_UMASK)


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
    try:
        suffix = ".part" + (target.suffix if keep_suffix else "")
        fd, name = tempfile.mkstemp(prefix=f".{target.name}.", suffix=suffix, dir=folder)
        os.close(fd)
    except OSError as err:
        raise WriteError(target, f"cannot write in this folder ({err.strerror})") from None
    tmp = Path(name)
    try:
        yield tmp
        os.chmod(tmp, _mode_for(target))
        os.replace(tmp, target)
    except OSError as err:
        _remove(tmp)
        raise WriteError(target, f"the file could not be written ({err.strerror or err})") from None
    except BaseException:
        _remove(tmp)
        raise


def _mode_for(target: Path) -> int:
    """The permission bits of the file being replaced, or the usual ones for a new file."""
    try:
        return stat.S_IMODE(os.stat(target).st_mode)
    except OSError:
        return 0o666 & ~_UMASK


def _remove(path: Path) -> None:
    with contextlib.suppress(OSError):
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
