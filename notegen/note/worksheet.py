"""The worksheet's rows: the values table, the calculations, the causes weighed, the rule walk.

The chart note leaves these to a worksheet that follows it on request (`DraftOptions.worksheet`);
the writer passes them to the templates as plain data. Sources stay here and in the JSON, never in
the chart note itself; a source's "(from memory)" marker stays in the rule pack and the JSON.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

from notegen._format import (
    format_hours,
    format_number,
    format_range,
    format_result_time,
    format_value,
    join_words,
    ph_text,
    sentence_case,
    trimmed_number,
)
from notegen.acidbase.calculations import Calculation
from notegen.assess.model import Assessment
from notegen.case.model import Case, Measurement, Medication
from notegen.case.trend import TrendSeries
from notegen.knowledge import shipped_knowledge
from notegen.note.labels import field_label
from notegen.workup.model import CauseEntry, Evidence, SuggestedTest

CALCULATION_LABELS: dict[str, str] = {
    "calculated_ph": "pH calculated from PaCO2 and HCO3",
    "expected_total_co2": "Expected panel total CO2",
    "expected_hco3_acute": "Expected HCO3 if the PaCO2 change is acute",
    "expected_hco3_chronic": "Expected HCO3 if the PaCO2 change is chronic",
    "anion_gap": "Anion gap",
    "anion_gap_corrected": "Anion gap corrected for albumin",
    "delta_gap": "Delta gap",
    "delta_ratio": "Delta ratio",
    "expected_pco2": "Expected PaCO2",
    "egfr": "eGFR (CKD-EPI 2021)",
    "osmolal_gap": "Osmolal gap",
    "urine_k_creatinine": "Urine potassium-to-creatinine ratio",
    "fe_na": "Fractional excretion of sodium",
    "fe_cl": "Fractional excretion of chloride",
    "chloride_deficit": "Chloride deficit",
    "corrected_calcium": "Calcium corrected for albumin",
    "urine_anion_gap": "Urine anion gap",
    "urine_osmolal_gap": "Urine osmolal gap",
}
# Kept in the JSON only, never in a note: the chloride deficit is an estimate resting on
# assumptions, and printed as a bare mmol figure it reads like an amount to give.
JSON_ONLY_CALCULATIONS = frozenset({"chloride_deficit"})
# Decimals shown for a result; one decimal unless listed.
_CALCULATION_DIGITS: dict[str, int] = {"egfr": 0, "fe_na": 2, "fe_cl": 2, "chloride_deficit": 0}
_CLASS_WORDS: dict[str, str] = {
    "ace_inhibitor": "ACE inhibitor",
    "angiotensin_receptor_blocker": "angiotensin receptor blocker",
    "glycyrrhizin": "glycyrrhizin (licorice)",
    "alkali": "alkali source",
}
_PH_FIELDS = frozenset({"gas.ph", "urine.ph"})
# Where a value came from, in words: an option name is no source a reader knows.
_SOURCE_WORDS = {"--set": "entered by hand"}
_UNVERIFIED = " (from memory)"


def trend_row(series: TrendSeries, date_as_written: str | None = None) -> dict[str, str]:
    """One analyte as "7.48 (06:00) -> 7.53 (14:00)": value, then time of day, date when it changes
    (as written, when the case's date reads both ways: `Case.date_as_written`)."""
    parts: list[str] = []
    last_day = None
    # times from different UTC offsets are shown with their offsets, so the order shown is the true order
    mixed = len({p.taken_at.utcoffset() for p in series.points if p.taken_at is not None}) > 1
    for point in series.points:
        value = ph_text(point.value) if series.field.endswith(".ph") else trimmed_number(point.value, 1)
        if point.taken_at is None:
            parts.append(value)
            continue
        day = point.taken_at.date()
        when = (point.taken_at.strftime("%H:%M") if day == last_day
                else format_result_time(point.taken_at.replace(tzinfo=None), date_as_written))
        last_day = day
        if mixed:
            offset = point.taken_at.isoformat()[-6:] if point.taken_at.utcoffset() is not None else "no zone"
            when = f"{when} {'UTC' if offset == '+00:00' else offset}"
        parts.append(f"{value} ({when})")
    unit = f" {series.unit}" if series.unit else ""
    return {"label": series.label, "unit": unit.strip(), "text": " \u2192 ".join(parts) + unit}



def labelled(row: dict[str, Any]) -> dict[str, Any]:
    return {**row, "label": sentence_case(str(row["label"]))}


def plain_source(source: str) -> str:
    """A source as a reader of the worksheet sees it: the pack's "(from memory)" marker stays in the
    rule pack and the JSON, and an option name becomes what it means."""
    source = _SOURCE_WORDS.get(source, source)
    return source.replace(_UNVERIFIED, "")


def test_row(test: SuggestedTest) -> dict[str, str]:
    """A suggested test and one plain sentence on what its result would change."""
    sentence = shipped_knowledge().next_test_sentences.get(test.test, "")
    if test.conditional:  # kept only on an undecided pack condition: say on what it waits
        opening = sentence_case(test.conditional_says)
        sentence = f"{opening}: {sentence}" if sentence else f"{opening}."
    return {"test": test.test, "label": sentence_case(test.label), "sentence": sentence}


def _three_figures(value: float) -> str:
    if value == 0:
        return "0"
    digits = max(0, 2 - math.floor(math.log10(abs(value))))
    return trimmed_number(value, digits)


def _as_reported(measurement: Measurement) -> str:
    """The value as the case wrote it, with its unit: an entered 1.0 stays "1.0 mg/dL"."""
    written = measurement.reported_text
    if written is not None and float(written) == measurement.reported_value:
        return f"{written} {measurement.reported_unit}".strip()
    return format_value(measurement.reported_value, measurement.reported_unit)


def value_row(measurement: Measurement, case: Case) -> dict[str, str]:
    field = measurement.field
    qualifier = measurement.qualifier or ""
    if field in _PH_FIELDS:
        reported = f"{qualifier}{ph_text(measurement.reported_value)}"
        converted = "unchanged"
    else:
        reported = f"{qualifier}{_as_reported(measurement)}"
        same = measurement.reported_unit == measurement.unit and measurement.reported_value == measurement.value
        converted = (
            "unchanged" if same else f"{qualifier}{_three_figures(measurement.value)} {measurement.unit}".strip()
        )
    taken = format_result_time(measurement.taken_at, case.date_as_written) if measurement.taken_at else ""
    return {
        "field": field,
        "label": field_label(field, case, measurement),
        "reported": reported,
        "converted": converted,
        "source": plain_source(measurement.source),
        "taken_at": taken,
    }


def _medication_text(med: Medication) -> str:
    if not med.recognised:
        details = ["not in the vocabulary, not reasoned with"]
    else:
        details = []
        if med.generic and med.generic.casefold() != med.name.casefold():
            details.append(med.generic)
        details += [_CLASS_WORDS.get(c, c.replace("_", " ")) for c in med.classes]
    if med.last_dose_hours is not None:
        details.append(f"last dose {format_hours(med.last_dose_hours)} ago")
    return f"{med.name} ({'; '.join(details)})" if details else med.name


def context_items(case: Case) -> list[dict[str, str]]:

    items: list[dict[str, str]] = []
    patient = case.patient
    parts = []
    if patient.age is not None:
        parts.append(f"{format_value(patient.age)} years")
    if patient.sex is not None:
        parts.append(patient.sex)
    if patient.weight_kg is not None:
        parts.append(format_value(patient.weight_kg, "kg"))
    if patient.height_cm is not None:
        parts.append(format_value(patient.height_cm, "cm"))
    if parts:
        items.append({"label": "Patient", "text": ", ".join(parts)})
    if case.context.bp is not None:
        items.append(
            {"label": "Blood pressure", "text": f"{case.context.bp.systolic}/{case.context.bp.diastolic} mmHg"}
        )
    volume = case.context.volume
    items.append({"label": "Volume status", "text": "not stated" if volume == "unknown" else volume})
    meds = [_medication_text(med) for med in case.context.meds]
    items.append({"label": "Medications", "text": "; ".join(meds) if meds else "none given"})
    findings = [shipped_knowledge().finding_label(f) for f in case.context.findings]
    items.append({"label": "Findings", "text": join_words(findings) if findings else "none given"})
    context = case.context
    results = [
        ("Renin", context.renin),
        ("Aldosterone", context.aldosterone),
        ("Urine diuretic screen", context.diuretic_screen),
        ("Cortisol excess", None if context.cortisol_excess is None else ("yes" if context.cortisol_excess else "no")),
    ]
    items.extend({"label": label, "text": value} for label, value in results if value is not None)
    return items


def split_calculations(assessment: Assessment) -> tuple[list[Calculation], list[Calculation]]:
    """Calculations that bear on this reading, and the rest (named in one line, all kept in JSON).

    Expected bicarbonate for a respiratory disorder says nothing when there is none, the delta
    gap and ratio nothing when the gap is normal, the expected total CO2 nothing without a panel.
    """
    reading = assessment.acid_base
    respiratory = {"respiratory_acidosis", "respiratory_alkalosis"}
    irrelevant: set[str] = set()
    if not respiratory & {reading.primary, *reading.disorders, *reading.possible_disorders}:
        irrelevant |= {"expected_hco3_acute", "expected_hco3_chronic"}
    if reading.anion_gap_status != "high":
        irrelevant |= {"delta_gap", "delta_ratio"}
    if assessment.case.chem.tco2 is None:
        irrelevant.add("expected_total_co2")
    calculations = [c for c in assessment.calculations.values() if c.name not in JSON_ONLY_CALCULATIONS]
    return (
        [c for c in calculations if c.name not in irrelevant],
        [c for c in calculations if c.name in irrelevant],
    )


def calculation_row(calculation: Calculation) -> dict[str, str]:
    digits = _CALCULATION_DIGITS.get(calculation.name, 1)
    if calculation.name == "calculated_ph":
        value = ph_text(calculation.value)
    elif calculation.name == "delta_ratio":
        value = format_number(calculation.value, 1)  # as the paragraph gives it
    else:
        value = trimmed_number(calculation.value, digits)
    result = f"{value} {calculation.unit}".strip()
    if calculation.low is not None and calculation.high is not None:
        result += f" (range {format_range(calculation.low, calculation.high, calculation.unit, digits=digits)})"
    inputs = ", ".join(f"{name} {value}" for name, value in calculation.inputs.items())
    return {
        "name": calculation.name,
        "label": CALCULATION_LABELS.get(calculation.name, sentence_case(calculation.name.replace("_", " "))),
        "result": result,
        "formula": calculation.formula,
        "inputs": inputs,
        "source": plain_source(calculation.source),
        "note": calculation.note or "",
    }


def chloride_class_words(chloride_class: str | None) -> str:
    return {
        "responsive": "chloride-responsive",
        "resistant": "chloride-resistant",
        "indeterminate": "indeterminate",
        "unknown": "not known (no readable urine chloride)",
        None: "",
    }.get(chloride_class, chloride_class or "")


def _evidence_row(evidence: Evidence) -> dict[str, str]:
    return {"text": evidence.text, "strength": evidence.strength, "source": plain_source(evidence.source)}


def _by_strength(evidence: Sequence[Evidence]) -> list[Evidence]:
    order = {"strong": 0, "moderate": 1, "weak": 2}
    return sorted(evidence, key=lambda item: order.get(item.strength, 3))


def with_article(label: str) -> str:
    """ "a magnesium", "an eGFR", "the blood pressure": a missing value as a sentence names it."""
    if label.startswith(("the ", "a ", "an ")):
        return label
    if label.startswith(("lowest ", "highest ", "latest ")):
        return f"the {label}"
    return f"{'an' if label[:1].lower() in 'aeio' else 'a'} {label}"


def missing_tests_text(labels: Sequence[str]) -> str:
    """ "a serum magnesium and an eGFR": the tests a cause waits on, as a sentence names them."""
    return join_words(with_article(label) for label in labels)


def shown_tier(cause: CauseEntry) -> str:
    """The tier as the note states it: a cause whose supporting findings wait on a missing value is
    not assessable, never unlikely."""
    firm_against = any(item.strength != "weak" for item in cause.opposing)
    if cause.tier == "unlikely" and cause.not_assessable_without and not firm_against:
        return "not_assessable"
    return cause.tier


def cause_row(cause: CauseEntry) -> dict[str, Any]:
    return {
        "cause": cause.cause,
        "label": sentence_case(cause.label),
        "tier": shown_tier(cause),
        "missing": missing_tests_text(cause.not_assessable_without),
        "supporting": [_evidence_row(e) for e in _by_strength(cause.supporting)],
        "opposing": [_evidence_row(e) for e in _by_strength(cause.opposing)],
        "undecided": list(cause.undecided),
    }


def differential_note(assessment: Assessment) -> str:
    """Why there is no differential, when there is none; empty otherwise."""
    reading = assessment.acid_base
    if assessment.chloride_class is not None:
        return "" if assessment.differential else "No cause could be weighed on these values."
    if "metabolic_alkalosis" in reading.disorders:
        return "The causes of the metabolic alkalosis have not been weighed in this draft."
    if reading.ph is None or reading.pco2 is None:
        return (
            "Without a gas, a metabolic alkalosis can be neither confirmed nor excluded, so no differential was drawn."
        )
    if "metabolic_alkalosis" in reading.possible_disorders:
        return "A metabolic alkalosis is possible but not established, so no differential was drawn."
    return "No metabolic alkalosis on these values, so no alkalosis differential applies."


def trace_row(entry: dict[str, Any]) -> dict[str, str]:
    values = "; ".join(f"{name} = {value}" for name, value in entry["values"].items())
    return {
        "kind": entry["kind"],
        "id": entry["id"],
        "condition": entry["condition"],
        "seen": values or "none",
        "outcome": entry["outcome"],
        "goes_to": entry["goes_to"] or "",
        "source": plain_source(entry["source"]),
    }


def outside_summary(case: Case, *, listed_below: bool) -> str | None:
    """One line for the chart note counting the input's resources outside an acid-base assessment.

    A bundle from a record system carries a blood count, liver tests, problems: a line each would
    bury the note. The worksheet (and JSON) list each one; None when there are none.
    """
    if not case.outside:
        return None
    counts: dict[str, int] = {}
    for resource in case.outside:
        counts[resource.resource_type] = counts.get(resource.resource_type, 0) + 1
    kinds = join_words(f"{n} {kind}{'s' if n > 1 else ''}" for kind, n in counts.items())
    where = " (listed in the worksheet below)" if listed_below else ""
    return f"The FHIR input also held {kinds} that an acid-base assessment does not read{where}."

