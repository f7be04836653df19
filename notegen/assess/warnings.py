"""What the note must say is missing or was not used: the reading's gaps, the eGFR's, the input notices."""

from __future__ import annotations

from collections.abc import Mapping

from notegen._format import join_words
from notegen.acidbase.calculations import (
    Calculation,
    blocked_by_bounds,
    impossible_osmolal_gap,
    missing_calculations,
)
from notegen.acidbase.model import AcidBaseReading
from notegen.case.bounds import current_bounds, reported_as
from notegen.case.model import Case

# The calculations the chart note reads (its paragraph and flags); a bound that keeps one of them
# from being computed is said in the chart. The rest (fractional excretions, the urine ratios,
# the chloride deficit) belong to the worksheet, which shows every bound as reported.
CHART_CALCULATIONS = {
    "calculated_ph": "the consistency check of the gas",
    "anion_gap": "the anion gap",
    "delta_ratio": "the delta ratio",
    "expected_pco2": "the expected PaCO2",
    "egfr": "the eGFR",
    "osmolal_gap": "the osmolal gap",
    "corrected_calcium": "the corrected calcium",
}


def _blocking_bounds(case: Case, calculations: Mapping[str, Calculation]) -> list[str]:
    """A sentence for each reported bound that keeps a calculation the chart reads from being computed."""
    blocked = blocked_by_bounds(case, done=calculations)
    sentences = []
    for measurement in current_bounds(case) if blocked else ():
        names = [CHART_CALCULATIONS[name] for name in blocked.get(measurement.field, ()) if name in CHART_CALCULATIONS]
        if names:
            verb = "is" if len(names) == 1 else "are"
            blocked_words = f"{join_words(names)} {verb} not computed"
            sentences.append(f"{reported_as(measurement)}, a bound, not a value, so {blocked_words}.")
    return sentences


def collect_warnings(case: Case, reading: AcidBaseReading, calculations: Mapping[str, Calculation]) -> tuple[str, ...]:
    """What is missing or was not used, in words, without repeats; `calculations` are the case's, already computed."""
    seen: list[str] = []
    extra: list[str] = []
    if case.chem.creatinine is not None:
        # a creatinine without age or sex leaves the eGFR, and the GFR branch of the rules, open
        egfr = missing_calculations(case, done=calculations).get("egfr")
        if egfr is not None:
            extra.append(f"eGFR {egfr}.")
    impossible = impossible_osmolal_gap(case)
    if impossible is not None:
        extra.append(f"Osmolal gap {impossible}.")
    extra.extend(_blocking_bounds(case, calculations))
    for text in (*reading.missing, *extra, *case.notices):
        if text not in seen:
            seen.append(text)
    return tuple(seen)
