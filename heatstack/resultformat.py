"""The names every heatstack results file shares: its format name, its layout version and its ledger accounts
(the cumulative accounts [J] under ``/ledger``, named by the solver's step record).

Both the writer (:mod:`heatstack.resultfile`) and the reader (:mod:`heatstack.resultread`)
import these, so the two sides of the file can never disagree.
"""

from __future__ import annotations

from .numerics.accounts import LEDGER_ACCOUNTS

__all__ = ["FORMAT_NAME", "FORMAT_VERSION", "LEDGER_ACCOUNTS"]

FORMAT_NAME = "heatstack-result"
"""Value of the root ``format`` attribute of every heatstack results file."""

FORMAT_VERSION = 1
"""Layout version written by :mod:`heatstack.resultfile`; files of a newer version are refused."""
