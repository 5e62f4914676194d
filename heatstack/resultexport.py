"""A Result exported as CSV files for spreadsheets: the histories and the energy ledger, units in the header.

Files are written atomically (:mod:`heatstack.atomic`). An export never overwrites a file it
did not write: the folder's ``heatstack-export.json`` records a SHA-256 digest of every file
an export wrote, and a file already in the folder is replaced only when the record names it
with its present content. Anything else there (a user's own ``histories.csv``, or one edited
since) stops the export before a single file is written.
"""

from __future__ import annotations

import csv
import hashlib
import io
import json
from collections.abc import Iterable
from pathlib import Path

from .atomic import os_reason, write_file_atomically
from .errors import ResultFileError
from .result import Result
from .resulttables import LEDGER_HEADER, history_columns, history_rows, ledger_rows
from .units import from_si

__all__ = ["HISTORIES_FILE", "LEDGER_FILE", "RECORD_FILE", "export_csv"]

HISTORIES_FILE = "histories.csv"
"""The wide table of every probe reading, local probe temperature and series."""
LEDGER_FILE = "ledger.csv"
"""The cumulative energy accounts and the closure error."""
RECORD_FILE = "heatstack-export.json"
"""The record of what the exports into a folder wrote, with each file's digest."""

_WRITER = "heatstack export"


def _csv_text(header: Iterable[str], rows: Iterable[list[float]]) -> str:
    buffer = io.StringIO()
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(list(header))
    for row in rows:
        writer.writerow([repr(value) for value in row])
    return buffer.getvalue()


def _digest(data: bytes) -> str:
    return hashlib.sha256(data).hexdigest()


def _read_record(folder: Path) -> dict[str, list[str]]:
    """The digests an earlier export recorded, per file name; {} without a record."""
    path = folder / RECORD_FILE
    if not path.exists():
        return {}
    try:
        record = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, ValueError, UnicodeDecodeError):
        record = None
    if not isinstance(record, dict) or record.get("written_by") != _WRITER or not isinstance(record.get("files"), dict):
        raise ResultFileError(
            f"export folder {str(folder)!r} holds a {RECORD_FILE!r} that heatstack export did not write; "
            "choose another folder"
        )
    return {name: list(digests) for name, digests in record["files"].items() if isinstance(digests, list)}


def _check_replaceable(folder: Path, name: str, record: dict[str, list[str]]) -> None:
    path = folder / name
    if not path.exists() and not path.is_symlink():
        return
    if path.is_symlink() or not path.is_file():
        raise ResultFileError(f"export folder {str(folder)!r}: {name!r} exists and is not a plain file; not replaced")
    try:
        present = _digest(path.read_bytes())
    except OSError as exc:
        raise ResultFileError(f"export folder {str(folder)!r}: {name!r} cannot be read ({os_reason(exc)})") from None
    if present not in record.get(name, ()):
        raise ResultFileError(
            f"export folder {str(folder)!r} already holds {name!r}, which heatstack export did not write "
            "(or which was changed since); move it away or choose another folder"
        )


def _record_text(source: str, files: dict[str, list[str]], caution: str) -> str:
    record = {"written_by": _WRITER, "source": source, "caution": caution, "files": files}
    return json.dumps(record, indent=2, ensure_ascii=False) + "\n"


def export_csv(result: Result, folder: str | Path, *, source: str, temperature_unit: str, caution: str) -> list[Path]:
    """Write the histories and the energy ledger of ``result`` as CSV files into ``folder``.

    Parameters
    ----------
    result : Result
        The run to export.
    folder : str or Path
        The folder to write into; created (with its parents) if missing.
    source : str
        Where the run came from (the results file), kept in the folder's record.
    temperature_unit : str
        Unit of the temperature columns ("K", "degC" or "degF"); named in each header.
    caution : str
        The caution that goes with every output of results, kept in the folder's record.

    Returns
    -------
    list of Path
        The files written: the histories, the ledger and the folder's record.

    Raises
    ------
    ResultFileError
        If ``folder`` is not a folder or cannot be created or written, or already holds
        one of the files that an export did not write; then nothing is written.
    """
    folder = Path(folder)
    if folder.exists() and not folder.is_dir():
        raise ResultFileError(f"export folder {str(folder)!r} is not a folder")
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise ResultFileError(f"export folder {str(folder)!r} cannot be created ({os_reason(exc)})") from None
    record = _read_record(folder)
    for name in (HISTORIES_FILE, LEDGER_FILE):
        _check_replaceable(folder, name, record)

    header = ["time [s]"]
    for column in history_columns(result):
        label = column.name if column.kind == "series" else f"{column.name} {column.kind}"
        header.append(f"{label} [{temperature_unit}]")
    contents = {
        HISTORIES_FILE: _csv_text(header, history_rows(result, lambda k: from_si(k, "temperature", temperature_unit))),
        LEDGER_FILE: _csv_text(LEDGER_HEADER, ledger_rows(result)),
    }
    data = {name: text.encode("utf-8") for name, text in contents.items()}
    new = {name: [_digest(blob)] for name, blob in data.items()}
    # first record both the old and the new digests, so that an export stopped half-way is replaced next time
    pending = {name: [*record.get(name, []), *new[name]] for name in new}
    written = []
    for name, text in ((RECORD_FILE, _record_text(source, pending, caution)), *contents.items()):
        blob = text.encode("utf-8")
        written.append(write_file_atomically(folder / name, lambda temp, blob=blob: temp.write_bytes(blob), "export"))
    write_file_atomically(
        folder / RECORD_FILE, lambda temp: temp.write_text(_record_text(source, new, caution), "utf-8"), "export"
    )
    return [*written[1:], written[0]]
