"""The note: the assessment rendered as Markdown through Jinja2 templates, then as text, HTML or JSON.

    text = render_note(assessment, DraftOptions(output_format="text", width=72))

Markdown comes from `templates/note.md.j2` (or `brief.md.j2`, or a service's own template run
in the sandbox); plain text and HTML are derived from that Markdown by `notegen.render`, so the
formats never drift apart. JSON is the `Assessment` itself, with the paragraph and the
management considerations filled in.

Templates receive plain data only (dicts, lists, strings and numbers), the same for the shipped
and a service's templates; every piece of text that reaches Markdown goes through the `md`
filter, so a label such as `{{ 7*7 }}` or `<script>` prints as written.
"""

from __future__ import annotations

import math
import re
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from notegen._format import format_number, format_value, join_words, ph_text, sentence_case, trimmed_number
from notegen.acidbase.calculations import Calculation
from notegen.assess.considerations import consider
from notegen.assess.model import Assessment
from notegen.case.model import Case, Measurement, Medication
from notegen.case.trend import TrendSeries
from notegen.errors import TemplateError, UsageError
from notegen.note.acidosis_paragraph import acidosis_context
from notegen.note.labels import field_label
from notegen.note.options import DraftOptions
from notegen.note.paragraph import draft_paragraph
from notegen.workup.model import CauseEntry, Evidence

__all__ = ["complete_assessment", "note_context", "render_markdown", "render_note"]

TITLE = "Acid-base assessment"
NOTE_TEMPLATE = "note.md.j2"
BRIEF_TEMPLATE = "brief.md.j2"
FORMATS = ("markdown", "text", "html", "json")

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
# Kept in the JSON only, never in the note: the chloride deficit is an estimate resting on
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
_BLANK_RUNS = re.compile(r"\n{3,}")


# Completing the assessment ---------------------------------------------------------------------


def complete_assessment(assessment: Assessment, *, rules_dirs: Sequence[Path] = ()) -> Assessment:
    """The assessment with `paragraph` and `management` filled from its results.

    `rules_dirs` are a service's rule folders, whose `management.yaml` is laid over the shipped one.
    """
    management, withheld = consider(assessment, rules_dirs=rules_dirs)
    return assessment.model_copy(
        update={"paragraph": draft_paragraph(assessment), "management": management, "management_withheld": withheld}
    )


def _completed(assessment: Assessment) -> Assessment:
    # An assessment completed upstream (with a service's rules) is kept as it is.
    return assessment if assessment.paragraph else complete_assessment(assessment)


# Rendering -------------------------------------------------------------------------------------


def render_note(assessment: Assessment, options: DraftOptions, *, template: Path | None = None) -> str:
    """The note in `options.output_format`: markdown, text, html or json.

    Fills the paragraph and management first when the assessment has no paragraph yet. JSON is
    the whole assessment whatever `brief`, `explain` or `template` say; the other formats come
    from the Markdown that the template renders.
    """
    fmt = str(options.output_format)
    if fmt not in FORMATS:
        raise UsageError(f"unknown output format {fmt!r}; choose one of {', '.join(FORMATS)}")
    completed = _completed(assessment)
    if fmt == "json":
        return completed.model_dump_json(indent=2, by_alias=True) + "\n"
    markdown = render_markdown(completed, options, template=template)
    if fmt == "markdown":
        return markdown
    if fmt == "text":
        from notegen.render.text import markdown_to_text

        return markdown_to_text(markdown, width=options.width, ascii_only=options.ascii_only)
    from notegen.render.html import markdown_to_html_page

    return markdown_to_html_page(markdown, title=note_title(completed.case))


def render_markdown(assessment: Assessment, options: DraftOptions, *, template: Path | None = None) -> str:
    """The Markdown note from the shipped template, or from a service's template in the sandbox."""
    from notegen.render.templating import make_environment, render_template
    from notegen.resources import templates_dir

    if template is None:
        # The shipped templates do not read `assessment` (the whole dump, ~0.14 ms a note).
        context = note_context(_completed(assessment), options, with_assessment=False)
        env = make_environment([templates_dir()], sandboxed=False)
        text = render_template(env, BRIEF_TEMPLATE if options.brief else NOTE_TEMPLATE, context)
    else:
        path = Path(template)
        if not path.is_file():
            raise TemplateError("template file not found", template=str(template))
        context = note_context(_completed(assessment), options)
        # The service's folder first, then the shipped one, so its template can include our parts.
        env = make_environment([path.resolve().parent, templates_dir()], sandboxed=True)
        text = render_template(env, path, context)
        # Every note carries the shipped disclaimer: a service layout that leaves it out (or replaces
        # the part with its own wording) gets it at the end.
        shipped = make_environment([templates_dir()], sandboxed=False)
        disclaimer = render_template(shipped, "parts/disclaimer_line.md.j2", context).strip()
        if disclaimer not in text:
            text = f"{text.rstrip()}\n\n{disclaimer}\n"
    # Templates may leave runs of blank lines around optional sections; in Markdown they mean nothing.
    return _BLANK_RUNS.sub("\n\n", text).strip("\n") + "\n"


def note_title(case: Case) -> str:
    return f"{TITLE} \u2014 {case.label}" if case.label else TITLE


# The template context --------------------------------------------------------------------------


def _trend_row(series: TrendSeries) -> dict[str, str]:
    """One analyte as "7.48 (06:00) -> 7.53 (14:00)": value, then time of day, date when it changes."""
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
        when = point.taken_at.strftime("%H:%M") if day == last_day else point.taken_at.strftime("%Y-%m-%d %H:%M")
        last_day = day
        if mixed:
            offset = point.taken_at.isoformat()[-6:] if point.taken_at.utcoffset() is not None else "no zone"
            when = f"{when} {'UTC' if offset == '+00:00' else offset}"
        parts.append(f"{value} ({when})")
    unit = f" {series.unit}" if series.unit else ""
    return {"label": series.label, "unit": unit.strip(), "text": " \u2192 ".join(parts) + unit}


def note_context(
    assessment: Assessment, options: DraftOptions, *, with_assessment: bool = True
) -> dict[str, Any]:
    """Everything a note template may use, as plain data; text is raw and escaped by the template.

    `with_assessment=False` leaves out `assessment`, the whole assessment as JSON data, for
    templates known not to read it; a service's template always gets it.
    """
    reading = assessment.acid_base
    worked_up = assessment.chloride_class is not None
    shown, others = _split_calculations(assessment)
    context: dict[str, Any] = {
        "title": TITLE,
        "label": assessment.case.label,
        "options": {
            "brief": options.brief,
            "explain": options.explain,
            "format": str(options.output_format),
        },
        "paragraph": assessment.paragraph or draft_paragraph(assessment),
        "critical_alerts": [a.model_dump(mode="json") for a in assessment.alerts if a.level == "critical"],
        "other_alerts": [a.model_dump(mode="json") for a in assessment.alerts if a.level != "critical"],
        "values": [_value_row(m, assessment.case) for m in assessment.case.measurements],
        "values_have_times": any(m.taken_at is not None for m in assessment.case.measurements),
        "trend": [_trend_row(t) for t in assessment.trend],
        "context_items": _context_items(assessment.case),
        "warnings": [sentence_case(text) for text in assessment.warnings],
        # what was given but set aside or read with a caveat (pasted lines, unknown words, older results)
        "input_notices": [sentence_case(text) for text in assessment.case.notices],
        "calculations": [_calculation_row(c) for c in shown],
        "other_calculations": [_calculation_row(c) for c in others],
        "alkalosis_worked_up": worked_up,
        "chloride_class": _chloride_class_words(assessment.chloride_class),
        "chloride_notes": list(assessment.chloride_notes),
        "differential": [_cause_row(c) for c in assessment.differential],
        "differential_note": _differential_note(assessment),
        "generation": [_labelled(m.model_dump(mode="json")) for m in assessment.generation],
        "maintenance": [_labelled(f.model_dump(mode="json")) for f in assessment.maintenance],
        "next_tests": [_labelled(t.model_dump(mode="json")) for t in assessment.next_tests],
        "management": list(assessment.management),
        "management_withheld": [
            {"label": sentence_case(item.id.replace("_", " ")), "reasons": list(item.reasons)}
            for item in assessment.management_withheld
        ],
        "acidosis": acidosis_context(assessment),  # the acidosis work-up, or None
        "reading_steps": list(reading.findings),
        "trace": [_trace_row(t.model_dump(mode="json")) for t in assessment.trace],
        "reference": {
            "ph": _span(*reading.ph_bounds, "", digits=2),
            "anion_gap": _span(*reading.anion_gap_reference, "mmol/L"),
        },
    }
    if with_assessment:
        context["assessment"] = assessment.model_dump(mode="json", by_alias=True)
    return context


def _labelled(row: dict[str, Any]) -> dict[str, Any]:
    return {**row, "label": sentence_case(str(row["label"]))}


def _span(low: float, high: float, unit: str, digits: int = 1) -> str:
    return f"{trimmed_number(low, digits)}\u2013{trimmed_number(high, digits)} {unit}".strip()


def _three_figures(value: float) -> str:
    if value == 0:
        return "0"
    digits = max(0, 2 - math.floor(math.log10(abs(value))))
    return trimmed_number(value, digits)


def _value_row(measurement: Measurement, case: Case) -> dict[str, str]:
    field = measurement.field
    qualifier = measurement.qualifier or ""
    if field in _PH_FIELDS:
        reported = f"{qualifier}{ph_text(measurement.reported_value)}"
        converted = "unchanged"
    else:
        reported = f"{qualifier}{format_value(measurement.reported_value, measurement.reported_unit)}"
        same = measurement.reported_unit == measurement.unit and measurement.reported_value == measurement.value
        converted = (
            "unchanged" if same else f"{qualifier}{_three_figures(measurement.value)} {measurement.unit}".strip()
        )
    taken = measurement.taken_at.isoformat(sep=" ", timespec="minutes") if measurement.taken_at else ""
    return {
        "field": field,
        "label": field_label(field, case, measurement),
        "reported": reported,
        "converted": converted,
        "source": measurement.source,
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
        hours = format_value(med.last_dose_hours)
        details.append(f"last dose {hours} hour{'' if hours == '1' else 's'} ago")
    return f"{med.name} ({'; '.join(details)})" if details else med.name


def _context_items(case: Case) -> list[dict[str, str]]:
    from notegen.knowledge.vocabulary import finding_label

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
    findings = [finding_label(f) for f in case.context.findings]
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


def _split_calculations(assessment: Assessment) -> tuple[list[Calculation], list[Calculation]]:
    """Calculations that bear on this reading, and the rest (named in one line, all kept in JSON).

    `JSON_ONLY_CALCULATIONS` appear in neither list.

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


def _calculation_row(calculation: Calculation) -> dict[str, str]:
    digits = _CALCULATION_DIGITS.get(calculation.name, 1)
    if calculation.name == "calculated_ph":
        value = ph_text(calculation.value)
    elif calculation.name == "delta_ratio":
        value = format_number(calculation.value, 1)  # as the paragraph gives it
    else:
        value = trimmed_number(calculation.value, digits)
    result = f"{value} {calculation.unit}".strip()
    if calculation.low is not None and calculation.high is not None:
        result += f" (range {_span(calculation.low, calculation.high, calculation.unit, digits)})"
    inputs = ", ".join(f"{name} {value}" for name, value in calculation.inputs.items())
    return {
        "name": calculation.name,
        "label": CALCULATION_LABELS.get(calculation.name, sentence_case(calculation.name.replace("_", " "))),
        "result": result,
        "formula": calculation.formula,
        "inputs": inputs,
        "source": calculation.source,
        "note": calculation.note or "",
    }


def _chloride_class_words(chloride_class: str | None) -> str:
    return {
        "responsive": "chloride-responsive",
        "resistant": "chloride-resistant",
        "indeterminate": "indeterminate",
        "unknown": "not known (no readable urine chloride)",
        None: "",
    }.get(chloride_class, chloride_class or "")


def _evidence_row(evidence: Evidence) -> dict[str, str]:
    return {"text": evidence.text, "strength": evidence.strength, "source": evidence.source}


def _by_strength(evidence: Sequence[Evidence]) -> list[Evidence]:
    order = {"strong": 0, "moderate": 1, "weak": 2}
    return sorted(evidence, key=lambda item: order.get(item.strength, 3))


def _cause_row(cause: CauseEntry) -> dict[str, Any]:
    return {
        "cause": cause.cause,
        "label": sentence_case(cause.label),
        "tier": cause.tier,
        "supporting": [_evidence_row(e) for e in _by_strength(cause.supporting)],
        "opposing": [_evidence_row(e) for e in _by_strength(cause.opposing)],
        "undecided": list(cause.undecided),
    }


def _differential_note(assessment: Assessment) -> str:
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


def _trace_row(entry: dict[str, Any]) -> dict[str, str]:
    values = "; ".join(f"{name} = {value}" for name, value in entry["values"].items())
    return {
        "kind": entry["kind"],
        "id": entry["id"],
        "condition": entry["condition"],
        "seen": values or "none",
        "outcome": entry["outcome"],
        "goes_to": entry["goes_to"] or "",
        "source": entry["source"],
    }
