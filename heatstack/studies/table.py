"""The results of a study as one table: a column per parameter and output, a row per case, SI units.

:class:`StudyTable` holds the columns in case order with each column's SI unit
(:func:`column_unit`, read from the column's name); :data:`DIAGNOSTIC_COLUMNS` are the
columns that describe how a case ran rather than what it computed. The statistics that
read a table are in :mod:`heatstack.studies.analysis`, its Markdown section in
:mod:`heatstack.studies.summary`.
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass, field

import numpy as np

from ..errors import InputError, OptionalDependencyError

__all__ = ["StudyTable", "column_unit", "DIAGNOSTIC_COLUMNS"]

#: Columns that describe how a case ran, not what it computed (they differ between runs).
DIAGNOSTIC_COLUMNS = ("wall_time", "worker", "model_reused", "warnings")

_UNITS = {
    "peak:": "K",
    "peak_time:": "s",
    "peak_delay:": "s",
    "limit_margin:": "K",
    "plug_peak:": "K",
    "plug_margin:": "K",
    "plug_released:": "",
    "solver:": "",
}


def column_unit(name: str) -> str:
    """SI unit of an output column, from its name.

    Parameters
    ----------
    name : str
        Output column name, e.g. ``"peak:sensor"``.

    Returns
    -------
    str
        The unit (``"K"``, ``"s"``, ``"J"``), or ``""`` for a dimensionless or unknown column.
    """
    for prefix, unit in _UNITS.items():
        if name.startswith(prefix):
            return unit
    return {"energy_in": "J", "plug_margin_min": "K", "any_plug_released": "", "wall_time": "s"}.get(name, "")


@dataclass(frozen=True, eq=False)
class StudyTable:
    """The results of a study, one row per case in case order.

    Attributes
    ----------
    columns : dict of str to ndarray
        ``case``; one column per parameter [SI]; ``status`` (``ok``, ``failed`` or
        ``pending``); ``error``; the outputs [SI] (NaN where a case did not finish, see
        :func:`heatstack.studies.runner.summarise` for the names); and the diagnostic
        columns ``warnings``, ``wall_time`` [s], ``worker``, ``model_reused``.
    parameter_names, output_names : tuple of str
    units : dict of str to str
        SI unit of each column ("" for none).
    title, method : str
    cell_size, accuracy, target_change : float or None
        The study's overrides of every case's cell size [m], BDF2 accuracy [K] and Euler
        target change [K]; None where each case keeps its base case's own.
    """

    columns: dict[str, np.ndarray]
    parameter_names: tuple[str, ...]
    output_names: tuple[str, ...]
    units: dict[str, str] = field(default_factory=dict)
    title: str = ""
    method: str = ""
    cell_size: float | None = None
    accuracy: float | None = None
    target_change: float | None = None

    def __getitem__(self, name: str) -> np.ndarray:
        if name not in self.columns:
            close = difflib.get_close_matches(name, list(self.columns), n=1)
            hint = f"; did you mean {close[0]!r}?" if close else ""
            raise InputError(f"study table: no column {name!r}{hint}")
        return self.columns[name]

    def __contains__(self, name: str) -> bool:
        return name in self.columns

    def __len__(self) -> int:
        return self.n_cases

    @property
    def names(self) -> tuple[str, ...]:
        """Column names in order."""
        return tuple(self.columns)

    @property
    def n_cases(self) -> int:
        """Number of rows."""
        return int(self.columns["case"].size)

    @property
    def ok(self) -> np.ndarray:
        """Mask of the cases that finished without error."""
        return self.columns["status"] == "ok"

    def counts(self) -> dict[str, int]:
        """Number of cases per status.

        Returns
        -------
        dict of str to int
            Counts of ``"ok"``, ``"failed"`` and ``"pending"`` cases.
        """
        status = self.columns["status"]
        return {s: int(np.count_nonzero(status == s)) for s in ("ok", "failed", "pending")}

    def as_dict(self) -> dict[str, np.ndarray]:
        """The columns (a shallow copy of the mapping).

        Returns
        -------
        dict of str to ndarray
            Column name to values (SI, units in ``units``).
        """
        return dict(self.columns)

    def same_results(self, other: StudyTable) -> bool:
        """Whether two tables hold the same cases and values (diagnostic columns ignored).

        Values are compared exactly (NaN equal to NaN).

        Parameters
        ----------
        other : StudyTable
            The table to compare with.

        Returns
        -------
        bool
            True when the non-diagnostic columns have the same names, shapes and values.
        """
        mine = [n for n in self.columns if n not in DIAGNOSTIC_COLUMNS]
        theirs = [n for n in other.columns if n not in DIAGNOSTIC_COLUMNS]
        if mine != theirs:
            return False
        for name in mine:
            a, b = self.columns[name], other.columns[name]
            if a.shape != b.shape:
                return False
            if a.dtype.kind == "f":
                if not np.array_equal(a, b, equal_nan=True):
                    return False
            elif not np.array_equal(a, b):
                return False
        return True

    def to_dataframe(self):
        """The table as a :class:`pandas.DataFrame` (pandas is optional).

        Returns
        -------
        pandas.DataFrame
            The columns indexed by ``case``, with ``attrs["units"]`` and ``attrs["title"]``.

        Raises
        ------
        OptionalDependencyError
            If pandas is not installed.
        """
        try:
            import pandas as pd
        except ImportError:
            raise OptionalDependencyError(
                "StudyTable.to_dataframe needs pandas, an optional dependency that is not installed "
                "(pip install pandas); without it the table is table.columns, a dict of numpy arrays"
            ) from None
        frame = pd.DataFrame({name: values for name, values in self.columns.items()})
        frame.attrs["units"] = dict(self.units)
        frame.attrs["title"] = self.title
        return frame.set_index("case")
