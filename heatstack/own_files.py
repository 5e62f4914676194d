"""Which files heatstack wrote, so that the command line never replaces one it did not.

A file counts as heatstack's own when its content says so: a results file (HDF5 whose root
``format`` attribute is heatstack's), a figure (PNG whose ``Software`` text, or SVG whose
creator, names heatstack — :data:`FIGURE_SOFTWARE`), an HTML report (its ``generator``
meta tag, :data:`HTML_GENERATOR`) or a text report (the caution of every report,
:data:`heatstack.report.CAUTION`, within its first lines). Anything else already at a
target is "foreign": :func:`check_replaceable` refuses it, and
:func:`replacing_own_files_only` makes every atomic write (:mod:`heatstack.atomic`) inside
it refuse it too, unless ``force`` is given.
"""

from __future__ import annotations

import contextlib
from collections.abc import Iterator
from pathlib import Path

from . import __version__
from .atomic import refuse_replacing
from .errors import ResultFileError
from .report import CAUTION
from .resultformat import FORMAT_NAME

__all__ = [
    "FIGURE_SOFTWARE",
    "HTML_GENERATOR",
    "check_replaceable",
    "is_own_file",
    "replacing_own_files_only",
]

#: The ``Software`` text of a PNG figure and the creator of an SVG figure heatstack draws.
FIGURE_SOFTWARE = f"heatstack {__version__}"
#: The ``<meta name="generator">`` tag heatstack's HTML reports carry in their head.
HTML_GENERATOR = f'<meta name="generator" content="heatstack {__version__}">'

_HEAD_BYTES = 65536
_HDF5_SIGNATURE = b"\x89HDF\r\n\x1a\n"
_PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"


def _is_own_results_file(path: Path) -> bool:
    import h5py

    try:
        with h5py.File(path, "r") as h5:
            name = h5.attrs.get("format")
    except Exception:  # a damaged HDF5 file of any kind is not recognisably ours  # noqa: BLE001
        return False
    if isinstance(name, bytes):
        name = name.decode("utf-8", "replace")
    return name == FORMAT_NAME


def is_own_file(path: str | Path) -> bool:
    """Whether the file at ``path`` is one heatstack wrote (results file, figure or report).

    A missing or unreadable file, a folder, or anything else is not.

    Parameters
    ----------
    path : str or Path
        The file to look at (only its first 64 KiB are read, and for an HDF5 file its root
        ``format`` attribute).

    Returns
    -------
    bool
        True if its content marks it as heatstack's.
    """
    path = Path(path)
    try:
        with open(path, "rb") as handle:
            head = handle.read(_HEAD_BYTES)
    except (OSError, ValueError):
        return False
    if head.startswith(_HDF5_SIGNATURE):
        return _is_own_results_file(path)
    if head.startswith(_PNG_SIGNATURE):
        return b"tEXtSoftware\x00heatstack " in head
    text = head.decode("utf-8", "replace")
    if "<svg" in text[:4096]:
        return "<dc:title>heatstack " in text
    if '<meta name="generator" content="heatstack ' in text:
        return True
    return CAUTION[:60] in text[:4096]


def check_replaceable(path: str | Path, what: str = "file") -> None:
    """Raise ResultFileError if a file is at ``path`` that heatstack did not write.

    Parameters
    ----------
    path : str or Path
        A file about to be written (a symbolic link counts as the file it points to).
    what : str
        What the file is, for the message ("results file", "figure file").

    Raises
    ------
    ResultFileError
        Naming the file and the way out (``--force``, another name or ``--out``).
    """
    path = Path(path)
    if path.exists() and not path.is_dir() and not is_own_file(path):
        shown = str(path)
        shown = shown if len(shown) <= 80 else "..." + shown[-77:]
        raise ResultFileError(
            f"{what} {shown!r}: a file heatstack did not write is already there; it is left alone "
            "(choose another name or --out folder, or give --force to replace it)"
        )


@contextlib.contextmanager
def replacing_own_files_only(force: bool = False) -> Iterator[None]:
    """Within this block, atomic writes refuse to replace a file heatstack did not write.

    With ``force`` the block changes nothing: any file may be replaced.

    Parameters
    ----------
    force : bool, optional
        Allow every file to be replaced (``--force``).

    Yields
    ------
    None
        The block runs with the check (:func:`check_replaceable`) in force, or without it if
        ``force``.

    Raises
    ------
    ResultFileError
        From an atomic write inside the block whose target is a file heatstack did not write
        (raised by :func:`check_replaceable`).
    """
    if force:
        yield
        return
    with refuse_replacing(check_replaceable):
        yield
