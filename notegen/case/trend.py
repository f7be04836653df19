"""The short trend of serial results: pH, PaCO2, HCO3, potassium, chloride, creatinine, urine chloride.

Built from the case's current results and the earlier ones kept beside them (oldest first), only
for analytes measured more than once. Values are in the canonical units of `notegen.case.model`.
"""

from __future__ import annotations

from pydantic import BaseModel, ConfigDict

from notegen.case.model import Case, Chem, Gas, ResultTime, Urine

_FROZEN = ConfigDict(frozen=True, extra="forbid")

# (section, field, label, unit)
TREND_FIELDS: tuple[tuple[str, str, str, str], ...] = (
    ("gas", "ph", "pH", ""),
    ("gas", "pco2", "PCO2", "mmHg"),
    ("gas", "hco3", "HCO3", "mmol/L"),
    ("chem", "k", "Potassium", "mmol/L"),
    ("chem", "cl", "Chloride", "mmol/L"),
    ("chem", "creatinine", "Creatinine", "mg/dL"),
    ("urine", "cl", "Urine chloride", "mmol/L"),
)


class TrendPoint(BaseModel):
    model_config = _FROZEN

    taken_at: ResultTime | None
    value: float


class TrendSeries(BaseModel):
    """One analyte over time, oldest first."""

    model_config = _FROZEN

    field: str  # dotted case path, e.g. "chem.k"
    label: str
    unit: str
    points: tuple[TrendPoint, ...]


def _samples(case: Case, section: str) -> list[Gas | Chem | Urine]:
    earlier: tuple[Gas | Chem | Urine, ...] = getattr(case, f"earlier_{section}")
    current: Gas | Chem | Urine = getattr(case, section)
    samples = [*earlier, current]
    dated = [s for s in samples if s.taken_at is not None]
    undated = [s for s in samples if s.taken_at is None]
    # Earlier results may sit on both sides of the current one in time (a later but incomplete gas).
    try:
        dated.sort(key=lambda s: s.taken_at)  # type: ignore[arg-type, return-value]
    except TypeError:  # validation refuses mixed time zones within a section; keep the order given
        pass
    return [*dated, *undated]


def build_trend(case: Case) -> tuple[TrendSeries, ...]:
    """Every analyte of `TREND_FIELDS` with two or more results, each series oldest first."""
    series: list[TrendSeries] = []
    by_section = {name: _samples(case, name) for name in ("gas", "chem", "urine")}
    for section, name, label, unit in TREND_FIELDS:
        found = [(s, value) for s in by_section[section] if (value := getattr(s, name)) is not None]
        # a venous and an arterial value are never joined into one series
        samples = sorted({s.sample or "" for s, _ in found if isinstance(s, Gas)})
        groups = [(label, found)] if len(samples) <= 1 else [
            (f"{label} ({_SAMPLE_WORDS[sample]})", [(s, v) for s, v in found if isinstance(s, Gas) and
                                                    (s.sample or "") == sample])
            for sample in samples
        ]
        for group_label, group in groups:
            if len(group) >= 2:  # most cases hold one result of each: no series, and no points built
                points = tuple(TrendPoint(taken_at=s.taken_at, value=value) for s, value in group)
                series.append(TrendSeries(field=f"{section}.{name}", label=group_label, unit=unit, points=points))
    return tuple(series)


_SAMPLE_WORDS = {"arterial": "arterial", "venous": "venous", "": "sample not stated"}
