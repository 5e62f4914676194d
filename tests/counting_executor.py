"""A serial study executor that counts the calls submitted to it (shared by the study tests)."""

from __future__ import annotations

from heatstack.studies import SerialExecutor


class CountingExecutor(SerialExecutor):
    """A serial executor that counts the calls submitted to it."""

    def __init__(self):
        self.submitted = 0

    def submit(self, fn, arg):
        self.submitted += 1
        return super().submit(fn, arg)
