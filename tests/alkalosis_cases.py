"""Invented metabolic-alkalosis cases for the pack tests (no real patients)."""

from __future__ import annotations

from typing import Any

from notegen.case.model import BloodPressure, Case, Chem, Context, Gas, Measurement, Medication, Patient, Urine

# Classes as the medication vocabulary assigns them (rules/vocabulary/medications.yaml).
CLASSES = {
    "furosemide": ("loop_diuretic",),
    "hydrochlorothiazide": ("thiazide_diuretic",),
    "chlorthalidone": ("thiazide_diuretic",),
    "calcium carbonate": ("alkali", "calcium_salt"),
    "fludrocortisone": ("mineralocorticoid",),
    "licorice": ("glycyrrhizin",),
    "sodium bicarbonate": ("alkali",),
    "senna": ("laxative",),
    "prednisone": ("glucocorticoid",),
}


def med(name: str, hours: float | None = None) -> Medication:
    if name not in CLASSES:
        return Medication(name=name, last_dose_hours=hours)  # unrecognised
    return Medication(name=name, generic=name, classes=CLASSES[name], last_dose_hours=hours)


def alkalosis_case(
    *,
    urine_cl: float | None = None,
    urine_cl_qualifier: str | None = None,
    urine_na: float | None = None,
    k: float | None = 3.6,
    cl: float = 95.0,
    mg: float | None = None,
    creatinine: float | None = 0.9,
    bp: tuple[int, int] | None = (118, 76),
    volume: str = "unknown",
    findings: tuple[str, ...] = (),
    meds: tuple[Medication, ...] = (),
    sample: str = "arterial",
    pco2: float = 47.0,
    hco3: float = 34.0,
    ph: float = 7.48,
    urine_calcium: float | None = None,
    urine_creatinine: float | None = None,
    urine_k: float | None = None,
) -> Case:
    """A 58-year-old with a metabolic alkalosis (pH 7.48, PaCO2 47, HCO3 34 by default)."""
    measurements: list[Measurement] = []
    if urine_cl is not None and urine_cl_qualifier:
        measurements.append(
            Measurement(
                field="urine.cl",
                value=urine_cl,
                unit="mmol/L",
                reported_value=urine_cl,
                reported_unit="mmol/L",
                qualifier=urine_cl_qualifier,  # type: ignore[arg-type]
            )
        )
    context: dict[str, Any] = {"volume": volume, "findings": findings, "meds": meds}
    if bp is not None:
        context["bp"] = BloodPressure(systolic=bp[0], diastolic=bp[1])
    return Case(
        label="invented",
        patient=Patient(age=58, sex="male"),
        gas=Gas(sample=sample, ph=ph, pco2=pco2, hco3=hco3),  # type: ignore[arg-type]
        chem=Chem(na=139, k=k, cl=cl, creatinine=creatinine, mg=mg, tco2=hco3 + 1),
        urine=Urine(cl=urine_cl, na=urine_na, calcium=urine_calcium, creatinine=urine_creatinine, k=urine_k),
        context=Context(**context),
        measurements=tuple(measurements),
    )
