"""Names of study output columns for a reader: the columns keep their data names
(``plug_margin_min``, ``limit_margin:<probe>``); reports and figures show these."""

from __future__ import annotations

from collections.abc import Sequence

__all__ = ["output_label", "plug_names"]

_LABELS = {
    "plug_margin_min": "smallest fuse-plug margin to release (plug temperature)",
    "any_plug_released": "any fuse plug released",
    "energy_in": "braking energy in",
}
_PREFIX_LABELS = {
    "plug_margin:": "{} margin to its release temperature (plug temperature)",
    "plug_peak:": "{} peak (plug temperature)",
    "plug_released:": "{} released",
    "limit_margin:": "{}: margin to its output.limits value",
    "peak:": "{} peak",
    "peak_time:": "{} time of peak",
    "peak_delay:": "{} peak after braking",
    "solver:": "solver {}",
}


def output_label(name: str, plugs: Sequence[str] = ()) -> str:
    """The name of an output column for a reader (the column names stay the data's names).

    Parameters
    ----------
    name : str
        Output column, e.g. ``"plug_margin_min"`` or ``"limit_margin:fuse plug 1"``.
    plugs : sequence of str
        Fuse plug names: the ``peak:``, ``peak_time:`` and ``peak_delay:`` columns of a plug's
        probe are the rim at its seat, and are named so.

    Returns
    -------
    str
    """
    if name in _LABELS:
        return _LABELS[name]
    for prefix, pattern in _PREFIX_LABELS.items():
        if name.startswith(prefix):
            subject = name[len(prefix) :].replace("_", " ")
            if prefix in ("peak:", "peak_time:", "peak_delay:") and subject in plugs:
                subject = f"rim at the seat of {subject},"
            return pattern.format(subject)
    return name


def plug_names(output_names: Sequence[str]) -> tuple[str, ...]:
    """The fuse plugs a study table with these output columns has outputs for.

    Parameters
    ----------
    output_names : sequence of str
        Output column names.

    Returns
    -------
    tuple of str
        The plug names of the ``plug_peak:<name>`` columns, in column order.
    """
    return tuple(n.split(":", 1)[1] for n in output_names if n.startswith("plug_peak:"))
