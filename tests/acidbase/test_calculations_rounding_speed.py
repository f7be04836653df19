"""The faster `round_half_up` and `format_value` give exactly what the Decimal-only versions gave.

The shortcut (issue 8) skips the Decimal round trip when a float already has no more decimals than
asked for; the versions from before it are kept here as the reference.
"""

from __future__ import annotations

from decimal import ROUND_HALF_UP, Decimal, InvalidOperation

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from notegen._format import format_value, round_half_up


def reference_round_half_up(value: float, digits: int) -> float:
    exact = Decimal(repr(value)).quantize(Decimal(1).scaleb(-digits), rounding=ROUND_HALF_UP)
    return float(exact)


def reference_format_value(value: float, unit: str = "") -> str:
    text = f"{reference_round_half_up(value, 3):.3f}".rstrip("0").rstrip(".")
    if text == "-0":
        text = "0"
    return f"{text} {unit}".strip()


# Lab-sized numbers written with a few decimals (the shortcut's case), their arithmetic (usually
# not), and floats of any size that stay within Decimal's default precision.
_DECIMALS = st.builds(
    lambda whole, places: float(f"{whole / 10**places:.{places}f}"), st.integers(-(10**9), 10**9), st.integers(0, 6)
)
_ARITHMETIC = st.builds(lambda a, b: a - b, _DECIMALS, _DECIMALS)
_ANY = st.floats(min_value=-1e15, max_value=1e15, allow_nan=False)
_EDGES = st.sampled_from([0.0, -0.0, 8.25, 7.485, -2.5, 1e-7, 0.1 + 0.2])
_NUMBERS = st.one_of(_DECIMALS, _ARITHMETIC, _ANY, _EDGES)


@settings(max_examples=3000, deadline=None)
@given(_NUMBERS, st.integers(0, 4))
def test_round_half_up_matches_the_decimal_version(value: float, digits: int) -> None:
    got, want = round_half_up(value, digits), reference_round_half_up(value, digits)
    assert (type(got), repr(got)) == (type(want), repr(want))  # repr tells -0.0 from 0.0


@settings(max_examples=3000, deadline=None)
@given(st.one_of(_NUMBERS, st.integers(-(10**6), 10**6)), st.sampled_from(["", "mmol/L"]))
def test_format_value_matches_the_decimal_version(value: float, unit: str) -> None:
    assert format_value(value, unit) == reference_format_value(value, unit)


@pytest.mark.parametrize("value", [float("nan"), 7, 1e16, 4398046511104.001, 123456789012.5])
def test_unusual_values_match(value: float) -> None:
    assert repr(round_half_up(value, 1)) == repr(reference_round_half_up(value, 1))
    assert format_value(value) == reference_format_value(value)


@pytest.mark.parametrize("value", [float("inf"), float("-inf")])
def test_infinity_is_refused_as_before(value: float) -> None:
    with pytest.raises(InvalidOperation):
        reference_round_half_up(value, 1)
    with pytest.raises(InvalidOperation):
        round_half_up(value, 1)


@pytest.mark.parametrize("value", [2.0**43 + 0.001, -(2.0**44) - 0.002, 999999999999.999, 1e12 + 0.5, -0.0, 140.0, 7.4])
def test_format_value_matches_near_its_shortcut_limit(value: float) -> None:
    assert format_value(value, "mmol/L") == reference_format_value(value, "mmol/L")
