"""Reported bounds ("<10", ">40") are kept as bounds: arithmetic never takes them as exact.

A bound is held as its number with a qualifier (`Measurement.qualifier`). Comparisons in the
rule walk use it where the bound decides the answer (urine chloride <10 is below 20; the
engine's three-valued logic says "unknown" where it does not). Calculations and the acid-base
reading do arithmetic, so they see the case through `exact_only`, where a bounded value is
absent, and the note says which value was a bound.
"""

from __future__ import annotations

from notegen._format import format_value
from notegen.case.model import Case, Measurement
from notegen.knowledge import shipped_knowledge

_SECTIONS = ("gas", "chem", "urine")


def current_bounds(case: Case) -> list[Measurement]:
    """The bounded measurements among the values the case reads (its latest set), in field order."""
    found: list[Measurement] = []
    for measurement in case.measurements:
        if measurement.qualifier is None:
            continue
        section, key = measurement.field.split(".", 1)
        entry = getattr(case, section)
        if measurement.taken_at == entry.taken_at and getattr(entry, key, None) is not None:
            found.append(measurement)
    return found


def exact_only(case: Case, *, keep: str | None = None) -> Case:
    """`case` with every bounded value of its latest set left out, for arithmetic.

    `keep` names one field (`chem.cl`) whose bound stays in as if exact: only to find out what that
    bound keeps from being computed (`notegen.acidbase.calculations.blocked_by_bounds`), never to compute.
    """
    bounds = [m for m in current_bounds(case) if m.field != keep]
    if not bounds:
        return case
    cleared: dict[str, dict[str, None]] = {}
    for measurement in bounds:
        section, key = measurement.field.split(".", 1)
        cleared.setdefault(section, {})[key] = None
    update = {section: getattr(case, section).model_copy(update=keys) for section, keys in cleared.items()}
    return case.model_copy(update=update)


def reported_as(measurement: Measurement) -> str:
    """'Urine chloride was reported as <10 mmol/L': a bounded value, as reported."""
    label = shipped_knowledge().fields[measurement.field].label.capitalize()
    value = format_value(measurement.reported_value, measurement.reported_unit)
    return f"{label} was reported as {measurement.qualifier}{value}"


def bound_notices(case: Case) -> list[str]:
    """One line per bounded value: shown as reported, and not used in arithmetic."""
    return [
        f"{reported_as(m)}, a bound, not a value: no calculation uses it, "
        "and it is compared only where the bound decides"
        for m in current_bounds(case)
    ]
