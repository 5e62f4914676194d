"""The plan of a ``heatstack run``: each case file loaded, its results file checked before anything runs.

Two cases of one invocation never write one results file, and a case never silently overwrites the
results file another case file wrote (the results file keeps the name of the case file that wrote it).
The output folder a verb is given is made here (:func:`make_folder`).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

from .errors import HeatstackError, InputError, ResultFileError

if TYPE_CHECKING:
    from .case import Case

__all__ = ["PlannedRun", "planned_runs", "writer_of", "make_folder"]


def writer_of(results: Path) -> str | None:
    """The name of the case file that wrote an existing results file.

    Parameters
    ----------
    results : Path
        A results file, which may not exist.

    Returns
    -------
    str or None
        The stored case file name; None if the file does not exist, cannot be read or keeps no name.
    """
    from .resultread import read_resolved_inputs

    if not results.is_file():
        return None
    try:
        name = read_resolved_inputs(results).get("case_file")
    except HeatstackError:
        return None
    return name if isinstance(name, str) else None


@dataclass(frozen=True)
class PlannedRun:
    """One case of a ``run``: its file, the loaded case, its results file and its output folder.

    Attributes
    ----------
    case_path : pathlib.Path
        The case file.
    case : Case
        The case as read and checked.
    target : pathlib.Path
        The results file it will write.
    folder : pathlib.Path
        The output folder for its results, figures and reports.
    """

    case_path: Path
    case: Case
    target: Path
    folder: Path


def planned_runs(case_paths: Sequence[Path], out: Path | None) -> list[PlannedRun]:
    """The runs of the case files, checked before anything runs.

    Parameters
    ----------
    case_paths : sequence of Path
        The case files, in the order they will run.
    out : Path or None
        The output folder of every case; None: each case's own folder.

    Returns
    -------
    list of PlannedRun

    Raises
    ------
    InputError
        Two cases writing one results file, or a case about to overwrite the results file another
        case file wrote: the message names both cases and the file; nothing is written.
    HeatstackError
        A case file that does not load, or a results file that cannot be written.
    """
    from .case import load_case
    from .resultfile import check_writable

    planned, seen = [], {}
    for case_path in case_paths:
        case = load_case(case_path)
        folder = out if out is not None else case_path.resolve().parent
        target = check_writable(folder / case.output.file)
        if target in seen:
            raise InputError(
                f"cases {str(seen[target])!r} and {str(case_path)!r} both write the results file {str(target)!r}: "
                "give each its own [output] file or run them into different --out folders"
            )
        seen[target] = case_path
        writer = writer_of(target)
        if writer is not None and writer != case_path.name:
            raise InputError(
                f"{str(target)!r} holds the results of case {writer!r}; case {str(case_path)!r} would overwrite "
                "them: give it its own [output] file or --out folder, or delete the old file first"
            )
        planned.append(PlannedRun(case_path, case, target, folder))
    return planned


def make_folder(folder: Path, what: str) -> Path:
    """Create ``folder`` (and its parents) for ``what`` (an output folder named on the command line).

    Parameters
    ----------
    folder : Path
        The folder.
    what : str
        What the folder is for, named in the error (e.g. ``"--out folder"``).

    Returns
    -------
    Path
        ``folder``, which now exists.

    Raises
    ------
    ResultFileError
        Naming the folder if it is a file or cannot be created.
    """
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except (FileExistsError, NotADirectoryError) as exc:
        raise ResultFileError(f"{what} {str(folder)!r} is a file, not a folder") from exc
    except OSError as exc:
        raise ResultFileError(f"{what} {str(folder)!r} cannot be created: {exc.strerror}") from exc
    return folder
