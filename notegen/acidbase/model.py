"""Typed result of the acid-base reading (`notegen.acidbase.reading.read_acid_base`)."""

from __future__ import annotations

from typing import Literal

from pydantic import BaseModel, ConfigDict

from notegen.acidbase.alert import Alert

PhStatus = Literal["acidemia", "alkalemia", "normal"]
GapBelowRange = Literal["within_variation", "beyond_variation"]
Disorder = Literal[
    "metabolic_alkalosis", "metabolic_acidosis", "respiratory_acidosis", "respiratory_alkalosis"
]
Primary = Literal[
    "metabolic_alkalosis",
    "metabolic_acidosis",
    "respiratory_acidosis",
    "respiratory_alkalosis",
    "none",
    "undetermined",
]
CompensationStatus = Literal["appropriate", "inappropriate", "uncertain", "not_applicable"]
# Why a PaCO2 outside the expected range adds a respiratory disorder only as possible: within the edge
# margin, inside another published form of the rule, or where the rule runs past the usual ceiling.
CompensationEdge = Literal["near_edge", "other_form", "ceiling"]
# "indeterminate": the acute and chronic ranges overlap at this PaCO2, or a second metabolic
# disorder moves the bicarbonate so that chronicity cannot be read from it.
Chronicity = Literal["acute", "chronic", "between", "indeterminate"]
GapStatus = Literal["high", "normal"]
AcidosisKind = Literal["high_gap", "normal_gap", "high_and_normal_gap"]
SampleKind = Literal["arterial", "venous", "unstated"]
ValueSource = Literal["measured", "calculated", "panel"]
Consistency = Literal["consistent", "inconsistent", "not_checked"]
Certainty = Literal["established", "possible"]
GapBicarbonate = Literal["gas bicarbonate", "panel total CO2"]
# Whether the panel total CO2 is the one the gas predicts (HCO3 + dissolved CO2, within tolerance).
GasPanelAgreement = Literal["agree", "disagree", "not_checked"]
# Why the primary was chosen (or not), as a code the paragraph writer chooses its words from.
PrimaryBasis = Literal[
    "no_gas",  # no pH and PaCO2
    "no_gas_high_bicarbonate",  # ... and a high total CO2: alkalosis or compensation, only a gas can tell
    "no_gas_low_bicarbonate",  # ... and a low total CO2: acidosis or compensation, only a gas can tell
    "all_normal",  # pH, PaCO2 and bicarbonate within range
    "both_push_same_way",  # both abnormal toward the pH; the larger push is primary
    "one_value_explains",  # one abnormal value explains the pH
    "larger_push",  # the pH is out of range, PaCO2 and bicarbonate just inside theirs
    "only_abnormal_value",  # the pH is normal and one value is abnormal
    "offsetting_mixed",  # pH normal, PaCO2 and bicarbonate abnormal in opposite directions
    "values_disagree",  # the pH does not fit the PaCO2 and bicarbonate
    "gap_offset",  # all within range but the anion gap shows an offset acidosis
]
# What the delta ratio says.
DeltaRatioMeaning = Literal[
    "normal_gap_acidosis_too",
    "mixed_gap_possible",
    "high_gap_alone",
    "metabolic_alkalosis_too",  # bicarbonate has not fallen, or the ratio is high
]

_FROZEN = ConfigDict(frozen=True, extra="forbid")


class ExpectedRange(BaseModel):
    """The compensation a published rule predicts: `quantity` is what the rule predicts."""

    model_config = _FROZEN

    quantity: Literal["pco2", "hco3"]
    value: float
    low: float
    high: float
    unit: str
    rule: str  # e.g. "Winter's formula", "0.7 rule", "chronic respiratory acidosis rule"
    source: str


class DisorderBasis(BaseModel):
    """Why a disorder is listed, and how firmly."""

    model_config = _FROZEN

    disorder: Disorder
    certainty: Certainty
    basis: str  # a clinical sentence


class AcidBaseReading(BaseModel):
    """The reading of one case. `disorders` holds established disorders, the primary first."""

    model_config = _FROZEN

    # The values the reading used, and where each came from.
    sample: SampleKind | None  # None: no gas values at all
    ph: float | None
    ph_source: ValueSource | None
    pco2: float | None
    hco3: float | None
    hco3_source: ValueSource | None
    calculated_ph: float | None
    consistency: Consistency

    ph_status: PhStatus | None
    ph_bounds: tuple[float, float]

    primary: Primary
    primary_reason: str
    primary_basis: PrimaryBasis | None = None
    disorders: tuple[Disorder, ...]
    possible_disorders: tuple[Disorder, ...]
    disorder_basis: tuple[DisorderBasis, ...]

    compensation: CompensationStatus
    compensation_edge: CompensationEdge | None = None
    expected: ExpectedRange | None
    expected_alternatives: tuple[ExpectedRange, ...]  # acute and chronic ranges of a respiratory primary
    chronicity: Chronicity | None

    anion_gap: float | None
    anion_gap_corrected: float | None
    anion_gap_status: GapStatus | None
    anion_gap_reference: tuple[float, float]
    # A gap below the reference range: by less than `anion_gap_low_margin` ("within_variation") or more.
    anion_gap_below_range: GapBelowRange | None = None
    # A high gap in alkalemia no higher than alkalemia itself can raise it (`alkalemia_gap_rise`).
    anion_gap_within_alkalemia_rise: bool = False
    anion_gap_bicarbonate: GapBicarbonate | None
    gas_panel_agreement: GasPanelAgreement = "not_checked"
    delta_gap: float | None
    delta_ratio: float | None
    delta_ratio_interpretation: str | None
    delta_ratio_meaning: DeltaRatioMeaning | None = None
    # False when the bicarbonate fell less than `delta_ratio_min_fall`: the ratio's number is not read
    delta_ratio_interpretable: bool = True
    bicarbonate_fall: float | None = None  # normal bicarbonate minus the one the gap used, when the gap is high
    # True when a respiratory acidosis is present, so a high ratio may be its compensation instead
    delta_ratio_allows_compensation: bool = False
    metabolic_acidosis_kind: AcidosisKind | None

    missing: tuple[str, ...]
    alerts: tuple[Alert, ...]
    findings: tuple[str, ...]
