"""layout.errors: the shared checks name the field and the allowed range."""

from __future__ import annotations

import numpy as np
import pytest

from layout.errors import InputError, check_whole


@pytest.mark.parametrize("value", [1, 7, np.int64(3), np.uint8(10)])
def test_check_whole_accepts_whole_numbers_in_range_and_returns_ints(value):
    out = check_whole("count", value, 1, 10)
    assert out == int(value) and type(out) is int


@pytest.mark.parametrize(("value", "low", "high", "allowed"), [
    (True, 0, None, "0 or more"),  # a bool is not a count
    (2.0, 0, None, "0 or more"),  # nor is a float, even a whole one
    ("3", 0, None, "0 or more"),
    (0, 1, None, "1 or more"),
    (11, 1, 10, "1 to 10"),
    (-1, 0, 5, "0 to 5"),
])
def test_check_whole_names_the_field_and_the_range(value, low, high, allowed):
    with pytest.raises(InputError) as info:
        check_whole("steps", value, low, high)
    assert info.value.field == "steps"
    assert info.value.allowed == allowed
    assert "whole number" in str(info.value)


def test_check_whole_words_its_own_error():
    with pytest.raises(InputError) as info:
        check_whole("row", 0, 1, problem="must be a row number", allowed=">= 1")
    assert "must be a row number" in str(info.value)
    assert info.value.allowed == ">= 1"
