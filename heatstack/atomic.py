"""Writing a file safely: a new temporary file beside the target, synced to disk, moved into place.

Whatever happens, the target is afterwards either the complete new file or exactly what was
there before (a file, or nothing). The file is written under a unique hidden name in the
target's own folder (so the final move never crosses a file system), synced to disk, given
the permissions of the file it replaces, and moved over the target in one step with
:func:`os.replace`; the folder is then synced so that the move itself is durable where the
platform allows it.

:func:`write_file_atomically` takes these steps for every writer (results files, figures,
reports, the study store's files). :func:`as_path` and :func:`os_reason` serve the results
file readers as well.

A temporary file left behind by a process that was killed during its write (its name is
``.NAME.<12 hex digits>.tmp``) is removed by the next write into the same folder, if it is
older than the current process (:func:`remove_stale_temp_files`). Inside
:func:`refuse_replacing` every write first asks a check whether the file already at the
target may be replaced (the command line uses it to leave alone files heatstack did not
write, :mod:`heatstack.own_files`).
"""

from __future__ import annotations

import contextlib
import contextvars
import os
import re
import secrets
import stat
import time
from collections.abc import Callable, Iterator
from pathlib import Path
from typing import Any

from .errors import ResultFileError

__all__ = [
    "as_path",
    "fsync_folder",
    "move_into_place",
    "new_temp_file",
    "os_reason",
    "refuse_replacing",
    "remove_stale_temp_files",
    "write_file_atomically",
    "write_target",
]


#: When this process started [s since the epoch]: temporary files older than this are stale.
_STARTED = time.time()
_TEMP_NAME = re.compile(r"\..+\.[0-9a-f]{12}\.tmp")
_REPLACE_CHECK: contextvars.ContextVar[Callable[[Path, str], None] | None] = contextvars.ContextVar(
    "heatstack_replace_check", default=None
)


@contextlib.contextmanager
def refuse_replacing(check: Callable[[Path, str], None]) -> Iterator[None]:
    """Within this block, :func:`write_file_atomically` calls ``check(target, what)`` first.

    ``check`` raises (a ResultFileError) if the file already at ``target`` must not be
    replaced; the write then leaves everything as it was. The check holds for the current
    context only and the one in force before is put back when the block ends, also on an error.

    Parameters
    ----------
    check : callable
        ``check(target, what)``, called before every atomic write with the file about to be
        replaced (a symbolic link already followed to its target) and what it is ("report
        file"); it returns nothing and raises to refuse the write.

    Yields
    ------
    None
        The block runs with ``check`` in force.

    Raises
    ------
    ResultFileError
        From a write inside the block whose ``check`` refuses the file already at its target
        (raised by ``check`` itself, not by this function).
    """
    token = _REPLACE_CHECK.set(check)
    try:
        yield
    finally:
        _REPLACE_CHECK.reset(token)


def remove_stale_temp_files(folder: Path, older_than: float | None = None) -> list[Path]:
    """Remove the temporary files of heatstack's naming pattern in ``folder`` older than ``older_than``.

    Parameters
    ----------
    folder : Path
        The folder to tidy (not its sub-folders).
    older_than : float, optional
        Modification time [s since the epoch]; by default the start of this process, so
        a write still in progress in another, later process is never touched.

    Returns
    -------
    list of Path
        The files removed (best effort: a file that cannot be removed is skipped).
    """
    limit = _STARTED if older_than is None else older_than
    removed = []
    try:
        entries = list(os.scandir(folder))
    except OSError:
        return removed
    for entry in entries:
        if not _TEMP_NAME.fullmatch(entry.name):
            continue
        try:
            if entry.is_file(follow_symlinks=False) and entry.stat(follow_symlinks=False).st_mtime < limit:
                os.unlink(entry.path)
                removed.append(Path(entry.path))
        except OSError:
            continue
    return removed


def as_path(path: Any) -> Path:
    """``path`` as a :class:`Path`, or a ResultFileError for anything that is not a path.

    Parameters
    ----------
    path : object
        A non-empty str or os.PathLike.

    Returns
    -------
    Path
        The path.

    Raises
    ------
    ResultFileError
        If ``path`` is not a non-empty str or path.
    """
    if isinstance(path, str | os.PathLike):
        text = os.fspath(path)
        if isinstance(text, str) and text and "\0" not in text:
            return Path(text)
    shown = repr(path)
    shown = shown if len(shown) <= 80 else shown[:77] + "..."
    raise ResultFileError(f"a results file path must be a non-empty str or Path without null bytes, got {shown}")


def write_target(path: Path) -> Path:
    """The file a write to ``path`` replaces: symbolic links are followed to their target.

    Parameters
    ----------
    path : Path
        The path written to.

    Returns
    -------
    Path
        The link's resolved target, or ``path`` itself.
    """
    if path.is_symlink():
        return Path(os.path.realpath(path))
    return path


def os_reason(exc: OSError) -> str:
    """The short reason an operating-system call failed ("Permission denied"), for a message.

    Parameters
    ----------
    exc : OSError
        The error.

    Returns
    -------
    str
        Its ``strerror``, else its text, else its class name.
    """
    return exc.strerror or str(exc) or type(exc).__name__


def new_temp_file(folder: Path, stem: str) -> tuple[Path, int]:
    """Create a new, empty, uniquely named hidden file in ``folder``; return it and its descriptor.

    The file is created with mode 0o666 filtered by the umask, as an ordinary new file.

    Parameters
    ----------
    folder : Path
        Folder to create it in.
    stem : str
        Part of the name (``.<stem>.<random>.tmp``).

    Returns
    -------
    path : Path
        The file.
    descriptor : int
        Its open file descriptor (read-write).

    Raises
    ------
    FileExistsError
        If no free name is found in 100 tries.
    """
    flags = os.O_RDWR | os.O_CREAT | os.O_EXCL | getattr(os, "O_BINARY", 0)
    for _ in range(100):
        candidate = folder / f".{stem}.{secrets.token_hex(6)}.tmp"
        try:
            return candidate, os.open(candidate, flags, 0o666)
        except FileExistsError:
            continue
    raise FileExistsError(f"could not find a free temporary file name in {folder}")


def move_into_place(temp: Path, target: Path) -> None:
    """Sync the finished file ``temp`` to disk, then move it over ``target`` in one step.

    ``temp`` first takes the permission bits of a file already at ``target`` (best effort),
    so a replaced file keeps its mode; a new file keeps the mode ``temp`` was created with.

    Parameters
    ----------
    temp : Path
        A closed, completely written file in the folder of ``target``.
    target : Path
        The file to create or replace.

    Raises
    ------
    OSError
        If syncing or the move fails; ``target`` is then unchanged, and removing ``temp``
        is left to the caller.
    """
    fd = os.open(temp, os.O_RDWR | getattr(os, "O_BINARY", 0))
    try:
        os.fsync(fd)
    finally:
        os.close(fd)
    with contextlib.suppress(OSError):
        if target.exists():
            os.chmod(temp, stat.S_IMODE(target.stat().st_mode))
    os.replace(temp, target)


def fsync_folder(folder: Path) -> None:
    """Make a rename in ``folder`` durable where the platform allows it (best effort).

    Parameters
    ----------
    folder : Path
        The folder; errors opening or syncing it are ignored.
    """
    if not hasattr(os, "O_DIRECTORY"):
        return
    try:
        fd = os.open(folder, os.O_RDONLY | os.O_DIRECTORY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def write_file_atomically(path: str | os.PathLike, write: Callable[[Path], None], what: str = "file") -> Path:
    """Create or replace ``path`` with what ``write`` puts in a temporary file beside it.

    ``write(temp)`` writes the complete file at ``temp`` (and closes it); the file is then
    synced and moved over ``path`` in one step, so ``path`` is afterwards either the whole
    new file or exactly what was there before. A new file gets the ordinary mode (0o666
    filtered by the umask), a replaced file keeps its mode.

    Parameters
    ----------
    path : str or os.PathLike
        The file to write (a symbolic link is followed to its target).
    write : callable
        Writes the file's whole content at the temporary path it is given.
    what : str
        What the file is, for the error message ("figure file", "report file").

    Returns
    -------
    Path
        ``path``.

    Raises
    ------
    ResultFileError
        If the folder refuses the file or the write fails with an operating-system error;
        the message names ``what``, the path and the reason. Other exceptions from
        ``write`` pass through. Either way the temporary file is removed.
    """
    given = Path(os.fspath(path))
    target = write_target(given)
    check = _REPLACE_CHECK.get()
    if check is not None:
        check(target, what)
    try:
        temp, fd = new_temp_file(target.parent, target.name)
        os.close(fd)
    except OSError as exc:
        raise ResultFileError(f"{what} {str(given)!r} cannot be written: {os_reason(exc)}") from None
    try:
        write(temp)
        move_into_place(temp, target)
    except BaseException as exc:
        with contextlib.suppress(OSError):
            temp.unlink()
        if isinstance(exc, OSError):
            raise ResultFileError(
                f"{what} {str(given)!r} cannot be written: {os_reason(exc)}; any file already there is unchanged"
            ) from None
        raise
    fsync_folder(target.parent)
    remove_stale_temp_files(target.parent)
    return given
