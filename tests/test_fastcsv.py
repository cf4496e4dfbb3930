"""headingref.fastcsv (fixed-decimal CSV text) against Python's own correctly rounded formatting.

Reference: CPython's ``format(x, '.6f')`` (David Gay's correctly rounded dtoa; Python docs, "Format
Specification Mini-Language"), with trailing zeros and a bare point dropped as the module documents.
"""

from __future__ import annotations

import math
from decimal import Decimal

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from headingref.fastcsv import format_rows


def python_text(x: float, decimals: int) -> str:
    text = format(x, f".{decimals}f")
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


@settings(max_examples=400, deadline=None)
@given(st.floats(min_value=-1e7, max_value=1e7, allow_nan=False), st.integers(min_value=0, max_value=8))
def test_one_value_matches_python_or_is_a_tie(x, decimals):
    ours = format_rows(np.array([[x]]), [decimals]).decode("ascii").rstrip("\n")
    ref = python_text(x, decimals)
    if ours != ref:
        # allowed only where x sits within rounding error of a half-way point: then both texts are
        # within half a unit (plus the scaling error) of x, one unit apart
        unit = 10.0 ** -decimals
        assert abs(float(ours) - x) <= 0.5 * unit + abs(x) * 4e-16
        assert abs(Decimal(ours) - Decimal(ref)) == Decimal(1).scaleb(-decimals)


@settings(max_examples=100, deadline=None)
@given(st.lists(st.one_of(st.floats(min_value=-1e6, max_value=1e6), st.sampled_from([math.nan, math.inf, -math.inf])),
                min_size=1, max_size=30))
def test_rows_parse_back(values):
    x = np.array(values)
    lines = format_rows(x[None, :].repeat(2, axis=0), [6, 3]).decode("ascii").split("\n")
    assert lines[-1] == "" and len(lines) == len(values) + 1
    for v, line in zip(values, lines, strict=False):
        a, b = line.split(",")
        if math.isnan(v):
            assert a == b == ""  # NaN is an empty cell, as pandas writes it
        else:
            assert float(a) == pytest.approx(v, abs=5.1e-7, rel=1e-15) and float(b) == pytest.approx(v, abs=5.1e-4, rel=1e-15)


def test_text_columns_follow_the_numbers():
    text = format_rows(np.array([[1.5, -2.0], [0.0, 3.25]]), [2, 2],
                       [(np.array([0, 1]), ["normal", "caution"]), (np.array([1, 0]), ["", "no usable"])])
    assert text == b"1.5,0,normal,no usable\n-2,3.25,caution,\n"


def test_negative_zero_and_tiny_values_print_zero():
    assert format_rows(np.array([[-0.0, -1e-9, 4.9e-7, 5.1e-7]]), [6]) == b"0\n0\n0\n0.000001\n"
