"""One exception hierarchy for every failure a heatstack user can meet.

Every error raised on purpose by heatstack derives from :class:`HeatstackError`,
so a calling tool can catch one class, and the command line can turn any of them
into a clear message and a non-zero exit code instead of a traceback.
"""

from __future__ import annotations


class HeatstackError(Exception):
    """Base class of every error heatstack raises on purpose."""


class InputError(HeatstackError, ValueError):
    """Bad user input: a value, a unit, a file line, a part or a field is wrong.

    The message names the offending field, part, row or file line.
    """


class UnitError(InputError):
    """A quantity has an unknown unit or the wrong physical dimension."""


class MaterialError(InputError):
    """A material is unknown, or its file or tables are malformed."""


class PropertyRangeError(MaterialError):
    """A temperature falls outside a property table that allows no extrapolation."""


class GeometryError(InputError):
    """Parts overlap, have non-positive sizes, or a probe lies outside every part."""


class ScheduleError(InputError):
    """A time table, power history, phase list or boundary law is invalid."""


class SolverError(HeatstackError, RuntimeError):
    """The time integration failed: a non-finite value or Newton did not converge.

    The message says at what simulated time and in which part the failure occurred.
    """


class ResultFileError(HeatstackError, OSError):
    """A results file is missing, malformed or cannot be written."""


class OptionalDependencyError(HeatstackError, ImportError):
    """An optional package needed for this call is not installed."""


class ExecutorError(HeatstackError, RuntimeError):
    """A study executor failed (a worker process died, the cluster went away)."""


class StudyError(HeatstackError, RuntimeError):
    """A study ended without one finished case; the message says why the first cases failed."""


class HeatstackWarning(UserWarning):
    """Soft problems: a property table clamped, a tolerance loosened, and so on."""
