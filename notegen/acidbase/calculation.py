"""One computed value with its working, and the test of which values the arithmetic may use."""

from __future__ import annotations

import math

from pydantic import BaseModel, ConfigDict

from notegen.acidbase.formulas import Estimate

__all__ = ["PH_READABLE", "Calculation", "make_calculation", "usable", "usable_ph"]


class Calculation(BaseModel):
    """One computed value with its working. `low`/`high` hold a rule's allowed range when it has one."""

    model_config = ConfigDict(frozen=True, extra="forbid")

    name: str
    value: float
    unit: str
    formula: str
    inputs: dict[str, str]  # input name -> value with unit, as text
    source: str
    note: str | None = None
    low: float | None = None
    high: float | None = None


# Bounds far outside survival: they only keep the arithmetic finite should an unvalidated case arrive.
_ARITHMETIC_FLOOR = 1e-6
_ARITHMETIC_LIMIT = 1e6
PH_READABLE = (6.0, 8.5)


def usable(value: float | None) -> bool:
    """A value the arithmetic can use: present, finite, and neither vanishingly small nor absurdly large."""
    return value is not None and math.isfinite(value) and _ARITHMETIC_FLOOR < value < _ARITHMETIC_LIMIT


def usable_ph(value: float | None) -> bool:
    """A pH the arithmetic can use: within 6.0-8.5, far beyond any survivable value."""
    return value is not None and math.isfinite(value) and PH_READABLE[0] <= value <= PH_READABLE[1]


def _round(value: float) -> float:
    return round(value, 3)


def make_calculation(
    name: str,
    value: float,
    unit: str,
    formula: str,
    inputs: dict[str, str],
    source: str,
    note: str | None = None,
    estimate: Estimate | None = None,
) -> Calculation:
    return Calculation(
        name=name,
        value=_round(value),
        unit=unit,
        formula=formula,
        inputs=inputs,
        source=source,
        note=note,
        low=_round(estimate.low) if estimate else None,
        high=_round(estimate.high) if estimate else None,
    )
