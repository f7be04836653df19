"""What the note must say is missing or was not used: the reading's gaps, the eGFR's, the input notices."""

from __future__ import annotations

from collections.abc import Mapping

from notegen.acidbase.calculations import Calculation, impossible_osmolal_gap, missing_calculations
from notegen.acidbase.model import AcidBaseReading
from notegen.case.bounds import bound_notices
from notegen.case.model import Case


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
    extra.extend(f"{text}." for text in bound_notices(case))
    for text in (*reading.missing, *extra, *case.notices):
        if text not in seen:
            seen.append(text)
    return tuple(seen)
