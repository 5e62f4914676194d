"""The time of a recorded peak between its records (heatstack.result.peak_time)."""

from __future__ import annotations

import numpy as np
import pytest


def test_peak_time_is_the_vertex_of_a_sampled_parabola():
    from heatstack.result import peak_time

    # a parabola is its own three-point fit: the vertex at 37 s from records 20 s apart
    times = np.array([0.0, 20.0, 40.0, 60.0, 80.0])
    values = 500.0 - 0.01 * (times - 37.0) ** 2
    assert peak_time(times, values) == pytest.approx(37.0, abs=1e-9)
    # uneven records of a cosine near its crest: within 1 % of the spacing of the truth (pi)
    uneven = np.array([2.0, 2.9, 3.3, 4.5])
    assert peak_time(uneven, np.cos(uneven - np.pi)) == pytest.approx(np.pi, abs=0.05)
    # on a corner of the duty (heating stops at 20 s: a kink, not a smooth crest) the record's time
    kinked = np.array([0.0, 10.0, 20.0, 25.0, 40.0])
    rising_then_falling = np.array([0.0, 5.0, 10.0, 9.9, 9.6])
    assert peak_time(kinked, rising_then_falling, corners=(20.0,)) == 20.0
    assert peak_time(kinked, rising_then_falling) > 20.0  # the parabola alone would move it
    # at the end of a ramp the last record's own time; a flat top stays between its records
    assert peak_time(times, times) == 80.0
    assert 20.0 <= peak_time(times, np.array([1.0, 2.0, 2.0, 2.0, 1.0])) <= 40.0
