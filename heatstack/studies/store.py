"""The on-disk store of a study: one folder, kill-safe, resumable.

Layout (our own)::

    <store>/
        manifest.h5            the description (JSON), its fingerprint, the seed and the
                               whole sample table, written once at the start
        cases/
            case-000000.h5     one small file per finished case: status, error text,
            case-000001.h5     warnings, wall time, worker, and the output names/values
            ...
        lock                   held (flock) while a study writes to the store

Every file is written to a temporary name in the same folder and moved into place with
:func:`os.replace`, so a study killed at any moment leaves only whole files (and perhaps
a ``.tmp`` file, removed on the next run). Running the same study again skips the cases
already stored; a store whose manifest describes a different study is refused. A study
that only raises (or lowers) ``cases`` of a ``random`` or ``sobol`` sampling has the same
growth key as the stored one and the same first cases: the manifest is rewritten for the
new number of cases and every finished case is reused (case files beyond a lowered count
stay on disk, ignored, for when the count is raised again).

The files are plain HDF5 (h5py): ``manifest.h5`` has attributes ``format``,
``format_version``, ``fingerprint``, ``description`` (JSON), ``base_case_text``,
``n_cases``, ``seed``, ``method``, ``cell_size_m``, ``target_change_K``, ``accuracy_K``,
``parameters`` (JSON: name, paths, dimension, unit), ``growth_key``, ``heatstack_version``,
``created_utc`` and a dataset ``samples`` (cases x parameters, SI). A case file has
attributes ``index``, ``status`` (``ok`` or ``failed``), ``error``, ``warnings``,
``wall_time_s``, ``worker``, ``model_reused`` and datasets ``names`` and ``values`` (SI).
"""

from __future__ import annotations

import contextlib
import datetime
import difflib
import json
import logging
import os
from collections.abc import Iterator, Mapping
from pathlib import Path
from typing import Any

import h5py
import numpy as np

from ..atomic import write_file_atomically
from ..errors import InputError, ResultFileError
from .paths import format_path
from .table import StudyTable, column_unit

__all__ = ["StudyStore", "StoreSession", "load_table", "FORMAT", "FORMAT_VERSION"]

log = logging.getLogger(__name__)

FORMAT = "heatstack-study-store"
FORMAT_VERSION = 1
MANIFEST = "manifest.h5"
CASES = "cases"
LOCK = "lock"


def _flatten(data: Any, prefix: str = "") -> dict[str, Any]:
    if isinstance(data, Mapping):
        out: dict[str, Any] = {}
        for key, value in data.items():
            out.update(_flatten(value, f"{prefix}.{key}" if prefix else str(key)))
        return out
    if isinstance(data, list):
        out = {}
        for k, value in enumerate(data):
            out.update(_flatten(value, f"{prefix}[{k}]"))
        return out if data else {prefix: []}
    return {prefix: data}


def _differences(stored: Mapping, current: Mapping, limit: int = 3) -> str:
    a, b = _flatten(stored), _flatten(current)
    keys = [k for k in dict.fromkeys([*a, *b]) if a.get(k, "<absent>") != b.get(k, "<absent>")]
    parts = [f"{k}: store {a.get(k, '<absent>')!r}, now {b.get(k, '<absent>')!r}" for k in keys[:limit]]
    more = f" and {len(keys) - limit} more" if len(keys) > limit else ""
    return "; ".join(parts) + more


def _write_atomic(path: Path, fill) -> None:
    """Write an HDF5 file by ``fill(h5)`` through a temporary file moved into place."""

    def write(temp: Path) -> None:
        with h5py.File(temp, "w") as f:
            fill(f)

    write_file_atomically(path, write, "study store file")


#: The study's overrides of every case's settings, as the manifest names them (key, SI unit).
_OVERRIDES = (("cell_size", "m"), ("accuracy", "K"), ("target_change", "K"))


def _override(manifest: Mapping, attribute: str) -> float | None:
    """A stored override [SI], None when the study left each case its own (stored as NaN or absent)."""
    value = manifest.get(attribute)
    return None if value is None or not np.isfinite(float(value)) else float(value)


def _text(value: Any) -> str:
    return value.decode("utf-8") if isinstance(value, bytes) else str(value)


class StoreSession:
    """An open store, locked, with its manifest checked: write case files.

    Parameters
    ----------
    store : StudyStore
        The store.
    n_cases : int
        Number of cases of the study.
    """

    def __init__(self, store: StudyStore, n_cases: int):
        self.store, self.n_cases = store, n_cases

    def todo(self, retry_failed: bool = False) -> list[int]:
        """Case numbers not yet in the store (and the failed ones, if ``retry_failed``).

        Parameters
        ----------
        retry_failed : bool, optional
            Also return the cases that failed.

        Returns
        -------
        list of int
            Case numbers in increasing order.
        """
        done = self.store.finished()
        return [k for k in range(self.n_cases) if k not in done or (retry_failed and done[k] != "ok")]

    def write_case(self, outcome: Any) -> Path:
        """Write one case's summary atomically; return its path.

        Parameters
        ----------
        outcome : CaseOutcome
            The case's outcome (index, status, outputs, texts, wall time [s], worker).

        Returns
        -------
        Path
            The case file written.

        Raises
        ------
        ResultFileError
            If the case file cannot be written.
        """
        path = self.store.case_path(outcome.index)

        def fill(f: h5py.File) -> None:
            f.attrs["format"] = FORMAT
            f.attrs["index"] = int(outcome.index)
            f.attrs["status"] = outcome.status
            f.attrs["error"] = outcome.error
            f.attrs["warnings"] = outcome.warnings
            f.attrs["wall_time_s"] = float(outcome.wall_time)
            f.attrs["worker"] = outcome.worker
            f.attrs["model_reused"] = bool(outcome.model_reused)
            f.create_dataset("names", data=np.array(outcome.names, dtype=object), dtype=h5py.string_dtype())
            f.create_dataset("values", data=np.asarray(outcome.values, dtype=float))

        try:
            _write_atomic(path, fill)
        except (OSError, ResultFileError) as exc:
            raise ResultFileError(
                f"store {str(self.store.root)!r}: case {outcome.index} cannot be written ({exc})"
            ) from None
        return path


class StudyStore:
    """A study store folder (see the module notes for its layout).

    Parameters
    ----------
    root : str or path
    """

    def __init__(self, root: str | os.PathLike):
        self.root = Path(root)

    @property
    def manifest_path(self) -> Path:
        """``<root>/manifest.h5``"""
        return self.root / MANIFEST

    @property
    def cases_dir(self) -> Path:
        """``<root>/cases``"""
        return self.root / CASES

    def case_path(self, index: int) -> Path:
        """File of case ``index``.

        Parameters
        ----------
        index : int
            Case number.

        Returns
        -------
        Path
            ``cases/case-NNNNNN.h5`` under the store.
        """
        return self.cases_dir / f"case-{int(index):06d}.h5"

    def exists(self) -> bool:
        """Whether the folder holds a manifest.

        Returns
        -------
        bool
            True when the manifest file exists.
        """
        return self.manifest_path.is_file()

    # ---------------------------------------------------------------- checks
    def preflight(self) -> None:
        """Check, without writing anything, that the store can be created or reused.

        Raises
        ------
        InputError
            If the path is a file, lies under a file, is a non-empty folder that is not a
            store, or its folder is not writable.
        """
        root = self.root
        where = f"store {str(root)!r}"
        if root.exists():
            if not root.is_dir():
                raise InputError(f"{where}: exists and is not a folder")
            if not self.exists() and not self._is_skeleton():
                raise InputError(
                    f"{where}: a non-empty folder that is not a study store (no {MANIFEST}); choose another"
                )
            if not os.access(root, os.W_OK | os.X_OK):
                raise InputError(f"{where}: the folder is not writable")
            return
        ancestor = root.parent
        while not ancestor.exists() and ancestor != ancestor.parent:
            ancestor = ancestor.parent
        if not ancestor.is_dir():
            raise InputError(f"{where}: cannot be created: {str(ancestor)!r} is not a folder")
        if not os.access(ancestor, os.W_OK | os.X_OK):
            raise InputError(f"{where}: cannot be created: {str(ancestor)!r} is not writable")

    def _is_skeleton(self) -> bool:
        """Whether the folder is empty or holds only what a study writes before its manifest.

        (A study killed between creating the folder and writing the manifest leaves an
        empty ``cases`` folder, the lock file and perhaps a temporary file.)
        """
        for entry in self.root.iterdir():
            if entry.name == LOCK and entry.is_file():
                continue
            if entry.name.startswith(".") and entry.name.endswith(".tmp"):
                continue
            if entry.name == CASES and entry.is_dir() and not any(entry.glob("case-*.h5")):
                continue
            return False
        return True

    # ---------------------------------------------------------------- sessions
    @contextlib.contextmanager
    def session(self, plan: Any) -> Iterator[StoreSession]:
        """Open the store for writing ``plan``: create it, or check its manifest matches.

        Parameters
        ----------
        plan : StudyPlan
            The study to write.

        Yields
        ------
        StoreSession
            The locked, checked store; the lock is released on leaving.

        Raises
        ------
        InputError
            If the store cannot be created or written, is in use by another running
            study, or holds a different study.
        """
        self.preflight()
        where = f"store {str(self.root)!r}"
        try:
            self.cases_dir.mkdir(parents=True, exist_ok=True)
            lock = open(self.root / LOCK, "a+")  # noqa: SIM115 - held for the whole session
        except OSError as exc:
            raise InputError(f"{where}: cannot be written ({exc})") from None
        try:
            self._lock(lock, where)
            for leftover in self.cases_dir.glob(".*.tmp"):
                leftover.unlink(missing_ok=True)
            for leftover in self.root.glob(".*.tmp"):
                leftover.unlink(missing_ok=True)
            if self.exists():
                self._check(plan)
            else:
                try:
                    self._write_manifest(plan)
                except OSError as exc:
                    raise InputError(f"{where}: cannot be written ({exc})") from None
            yield StoreSession(self, plan.n_cases)
        finally:
            lock.close()

    def _lock(self, handle: Any, where: str) -> None:
        try:
            import fcntl
        except ImportError:  # not POSIX: no lock
            return
        try:
            fcntl.flock(handle.fileno(), fcntl.LOCK_EX | fcntl.LOCK_NB)
        except OSError:
            raise InputError(f"{where}: in use by another running study") from None

    def _write_manifest(self, plan: Any) -> None:
        from .. import __version__

        sampling = plan.study.sampling
        parameters = [
            {
                "name": p.name,
                "paths": [_path_text(t) for t in p.paths],
                "dimension": p.dimension,
                "unit": p.unit,
                "kind": p.kind,
            }
            for p in plan.parameters
        ]

        def fill(f: h5py.File) -> None:
            f.attrs["format"] = FORMAT
            f.attrs["format_version"] = FORMAT_VERSION
            f.attrs["fingerprint"] = plan.fingerprint
            f.attrs["growth_key"] = plan.growth_key
            f.attrs["title"] = plan.study.title
            f.attrs["description"] = json.dumps(plan.description, sort_keys=True)
            f.attrs["base_case_text"] = plan.base_text
            f.attrs["base_case_origin"] = plan.origin
            f.attrs["n_cases"] = int(plan.n_cases)
            f.attrs["method"] = sampling.method
            f.attrs["seed"] = -1 if sampling.seed is None else int(sampling.seed)
            f.attrs["cell_size_m"] = np.nan if plan.cell_size is None else float(plan.cell_size)
            f.attrs["target_change_K"] = np.nan if plan.target_change is None else float(plan.target_change)
            f.attrs["accuracy_K"] = np.nan if plan.accuracy is None else float(plan.accuracy)
            f.attrs["parameters"] = json.dumps(parameters)
            f.attrs["outputs"] = json.dumps(None if plan.outputs is None else list(plan.outputs))
            f.attrs["heatstack_version"] = __version__
            f.attrs["created_utc"] = datetime.datetime.now(datetime.UTC).isoformat(timespec="seconds")
            f.create_dataset("samples", data=np.asarray(plan.samples, dtype=float))

        _write_atomic(self.manifest_path, fill)

    def _check(self, plan: Any) -> None:
        manifest = self.read_manifest()
        where = f"store {str(self.root)!r}"
        grows = False
        if manifest["fingerprint"] != plan.fingerprint:
            grows = bool(plan.growth_key) and manifest.get("growth_key", "") == plan.growth_key
            if not grows:
                diff = _differences(manifest["description"], plan.description)
                if plan.growth_key:  # the number of cases is not the difference: name what is
                    diff = _differences(_without_cases(manifest["description"]), _without_cases(plan.description))
                hint = ""
                if _differences(_without_cases(manifest["description"]), _without_cases(plan.description)) == "":
                    hint = (
                        f" ({plan.study.sampling.method} samples depend on the number of cases, so the study "
                        "cannot grow; sample with method = 'random' or 'sobol' for a study that grows)"
                    )
                raise InputError(
                    f"{where}: holds a different study ({diff or 'the description differs'}){hint}; "
                    "use another store folder, or delete this one to start again"
                )
        stored, drawn = manifest["samples"], plan.samples
        if grows:
            common = min(stored.shape[0], drawn.shape[0])
            if stored.shape[1] != drawn.shape[1] or not np.array_equal(stored[:common], drawn[:common]):
                raise InputError(
                    f"{where}: the samples drawn now differ from those stored (another scipy or numpy version?); "
                    "use another store folder"
                )
            log.info("store %s: the study grows from %d to %d cases", self.root, stored.shape[0], drawn.shape[0])
            try:
                self._write_manifest(plan)
            except OSError as exc:
                raise InputError(f"{where}: cannot be written ({exc})") from None
            return
        if stored.shape != drawn.shape or not np.array_equal(stored, drawn):
            raise InputError(
                f"{where}: the samples drawn now differ from those stored (another scipy or numpy version?); "
                "use another store folder"
            )

    # ---------------------------------------------------------------- reading
    def read_manifest(self) -> dict[str, Any]:
        """The manifest's attributes and sample table.

        Returns
        -------
        dict
            The manifest's attributes (description, parameters and outputs decoded from JSON,
            ``n_cases`` an int) and ``samples``, the sample table.

        Raises
        ------
        ResultFileError
            If the folder holds no readable manifest.
        """
        where = f"store {str(self.root)!r}"
        if not self.exists():
            raise ResultFileError(f"{where}: no {MANIFEST} (not a study store, or never started)")
        try:
            with h5py.File(self.manifest_path, "r") as f:
                if _text(f.attrs.get("format", "")) != FORMAT:
                    raise ResultFileError(f"{where}: {MANIFEST} is not a heatstack study manifest")
                attrs = {k: f.attrs[k] for k in f.attrs}
                samples = f["samples"][()]
        except (OSError, KeyError, TypeError, ValueError) as exc:
            raise ResultFileError(f"{where}: {MANIFEST} cannot be read ({str(exc)[:80]})") from None
        out = {k: (_text(v) if isinstance(v, bytes | str) else v) for k, v in attrs.items()}
        try:
            out["description"] = json.loads(out["description"])
            out["parameters"] = json.loads(out["parameters"])
            out["outputs"] = json.loads(out["outputs"])
            out["n_cases"] = int(out["n_cases"])
        except (KeyError, TypeError, ValueError, OverflowError) as exc:
            raise ResultFileError(
                f"{where}: {MANIFEST} is damaged ({type(exc).__name__}: {str(exc)[:80]}); "
                "start the study in a new store folder"
            ) from None
        out["samples"] = samples
        return out

    def _read_case(self, path: Path) -> dict[str, Any] | None:
        try:
            with h5py.File(path, "r") as f:
                record = {k: f.attrs[k] for k in f.attrs}
                record["names"] = [_text(n) for n in f["names"][()]]
                record["values"] = f["values"][()]
        except (OSError, KeyError, TypeError, ValueError) as exc:
            log.warning("store %s: case file %s cannot be read (%s); it counts as not run", self.root, path.name, exc)
            return None
        return {k: (_text(v) if isinstance(v, bytes | str) else v) for k, v in record.items()}

    def _cases(self) -> Iterator[tuple[int, dict[str, Any]]]:
        if not self.cases_dir.is_dir():
            return
        for path in sorted(self.cases_dir.glob("case-*.h5")):
            record = self._read_case(path)
            if record is not None:
                yield int(record["index"]), record

    def finished(self) -> dict[int, str]:
        """Status (``ok`` or ``failed``) of every case in the store, by case number.

        Returns
        -------
        dict of int to str
            Status by case number; unreadable case files are left out (logged) to be run again.
        """
        out = {}
        if not self.cases_dir.is_dir():
            return out
        for path in self.cases_dir.glob("case-*.h5"):
            try:
                with h5py.File(path, "r") as f:
                    out[int(f.attrs["index"])] = _text(f.attrs["status"])
            except (OSError, KeyError, TypeError, ValueError):
                log.warning("store %s: case file %s cannot be read; it will be run again", self.root, path.name)
        return out

    def table(self) -> StudyTable:
        """The results table in case order (pending cases have status ``pending`` and NaN outputs).

        Returns
        -------
        StudyTable
            One row per case: parameters, status, error, outputs [SI], warnings and diagnostics.

        Raises
        ------
        ResultFileError
            If the folder holds no readable manifest.
        """
        manifest = self.read_manifest()
        n = manifest["n_cases"]
        samples = manifest["samples"]
        parameters = manifest["parameters"]
        records = dict(self._cases())
        outputs: list[str] = []
        seen: set[str] = set()
        for index in sorted(records):
            for name in records[index]["names"]:
                if name not in seen:
                    seen.add(name)
                    outputs.append(name)
        position = {name: k for k, name in enumerate(outputs)}
        values = np.full((n, len(outputs)), np.nan)
        status = np.full(n, "pending", dtype=object)
        error = np.full(n, "", dtype=object)
        warned = np.full(n, "", dtype=object)
        worker = np.full(n, "", dtype=object)
        wall = np.full(n, np.nan)
        reused = np.zeros(n, dtype=bool)
        for index, record in records.items():
            if not 0 <= index < n:
                continue
            status[index] = record["status"]
            error[index] = record.get("error", "")
            warned[index] = record.get("warnings", "")
            worker[index] = record.get("worker", "")
            wall[index] = float(record.get("wall_time_s", np.nan))
            reused[index] = bool(record.get("model_reused", False))
            for name, value in zip(record["names"], record["values"], strict=True):
                values[index, position[name]] = value
        columns: dict[str, np.ndarray] = {"case": np.arange(n)}
        units: dict[str, str] = {"case": ""}
        for j, p in enumerate(parameters):
            columns[p["name"]] = samples[:, j].copy()
            units[p["name"]] = p["unit"]
        columns["status"] = status.astype(str)
        columns["error"] = error.astype(str)
        for k, name in enumerate(outputs):
            columns[name] = values[:, k]
            units[name] = column_unit(name)
        columns["warnings"] = warned.astype(str)
        columns["wall_time"] = wall
        columns["worker"] = worker.astype(str)
        columns["model_reused"] = reused
        units.update({"wall_time": "s", "status": "", "error": "", "warnings": "", "worker": "", "model_reused": ""})
        return StudyTable(
            columns=columns,
            parameter_names=tuple(p["name"] for p in parameters),
            output_names=tuple(outputs),
            units=units,
            title=_text(manifest.get("title", "")),
            method=_text(manifest.get("method", "")),
            **{key: _override(manifest, f"{key}_{unit}") for key, unit in _OVERRIDES},
        )


def _without_cases(description: Mapping) -> dict:
    sampling = description.get("sampling", {})
    return {**description, "sampling": {**sampling, "cases": None} if isinstance(sampling, Mapping) else sampling}


def _path_text(tokens: Any) -> str:
    return format_path(tokens)


def load_table(root: str | os.PathLike) -> StudyTable:
    """The results table of a store folder (finished or not).

    Parameters
    ----------
    root : str or os.PathLike
        The store folder.

    Returns
    -------
    StudyTable
        The results table in case order.

    Raises
    ------
    ResultFileError
        If the folder does not exist or is not a study store.
    """
    store = StudyStore(root)
    if not store.root.is_dir():
        close = difflib.get_close_matches(store.root.name, [p.name for p in store.root.parent.glob("*")], n=1)
        hint = f"; did you mean {close[0]!r}?" if close else ""
        raise ResultFileError(f"store {str(store.root)!r}: no such folder{hint}")
    return store.table()
