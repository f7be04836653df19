"""The assessment: everything the note says, as one typed, JSON-ready model.

`assess()` runs the pure stages in order (calculations, acid-base reading, the rule walk
when a metabolic alkalosis is found) and gathers their results. The note renderers read
only this model, and the JSON output is this model dumped.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Literal

from pydantic import BaseModel, ConfigDict, Field

from notegen.acidbase.alert import Alert
from notegen.acidbase.calculations import Calculation
from notegen.acidbase.model import AcidBaseReading
from notegen.case.model import Case
from notegen.case.trend import TrendSeries

SCHEMA_VERSION = "1.0"

ChlorideClass = Literal["responsive", "resistant", "indeterminate", "unknown"]
Tier = Literal["likely", "possible", "unlikely"]

_FROZEN = ConfigDict(frozen=True, extra="forbid", populate_by_name=True)


class Evidence(BaseModel):
    """One finding for or against a cause, as a sentence filled with the case's values."""

    model_config = _FROZEN

    id: str
    strength: Literal["strong", "moderate", "weak"]
    text: str
    facts: dict[str, float | bool | str | None]
    source: str


class CauseEntry(BaseModel):
    model_config = _FROZEN

    cause: str  # stable id, e.g. "diuretic"
    label: str
    tier: Tier
    supporting: tuple[Evidence, ...] = Field(alias="for")
    opposing: tuple[Evidence, ...] = Field(alias="against")
    undecided: tuple[str, ...] = ()  # what the data could not decide, in words


class MechanismEntry(BaseModel):
    """What generates the alkalosis."""

    model_config = _FROZEN

    mechanism: str
    label: str
    status: Literal["present", "undetermined"]
    text: str
    source: str


class FactorEntry(BaseModel):
    """What maintains the alkalosis."""

    model_config = _FROZEN

    factor: str
    label: str
    status: Literal["present", "undetermined"]
    text: str
    source: str


class SuggestedTest(BaseModel):
    model_config = _FROZEN

    test: str
    label: str
    why: str


class TraceEntry(BaseModel):
    model_config = _FROZEN

    kind: str
    id: str
    condition: str
    values: dict[str, str]
    outcome: str
    goes_to: str | None = None
    source: str = ""


class Assessment(BaseModel):
    """The drafted assessment of one case."""

    model_config = _FROZEN

    schema_version: str = SCHEMA_VERSION
    case: Case
    acid_base: AcidBaseReading
    alerts: tuple[Alert, ...]
    calculations: dict[str, Calculation]
    chloride_class: ChlorideClass | None  # None when there is no metabolic alkalosis
    chloride_notes: tuple[str, ...] = ()  # e.g. why a high urine chloride cannot be read
    generation: tuple[MechanismEntry, ...] = ()
    differential: tuple[CauseEntry, ...] = ()
    maintenance: tuple[FactorEntry, ...] = ()
    next_tests: tuple[SuggestedTest, ...] = ()
    management: tuple[str, ...] = ()
    warnings: tuple[str, ...] = ()  # missing data and input notices, in words
    trend: tuple[TrendSeries, ...] = ()  # serial results, oldest first, for analytes measured twice or more
    trace: tuple[TraceEntry, ...] = ()
    paragraph: str = ""  # the assessment paragraph as drafted


def _warnings(case: Case, reading: AcidBaseReading, calculations: Mapping[str, Calculation]) -> tuple[str, ...]:
    """What is missing or was not used, in words, without repeats; `calculations` are the case's, already computed."""
    from notegen.acidbase.calculations import missing_calculations

    seen: list[str] = []
    extra: list[str] = []
    if case.chem.creatinine is not None:
        # a creatinine without age or sex leaves the eGFR, and the GFR branch of the rules, open
        egfr = missing_calculations(case, done=calculations).get("egfr")
        if egfr is not None:
            extra.append(f"eGFR {egfr}.")
    for text in (*reading.missing, *extra, *case.notices):
        if text not in seen:
            seen.append(text)
    return tuple(seen)
