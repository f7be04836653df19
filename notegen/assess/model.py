"""The assessment: everything the note says, as one typed, JSON-ready model.

`notegen.pipeline.Drafter.assess` runs the stages in order and gathers their results here. The
note renderers read only this model, and the JSON output is this model dumped.
"""

from __future__ import annotations

from pydantic import Field, SerializerFunctionWrapHandler, field_serializer

from notegen._model import FrozenModel
from notegen.acidbase.alert import Alert
from notegen.acidbase.calculations import Calculation
from notegen.acidbase.model import AcidBaseReading
from notegen.case.model import Case, times_as_written
from notegen.case.trend import TrendSeries
from notegen.workup.acidosis_model import AcidosisWorkup
from notegen.workup.model import (
    CauseEntry,
    ChlorideClass,
    FactorEntry,
    MechanismEntry,
    SuggestedTest,
    TraceEntry,
)

SCHEMA_VERSION = "1.0"


class WithheldConsideration(FrozenModel):
    """A management consideration that applies to the case but is not printed, and why."""

    id: str
    reasons: tuple[str, ...]  # each contraindication that holds or cannot be ruled out, with its source


class Assessment(FrozenModel):
    """The drafted assessment of one case."""

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
    management_withheld: tuple[WithheldConsideration, ...] = ()  # kept out by a contraindication
    # alert codes whose advice a printed consideration carries (the note states them without it; not in JSON)
    answered_alerts: tuple[str, ...] = Field(default=(), exclude=True)
    warnings: tuple[str, ...] = ()  # missing data and input notices, in words
    # Values reported as bounds ("<10"), in words: shown as reported, compared only where the bound
    # decides, never used in arithmetic (the worksheet lists them; the chart only when one blocks a result).
    reported_bounds: tuple[str, ...] = ()
    trend: tuple[TrendSeries, ...] = ()  # serial results, oldest first, for analytes measured twice or more
    trace: tuple[TraceEntry, ...] = ()
    paragraph: str = ""  # the assessment paragraph as drafted
    # The metabolic-acidosis work-up (rules/acidosis); None when there is no metabolic acidosis
    # with a known anion gap. The alkalosis work-up keeps the keys above.
    acidosis: AcidosisWorkup | None = None
    disclaimer: str = ""  # the draft's one-line disclaimer, as every note format prints it
    cautions: tuple[str, ...] = ()  # the cautions every note carries (reference ranges used, adults only...)

    @field_serializer("trend", mode="wrap", when_used="json")
    # no return type: with one, pydantic would take it as the JSON schema of the trend
    def _trend_dates_as_written(self, trend: tuple[TrendSeries, ...], handler: SerializerFunctionWrapHandler):  # type: ignore[no-untyped-def]
        """The trend's times with the case's date as written, as the case's own times (`Case.date_as_written`).

        On the trend alone: a serializer wrapped round the whole assessment made every JSON dump
        go through Python objects (about 0.09 ms a note in a batch).
        """
        data = handler(trend)
        written = self.case.date_as_written
        if written is not None and isinstance(data, list):
            times_as_written([point for series in data for point in series.get("points", ())], written)
        return data
