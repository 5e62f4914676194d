"""How the command line ends on an error: one line, an exit code, never a traceback.

:func:`exit_code_and_line` maps every exception to its exit code (2 bad input, 1 failed
computation or internal error) and the line printed; an unexpected error's traceback is saved
to a file (:func:`save_traceback`) named in that line. :func:`catch_termination` turns SIGTERM
and SIGHUP into exits Python sees, so temporary files are removed on the way out.
"""

from __future__ import annotations

import os
import sys
from collections.abc import Callable
from pathlib import Path

from . import __version__
from .errors import HeatstackError, InputError, ResultFileError

__all__ = ["MESSAGE_LIMIT", "catch_termination", "exit_code_and_line", "one_line", "save_traceback"]


#: The longest error message printed [characters]: a message quoting a huge input is cut.
MESSAGE_LIMIT = 600


def one_line(exc: BaseException) -> str:
    """The message of ``exc``, cut to :data:`MESSAGE_LIMIT` characters.

    Parameters
    ----------
    exc : BaseException
        The error.

    Returns
    -------
    str
        Its text (its class name if the text is empty) on one line, line breaks and runs of
        white space made single spaces; a longer text is cut and ends by saying how many
        characters are not shown.
    """
    text = " ".join((str(exc) or type(exc).__name__).split())  # one line: a quoted array may span several
    if len(text) > MESSAGE_LIMIT:
        text = f"{text[: MESSAGE_LIMIT - 60]} ... ({len(text) - MESSAGE_LIMIT + 60} characters not shown)"
    return text


def save_traceback(exc: BaseException) -> Path | None:
    """Write the traceback of an unexpected error to a new file in the temporary folder; its path.

    The file (``heatstack-traceback-*.txt``) starts with the heatstack version, the UTC time
    and the command line.

    Parameters
    ----------
    exc : BaseException
        The error, with its traceback.

    Returns
    -------
    Path or None
        The file written, or None if it could not be written.
    """
    import tempfile
    import time
    import traceback

    text = f"heatstack {__version__}, {time.strftime('%Y-%m-%dT%H:%M:%SZ', time.gmtime())}\n"
    text += f"command: heatstack {' '.join(sys.argv[1:])[:2000]}\n\n"
    text += "".join(traceback.format_exception(type(exc), exc, exc.__traceback__))
    try:
        handle, name = tempfile.mkstemp(prefix="heatstack-traceback-", suffix=".txt")
        with os.fdopen(handle, "w", encoding="utf-8") as out:
            out.write(text)
    except OSError:
        return None
    return Path(name)


def catch_termination() -> Callable[[], None]:
    """Make SIGTERM and SIGHUP exits Python sees (SystemExit), so temporary files are removed.

    Only a signal still at its default handler is taken over; the exit status is then 128
    plus the signal number. Called outside the main thread, this changes nothing. A
    process forked from this one (a local study worker) keeps the default: it dies at once,
    as before.

    Returns
    -------
    callable
        ``restore()``, taking no arguments, which puts the previous handlers back.
    """
    import signal
    import threading

    if threading.current_thread() is not threading.main_thread():
        return lambda: None
    owner = os.getpid()

    def on_terminate(signum, frame) -> None:
        if os.getpid() != owner:
            signal.signal(signum, signal.SIG_DFL)
            os.kill(os.getpid(), signum)
            return
        raise SystemExit(128 + signum)

    previous = {}
    for name in ("SIGTERM", "SIGHUP"):
        number = getattr(signal, name, None)
        if number is not None and signal.getsignal(number) in (signal.SIG_DFL, None):
            previous[number] = signal.signal(number, on_terminate)

    def restore() -> None:
        for number, handler in previous.items():
            signal.signal(number, handler)

    return restore


def exit_code_and_line(exc: BaseException) -> tuple[int, str]:
    """The exit code and the one line printed for an exception that reached the command line.

    Bad input (InputError, ResultFileError, an input nested too deeply, a number too large,
    text that is not valid, a null byte in a path, an operating-system error) gives 2; a
    failed computation (any other heatstack error, out of memory, a matrix the sparse solver
    refuses) gives 1. Any other exception is an internal error (1): its traceback is saved
    with :func:`save_traceback` and the line names the file.

    Parameters
    ----------
    exc : BaseException
        The exception.

    Returns
    -------
    code : int
        The exit code, 1 or 2.
    line : str
        The line to print, starting ``heatstack: error:``, ``heatstack: failed:`` or
        ``heatstack: internal error:``.
    """
    if isinstance(exc, InputError | ResultFileError):
        return 2, f"heatstack: error: {one_line(exc)}"
    if isinstance(exc, HeatstackError):
        return 1, f"heatstack: failed: {one_line(exc)}"
    if isinstance(exc, RecursionError):
        return 2, "heatstack: error: an input is nested too deeply to read"
    if isinstance(exc, MemoryError):
        return 1, "heatstack: failed: out of memory; an input size (cells, cases, snapshots) is too large"
    if isinstance(exc, OverflowError):
        return 2, f"heatstack: error: a number in the input is too large ({one_line(exc)[:80]})"
    if isinstance(exc, SystemError) and "gstrf" in str(exc):
        return 1, "heatstack: failed: the sparse linear solver refused the matrix (the grid is too fine or too large)"
    if isinstance(exc, UnicodeError):
        return 2, f"heatstack: error: a file or name is not valid text ({one_line(exc)[:80]})"
    if isinstance(exc, ValueError) and "null byte" in str(exc):
        return 2, "heatstack: error: a path holds a null byte"
    if isinstance(exc, OSError):
        where = f" {str(exc.filename)[:80]!r}" if getattr(exc, "filename", None) else ""
        return 2, f"heatstack: error: cannot use{where}: {exc.strerror or one_line(exc)[:80]}"
    saved = save_traceback(exc)
    where = f"; the traceback is saved in {saved}" if saved else ""
    return 1, (f"heatstack: internal error: {type(exc).__name__}: {one_line(exc)[:120]} - please report it{where}")
