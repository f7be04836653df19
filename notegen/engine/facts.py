"""Typed fact values: the flat input of a walk, `name -> fact`.

A fact is a number with its unit (optionally a reported bound such as "<10"), a yes/no,
a word from a fixed list, or missing. A missing fact may say why ("last dose time not given"),
so the output can tell the clinician what to supply rather than guessing.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Literal

from notegen import _format
from notegen.errors import NotegenError

Qualifier = Literal["<", ">"]


@dataclass(frozen=True, slots=True)
class NumberFact:
    """A number in `unit`; with a qualifier it is a reported bound ("<10" means some value below 10)."""

    value: float
    unit: str | None = None
    qualifier: Qualifier | None = None

    def __post_init__(self) -> None:
        if isinstance(self.value, bool) or not math.isfinite(self.value):
            raise NotegenError(f"a number fact needs a finite number, not {self.value!r}")


@dataclass(frozen=True, slots=True)
class BooleanFact:
    value: bool


@dataclass(frozen=True, slots=True)
class TextFact:
    """A word from the fact's declared list of values (or free text for a `text` fact)."""

    value: str


@dataclass(frozen=True, slots=True)
class MissingFact:
    """No value; `reason` says why when that helps the reader ("no last-dose time")."""

    reason: str | None = None


Fact = NumberFact | BooleanFact | TextFact | MissingFact
FactInput = Fact | float | int | bool | str | None
FactKind = Literal["number", "boolean", "enum", "text"]


@dataclass(frozen=True, slots=True)
class Bound:
    """A reported bound: the true value lies strictly below (`<`) or above (`>`) `limit`."""

    limit: float
    qualifier: Qualifier


# What a compiled condition reads: float / bool / str / Bound, or None when missing.
Value = float | bool | str | Bound | None


def as_fact(raw: FactInput) -> Fact:
    """Accept plain Python values for convenience; bools stay booleans, never numbers."""
    if raw is None:
        return MissingFact()
    if isinstance(raw, NumberFact | BooleanFact | TextFact | MissingFact):
        return raw
    if isinstance(raw, bool):
        return BooleanFact(raw)
    if isinstance(raw, int | float):
        return NumberFact(float(raw))
    if isinstance(raw, str):
        return TextFact(raw)
    raise NotegenError(f"cannot use {raw!r} as a fact value")


def fact_value(fact: Fact) -> Value:
    """The bare value a compiled condition reads."""
    if isinstance(fact, NumberFact):
        if fact.qualifier is None:
            return float(fact.value)
        return Bound(float(fact.value), fact.qualifier)
    if isinstance(fact, BooleanFact | TextFact):
        return fact.value
    return None


def format_number(value: float, decimals: int | None = None) -> str:
    """Short display form: 12.0 -> "12", 2.456 -> "2.46" (or fixed `decimals`), by the one formatter."""
    if decimals is not None:
        return _format.format_number(value, decimals)
    return _format.trimmed_number(value, 2)


def _number_beside(value: float, decimals: int | None, beside: Sequence[float]) -> str:
    """`format_number(value, decimals)`, with more decimals (up to 9) while the printed number would sit on
    another side of a value in `beside` (below, on, above) than `value` does."""
    shown = format_number(value, decimals)
    base = 2 if decimals is None else decimals
    for digits in range(base + 1, 10):
        if all(_side(float(shown), limit) == _side(value, limit) for limit in beside if math.isfinite(limit)):
            break
        shown = format_number(value, digits)
        if decimals is None:
            shown = shown.rstrip("0").rstrip(".")
    return shown


def _side(value: float, limit: float) -> int:
    return (value > limit) - (value < limit)


def display_fact(fact: Fact, decimals: int | None = None, beside: Sequence[float] = ()) -> str:
    """A fact as a sentence shows it: "12 mmol/L", "<10 mmol/L", "yes", "low", "not given".

    `beside` are the setting values the same sentence compares the fact with: a number is then
    printed with enough decimals to sit on the same side of each as its value (2.4999 beside
    "below 2.5" is not printed as 2.5).
    """
    if isinstance(fact, NumberFact):
        if fact.unit == "h" and fact.qualifier is None and decimals is None and not beside:
            return _format.format_hours(fact.value)  # the one duration form: "40 hours"
        shown = _number_beside(float(fact.value), decimals, beside)
        text = (fact.qualifier or "") + shown
        return f"{text} {fact.unit}" if fact.unit else text
    if isinstance(fact, BooleanFact):
        return "yes" if fact.value else "no"
    if isinstance(fact, TextFact):
        return fact.value
    return "not given" if fact.reason is None else f"not given ({fact.reason})"


def plain_value(fact: Fact) -> float | bool | str | None:
    """JSON-ready value ("<10" keeps its qualifier as text)."""
    if isinstance(fact, NumberFact):
        return f"{fact.qualifier}{format_number(fact.value)}" if fact.qualifier else fact.value
    if isinstance(fact, BooleanFact | TextFact):
        return fact.value
    return None


def normalise_facts(raw: Mapping[str, FactInput]) -> dict[str, Fact]:
    return {name: as_fact(value) for name, value in raw.items()}
