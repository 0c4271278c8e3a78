"""Millisecond-exact UTC epoch arithmetic."""

import numpy as np
import pytest

from service.dynamics.epochs import add_seconds, epoch, format_utc, seconds_between


def test_half_burn_centre_is_exact_to_the_millisecond():
    # CONTRACT.md section 2 example: ignition 01:00:00, duration 341.1 s -> centre 01:02:50.550.
    ignition = epoch("2031-05-02T01:00:00")
    assert format_utc(add_seconds(ignition, 341.1 / 2.0)) == "2031-05-02T01:02:50.550Z"


def test_whole_seconds_print_without_milliseconds():
    assert format_utc(epoch("2031-05-02T00:00:00")) == "2031-05-02T00:00:00Z"


def test_rounding_is_half_away_from_zero():
    start = epoch("2031-01-01T00:00:00")
    assert format_utc(add_seconds(start, 0.0005)) == "2031-01-01T00:00:00.001Z"
    assert format_utc(add_seconds(start, -0.0005)) == "2030-12-31T23:59:59.999Z"


def test_seconds_between_is_exact_over_years():
    start = epoch("2031-01-01T00:00:00")
    end = epoch("2032-01-01T00:00:00.001")
    assert seconds_between(start, end) == 365 * 86400 + 0.001


def test_seconds_between_many_epochs():
    start = epoch("2031-01-01T00:00:00")
    ends = np.array(["2031-01-01T00:00:01", "2030-12-31T23:59:59.5"], dtype="datetime64[ms]")
    np.testing.assert_array_equal(seconds_between(start, ends), [1.0, -0.5])


def test_non_finite_span_is_refused():
    with pytest.raises(ValueError, match="non-finite"):
        add_seconds(epoch("2031-01-01T00:00:00"), float("nan"))
