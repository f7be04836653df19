"""The note a clinician signs: chart-length by default, the working in a worksheet on request, no
provenance or internal words on the signed page, missing never filed as unlikely, and every format
telling the same story. All cases are invented."""

from __future__ import annotations

import json
import re
from functools import cache
from pathlib import Path
from typing import Any

import pytest
from alkalosis_cases import alkalosis_case
from hypothesis import given
from test_properties import _profile, alkalosis_case_file, case_file

from notegen.assess.model import Assessment
from notegen.case.validation import validate_case
from notegen.intake.read import read_case
from notegen.knowledge import shipped_knowledge
from notegen.pipeline import Drafter, DraftOptions

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = sorted((ROOT / "samples").glob("*.yaml"))
FHIR_BUNDLE = ROOT / "samples" / "fhir_bundle.json"
PASTED = ROOT / "samples" / "pasted_labs.txt"
CHART_WORDS = 450

# Words that belong to the machinery, not to a chart: sources and their "(from memory)" marker, the
# program's name, bundle indexes, option names, decision-tree states, and any snake_case rule,
# setting, state or fact id.
INTERNAL = re.compile(
    r"\(from memory\)|Source:|notegen|entry\[|--set|action window|class the alkalosis|now waiting"
    r"|subtype still open|could become|could be responsive|\(now |\b[a-z0-9]+_[a-z0-9_]+\b"
)


@cache
def _drafter() -> Drafter:
    return Drafter()


def _sample_cases() -> dict[str, Any]:
    cases = {path.name: read_case(str(path)) for path in [*SAMPLES, FHIR_BUNDLE]}
    cases[PASTED.name] = read_case(None, paste=str(PASTED))
    return cases


SAMPLE_CASES = _sample_cases()


def _note(case: Any, **options: Any) -> str:
    return _drafter().draft(case, DraftOptions(**options))


@pytest.mark.parametrize("name", sorted(SAMPLE_CASES))
def test_every_sample_note_is_chart_length(name: str) -> None:
    text = _note(SAMPLE_CASES[name], output_format="text")
    assert len(text.split()) <= CHART_WORDS, len(text.split())
    assert "CAUTIONS" in text and "Draft from the values given" in text  # the disclaimer is counted


@pytest.mark.parametrize("name", sorted(SAMPLE_CASES))
def test_no_sample_note_carries_provenance_or_internal_words(name: str) -> None:
    case = SAMPLE_CASES[name]
    for options in ({}, {"brief": True}, {"output_format": "text"}, {"output_format": "text", "brief": True}):
        note = _note(case, **options)
        found = INTERNAL.findall(note.replace("\\_", "_"))
        assert not found, (options, found)


def _check_signed_page(data: dict[str, Any]) -> None:
    case = validate_case(data, filename="generated.yaml")
    for options in ({"output_format": "text"}, {"output_format": "text", "brief": True}):
        note = _note(case, **options)
        found = INTERNAL.findall(note)
        assert not found, (options, found, note)


@_profile(60)
@given(data=case_file())
def test_no_generated_note_carries_internal_words(data: dict[str, Any]) -> None:
    _check_signed_page(data)


@_profile(60)
@given(data=alkalosis_case_file(allow_diuretics=True))
def test_no_generated_alkalosis_note_carries_internal_words(data: dict[str, Any]) -> None:
    _check_signed_page(data)


def test_the_worksheet_holds_the_working_with_sources_but_no_unverified_marker() -> None:
    case = SAMPLE_CASES["thiazide_and_vomiting.yaml"]
    chart = _note(case)
    sheet = _note(case, worksheet=True)
    assert sheet.startswith(chart.rstrip("\n"))  # the chart note, then the worksheet after it
    worksheet = sheet[len(chart.rstrip("\n")) :]
    for heading in ("# Worksheet", "## Values used", "## Calculations", "## Causes weighed"):
        assert heading in worksheet and heading not in chart
    assert "Formula: Na - (Cl + HCO3)" in worksheet and "Source: Galla, JASN 2000;11:369." in worksheet
    assert "(from memory)" not in sheet
    # the JSON keeps the marker, with everything else
    data = json.loads(_note(case, output_format="json"))
    assert any("(from memory)" in item["source"] for c in data["differential"] for item in c["against"])
    assert set(data["calculations"]) >= {"anion_gap", "expected_pco2"}


def test_a_value_set_by_hand_is_not_sourced_to_an_option() -> None:
    case = read_case(str(SAMPLES[0]), overrides=("chem.k=2.9",))
    sheet = _note(case, worksheet=True)
    assert "| Potassium | 2.9 mmol/L | unchanged | entered by hand |" in sheet
    assert "--set" not in sheet


# Missing is not unlikely -------------------------------------------------------------------------


def _without_magnesium_or_creatinine() -> Assessment:
    return _drafter().assess(alkalosis_case(urine_cl=12, k=2.9, creatinine=None, mg=None))


def test_a_cause_waiting_on_a_missing_test_is_never_listed_as_unlikely() -> None:
    assessment = _without_magnesium_or_creatinine()
    waiting = {c.cause: c.not_assessable_without for c in assessment.differential if c.not_assessable_without}
    assert waiting["reduced_gfr"] == ("eGFR (from the serum creatinine, age and sex)",)
    assert waiting["potassium_magnesium_depletion"] == ("serum magnesium",)
    sheet = _note(assessment.case, worksheet=True)
    unlikely = sheet[sheet.index("### Unlikely") : sheet.index("## How it arose")]
    assert "Reduced GFR" not in unlikely and "magnesium depletion" not in unlikely
    assert "Nothing in these values argues for it" not in sheet
    assert "- **Reduced GFR:** not assessable without an eGFR (from the serum creatinine, age and sex)." in sheet
    assert "- **Severe potassium or magnesium depletion:** not assessable without a serum magnesium." in sheet
    paragraph = _note(assessment.case, brief=True)
    assert "magnesium depletion cannot be assessed without a serum magnesium" in paragraph
    assert "depletion is unlikely" not in paragraph and "depletion are unlikely" not in paragraph


def test_a_measured_value_lets_the_cause_be_judged() -> None:
    assessment = _drafter().assess(alkalosis_case(urine_cl=12, k=2.9, creatinine=0.9, mg=2.0))
    assert not any(c.not_assessable_without for c in assessment.differential if c.cause == "reduced_gfr")


# Certainty ---------------------------------------------------------------------------------------


def _gap_case(hco3: float, cl: float) -> Assessment:
    # Arterial gas with a high gap; Winter's formula (Albert, Dell & Winters 1967) fits at 1.5 x HCO3 + 8.
    pco2 = 1.5 * hco3 + 8
    gas = {"sample": "arterial", "ph": 7.36, "pco2": pco2, "hco3": hco3}
    return _drafter().assess(validate_case({"gas": gas, "chem": {"na": 140, "cl": cl}}))


def test_a_ratio_over_a_small_bicarbonate_fall_is_not_interpreted() -> None:
    # gap 140 - (100 + 22) = 18, rise 6; fall 2: ratio 3 (Rastegar, JASN 2007), but not read
    small = _gap_case(22, 100)
    assert small.acid_base.delta_ratio_interpretable is False
    paragraph = _note(small.case, brief=True)
    assert "too small a fall for the delta ratio to be interpreted" in paragraph
    assert "delta ratio of" not in paragraph and " shows that" not in paragraph
    # gap 140 - (100 + 18) = 22, rise 10; fall 6: ratio 1.7, read (high-gap acidosis alone)
    enough = _gap_case(18, 100)
    assert enough.acid_base.delta_ratio_interpretable is True
    assert "The delta ratio of 1.7 fits a high anion gap acidosis alone." in _note(enough.case, brief=True)


# Every format tells the same story ------------------------------------------------------------------


@pytest.mark.parametrize("name", ["thiazide_and_vomiting.yaml", "serial_intermittent_diuretic.yaml"])
def test_every_format_carries_the_disclaimer_and_cautions(name: str) -> None:
    case = SAMPLE_CASES[name]
    data = json.loads(_note(case, output_format="json"))
    assert data["disclaimer"].startswith("Draft from the values given")
    assert data["cautions"] and "Reference ranges vary by laboratory" in data["cautions"][0]
    markdown = _note(case)
    for text in (data["disclaimer"], *data["cautions"]):
        assert f"- {text}" in markdown.replace("\\", "")
    page = _note(case, output_format="html")
    assert page.index('class="draft-notice"') < page.index("<h1>")
    assert data["disclaimer"] in page[: page.index("<h1>")]


def test_the_same_heading_for_what_was_given_but_not_used() -> None:
    case = SAMPLE_CASES["serial_intermittent_diuretic.yaml"]
    for options in ({}, {"brief": True}, {"worksheet": True}):
        assert "**Given but not used:**" in _note(case, **options)
    assert "Given but not used:" in _note(case, output_format="text")
    assert "Given but not used:" in _note(case, output_format="html")
    for old in ("About the input", "Not used or missing", "feed the trend"):
        assert old not in _note(case, worksheet=True)


def test_the_brief_note_refers_only_to_what_it_holds() -> None:
    for case in SAMPLE_CASES.values():
        brief = _note(case, brief=True).lower()
        assert "trend" not in brief and "worksheet" not in brief and "section" not in brief


def test_text_has_no_markdown_escapes_and_keeps_numbers_with_units() -> None:
    units = r"(?:mmol/L|mmHg|mg/dL|g/dL|kPa|mL/min|hours?|years)"
    for case in SAMPLE_CASES.values():
        for width in (30, 41, 57, 72):
            text = _note(case, output_format="text", width=width, **{})
            assert "\\" not in text
            assert not re.search(rf"\d\n\s*{units}\b", text), width
    sheet = _note(SAMPLE_CASES["thiazide_and_vomiting.yaml"], output_format="text", worksheet=True, width=45)
    assert "\\" not in sheet and not re.search(rf"\d\n\s*{units}\b", sheet)


def test_one_dash_for_ranges_and_one_form_for_durations() -> None:
    dates = re.compile(r"\d{4}-\d{2}-\d{2}|LOINC [0-9-]+")  # dates and codes keep their hyphens
    for case in SAMPLE_CASES.values():
        for options in ({}, {"brief": True}):
            note = dates.sub("", _note(case, **options))
            assert not re.search(r"\d-\d", note), options  # ranges take the en dash
            assert not re.search(r"\d h\b", note)
    sheet = _note(SAMPLE_CASES["thiazide_and_vomiting.yaml"], worksheet=True)
    assert "last dose 40 hours ago" in sheet and "40 h " not in sheet
    assert "(range 47.8–51.8 mmHg)" in sheet


def test_a_value_is_shown_as_it_was_reported() -> None:
    base = {"gas": {"sample": "arterial", "ph": 7.48, "pco2": 46, "hco3": 34}}
    for written, shown in ((1.0, "1.0 mg/dL"), (1, "1 mg/dL"), ("1.10 mg/dL", "1.10 mg/dL"), (1.25, "1.25 mg/dL")):
        case = validate_case({**base, "chem": {"creatinine": written}})
        assert f"| Creatinine | {shown} | unchanged | case file |" in _note(case, worksheet=True), written


def test_a_value_near_a_threshold_is_called_near() -> None:
    # CKD-EPI 2021 (Inker et al., NEJM 2021): eGFR 43 for the thiazide sample; the cut-off is 40 (common practice)
    sheet = _note(SAMPLE_CASES["thiazide_and_vomiting.yaml"], worksheet=True)
    assert "eGFR 43 mL/min/1.73 m2 is near 40 mL/min/1.73 m2, probably enough" in sheet
    assert "eGFR 43 mL/min/1.73 m2 is enough" not in sheet
    far = _drafter().assess(alkalosis_case(urine_cl=12, creatinine=0.9))
    gfr = next(c for c in far.differential if c.cause == "reduced_gfr")
    assert [e.id for e in gfr.opposing] == ["egfr_adequate"]


def test_the_one_formatter_for_ranges_and_durations() -> None:
    from notegen._format import format_hours, format_range

    assert format_range(7.35, 7.45, digits=2, fixed=True) == "7.35\u20137.45"
    assert format_range(47.8, 51.8, "mmHg") == "47.8\u201351.8 mmHg"
    assert format_range(8, 16, "mmol/L") == "8\u201316 mmol/L"
    assert (format_hours(40), format_hours(1.0), format_hours(1.5)) == ("40 hours", "1 hour", "1.5 hours")


def test_the_paragraph_and_the_reading_steps_print_a_ph_alike() -> None:
    case = validate_case({"gas": {"sample": "arterial", "ph": 7.485, "pco2": 47, "hco3": 35}})
    assessment = _drafter().assess(case)
    assert "pH 7.485" in _note(case, brief=True)
    steps = " ".join(assessment.acid_base.findings)
    assert "pH 7.485 is alkalemic" in steps and "(reported 7.485," in steps  # not 7.49 from a second rounding
    assert "7.49" not in steps


def test_every_shipped_test_has_its_clinical_sentence() -> None:
    sentences = shipped_knowledge().next_test_sentences
    for test in shipped_knowledge().alkalosis_pack.spec.tests:
        text = sentences.get(test.id, "")
        assert text.endswith(".") and text.count(". ") == 0, test.id  # one sentence
        assert not INTERNAL.search(text), test.id


def test_the_library_offers_the_worksheet_as_the_command_does() -> None:
    import notegen

    path = str(SAMPLES[0])
    chart, with_sheet = notegen.draft(path), notegen.draft(path, worksheet=True)
    assert "# Worksheet" not in chart.markdown and "# Worksheet" in with_sheet.markdown
    assert with_sheet.to_dict() == chart.to_dict()


def _record_system_bundle() -> dict[str, Any]:
    """The sample bundle as a record system would send it: with a blood count, liver tests and lipids
    besides (invented values; LOINC codes of tests an acid-base assessment does not read)."""
    bundle = json.loads(FHIR_BUNDLE.read_text(encoding="utf-8"))
    others = {"6690-2": "Leukocytes", "777-3": "Platelets", "1742-6": "ALT", "1920-8": "AST",
              "1975-2": "Bilirubin", "6768-6": "Alkaline phosphatase", "2093-3": "Cholesterol", "4548-4": "HbA1c"}
    for code, name in others.items():
        bundle["entry"].append({"resource": {
            "resourceType": "Observation", "id": f"obs-{code}", "status": "final",
            "subject": {"reference": "Patient/pt-1"}, "effectiveDateTime": "2024-03-01T06:00:00Z",
            "code": {"coding": [{"system": "http://loinc.org", "code": code, "display": name}]},
            "valueQuantity": {"value": 1, "unit": "1", "system": "http://unitsofmeasure.org", "code": "1"},
        }})  # fmt: skip
    return bundle


def test_tests_outside_the_assessment_take_one_line_of_the_chart_note() -> None:
    from notegen.intake.read import read_case_data

    case = read_case_data(_record_system_bundle(), name="bundle")
    assert len(case.outside) == 10  # the eight added, the sample's hemoglobin and its Condition
    note = _note(case)
    assert note.count("is not read for an acid-base assessment") == 0
    summary = "- The FHIR input also held 9 Observations and 1 Condition that an acid-base assessment does not read.\n"
    assert summary in note
    assert len(_note(case, output_format="text").split()) <= CHART_WORDS
    worksheet = _note(case, worksheet=True)
    assert "(listed in the worksheet below)" in worksheet
    assert worksheet.count("is not read for an acid-base assessment") == 10
    assert "LOINC 4548-4 (HbA1c)" in worksheet.split("# Worksheet", 1)[1]
