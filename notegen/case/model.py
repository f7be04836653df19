"""The validated case: what every later stage reads.

Every number here is in the conventional unit of its field (see `CANONICAL_UNITS`),
whatever unit the user reported it in; `Case.measurements` keeps what was reported.
A value that was not given is `None`, never a default.
"""

from __future__ import annotations

from datetime import datetime
from typing import Annotated, Any, Literal

from pydantic import BaseModel, ConfigDict, SerializationInfo, SerializerFunctionWrapHandler, model_serializer
from pydantic.json_schema import WithJsonSchema

from notegen._format import format_result_time

Sex = Literal["female", "male"]
Sample = Literal["arterial", "venous"]
Volume = Literal["low", "normal", "high", "unknown"]
Level = Literal["low", "normal", "high"]
UnitSystem = Literal["conventional", "si"]

# The unit every value is held in after validation (conventional units).
CANONICAL_UNITS: dict[str, str] = {
    "gas.ph": "",
    "gas.pco2": "mmHg",
    "gas.hco3": "mmol/L",
    "gas.po2": "mmHg",
    "chem.na": "mmol/L",
    "chem.k": "mmol/L",
    "chem.cl": "mmol/L",
    "chem.tco2": "mmol/L",
    "chem.bun": "mg/dL",
    "chem.creatinine": "mg/dL",
    "chem.glucose": "mg/dL",
    "chem.albumin": "g/dL",
    "chem.ca": "mg/dL",
    "chem.ionized_ca": "mmol/L",
    "chem.mg": "mg/dL",
    "chem.phos": "mg/dL",
    "chem.lactate": "mmol/L",
    "chem.osm": "mOsm/kg",
    "chem.bhb": "mmol/L",
    "chem.salicylate": "mg/dL",
    "urine.na": "mmol/L",
    "urine.k": "mmol/L",
    "urine.cl": "mmol/L",
    "urine.creatinine": "mg/dL",
    "urine.ph": "",
    "urine.osm": "mOsm/kg",
    "urine.calcium": "mg/dL",
    "urine.ketones": "mg/dL",
    "urine.urea_nitrogen": "mg/dL",
}

_FROZEN = ConfigDict(frozen=True, extra="forbid")

# A result's time. In the JSON it is ISO 8601, except in a case whose date was read neither day first
# nor month first (`Case.date_as_written`): there it is that date as written and the time.
ResultTime = Annotated[datetime, WithJsonSchema(
    {"type": "string", "description": "ISO 8601 date-time (2026-03-14T06:30:00); when the case's "
     "date_as_written is set, that date as written and the time (12/01/2026 06:30)"}, mode="serialization")]


def times_as_written(entries: list[Any], date_as_written: str) -> None:
    """In dumped JSON data, write each entry's `taken_at` with the date as written (`format_result_time`)."""
    for entry in entries:
        when = entry.get("taken_at") if isinstance(entry, dict) else None
        if isinstance(when, str):
            entry["taken_at"] = format_result_time(datetime.fromisoformat(when), date_as_written)


class Measurement(BaseModel):
    """One reported value: as reported, and as converted to the canonical unit."""

    model_config = _FROZEN

    field: str  # dotted case path, e.g. "chem.k"
    value: float  # in `unit`, the canonical unit of the field
    unit: str
    reported_value: float
    reported_unit: str
    reported_text: str | None = None  # the number as written ("1.0"), when the input shows it
    qualifier: Literal["<", ">"] | None = None  # "<10" is held as value 10, qualifier "<"
    taken_at: ResultTime | None = None
    source: str = "case file"  # e.g. "case file", "paste line 4", "FHIR Observation/obs-3", "--set"
    sample: Literal["arterial", "venous"] | None = None  # a gas value's own gas sample, when stated


class Patient(BaseModel):
    model_config = _FROZEN

    age: float | None = None
    sex: Sex | None = None
    weight_kg: float | None = None
    height_cm: float | None = None


class Gas(BaseModel):
    model_config = _FROZEN

    sample: Sample | None = None  # None: not stated (read as arterial, with a caution)
    ph: float | None = None
    pco2: float | None = None
    hco3: float | None = None
    po2: float | None = None
    taken_at: ResultTime | None = None


class Chem(BaseModel):
    model_config = _FROZEN

    na: float | None = None
    k: float | None = None
    cl: float | None = None
    tco2: float | None = None
    bun: float | None = None  # urea given in SI is converted to BUN (mg/dL urea nitrogen)
    creatinine: float | None = None
    glucose: float | None = None
    albumin: float | None = None
    ca: float | None = None
    ionized_ca: float | None = None
    mg: float | None = None
    phos: float | None = None
    lactate: float | None = None
    osm: float | None = None
    bhb: float | None = None  # beta-hydroxybutyrate
    salicylate: float | None = None
    taken_at: ResultTime | None = None


class Urine(BaseModel):
    model_config = _FROZEN

    na: float | None = None
    k: float | None = None
    cl: float | None = None
    creatinine: float | None = None
    ph: float | None = None
    osm: float | None = None
    calcium: float | None = None
    ketones: float | None = None  # acetoacetate, as a strip or assay reports it
    urea_nitrogen: float | None = None  # urine urea nitrogen, for the urine osmolal gap
    taken_at: ResultTime | None = None


class BloodPressure(BaseModel):
    model_config = _FROZEN

    systolic: int
    diastolic: int


class Medication(BaseModel):
    """A medication as written, with the classes the vocabulary maps it to."""

    model_config = _FROZEN

    name: str  # as written by the user
    generic: str | None = None  # the vocabulary's generic name; None when unrecognised
    classes: tuple[str, ...] = ()  # e.g. ("loop_diuretic",); empty when unrecognised
    last_dose_hours: float | None = None  # hours since the last dose, when known

    @property
    def recognised(self) -> bool:
        return self.generic is not None


class Context(BaseModel):
    model_config = _FROZEN

    bp: BloodPressure | None = None
    volume: Volume = "unknown"
    meds: tuple[Medication, ...] = ()
    findings: tuple[str, ...] = ()  # canonical finding ids, e.g. "vomiting"
    # Results read against the laboratory's own range, since assays and units differ widely.
    renin: Level | None = None
    aldosterone: Level | None = None
    diuretic_screen: Literal["positive", "negative"] | None = None  # urine screen for loop/thiazide drugs
    cortisol_excess: bool | None = None  # the result of an evaluation for cortisol excess
    # Units of citrated blood products (red cells, plasma) given recently; their citrate becomes bicarbonate.
    blood_product_units: int | None = None


class OutsideResource(BaseModel):
    """A resource of the input that an acid-base assessment does not read (a hemoglobin, a Condition).

    The chart note counts them in one line by `resource_type`; the worksheet and JSON list each `text`.
    """

    model_config = _FROZEN

    resource_type: str  # the FHIR resource type, e.g. "Observation"
    text: str  # e.g. "FHIR Observation/obs-hgb: LOINC 718-7 (Hemoglobin) is not read for an acid-base assessment"


class Case(BaseModel):
    """A validated case. Sections hold the latest complete set when results are serial."""

    model_config = _FROZEN

    label: str | None = None
    units: UnitSystem = "conventional"
    patient: Patient = Patient()
    gas: Gas = Gas()
    chem: Chem = Chem()
    urine: Urine = Urine()
    context: Context = Context()
    measurements: tuple[Measurement, ...] = ()
    # Earlier results, oldest first, when the case holds serial samples.
    earlier_gas: tuple[Gas, ...] = ()
    earlier_chem: tuple[Chem, ...] = ()
    earlier_urine: tuple[Urine, ...] = ()
    # What was given but not used, and why (unrecognised medications or findings, stale values ...).
    notices: tuple[str, ...] = ()
    # Resources outside an acid-base assessment (other laboratory tests, Conditions): set aside, not notices.
    outside: tuple[OutsideResource, ...] = ()
    # Every result's one date as the paste wrote it ("12/01/2026"), when it reads both day first and
    # month first and no order was given: the times order the results, the calendar date is not known.
    # The times hold it in one reading for ordering only; every output shows it as written.
    date_as_written: str | None = None

    @model_serializer(mode="wrap")
    # no return type: with one, pydantic would take it as the JSON schema of the whole model
    def _dates_as_written(self, handler: SerializerFunctionWrapHandler, info: SerializationInfo):  # type: ignore[no-untyped-def]
        data = handler(self)
        if self.date_as_written is not None and info.mode_is_json() and isinstance(data, dict):
            entries = [data.get(name) for name in ("gas", "chem", "urine")]
            for name in ("earlier_gas", "earlier_chem", "earlier_urine", "measurements"):
                entries.extend(data.get(name) or ())
            times_as_written(entries, self.date_as_written)
        return data
