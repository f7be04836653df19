"""The note: section order, banner, brief and explain, every format, literal user text, service templates."""

from __future__ import annotations

import json
import re
from functools import cache
from pathlib import Path
from typing import Any

import pytest

from notegen.assess.model import Assessment
from notegen.case.validation import validate_case
from notegen.errors import TemplateError, UsageError
from notegen.intake.read import read_case
from notegen.note.writer import complete_assessment, note_context, render_markdown, render_note
from notegen.pipeline import Drafter, DraftOptions
from notegen.workup.model import CauseEntry, Evidence, FactorEntry, SuggestedTest, TraceEntry

SAMPLES = Path(__file__).resolve().parents[2] / "samples"
FORMATS = ("markdown", "text", "html", "json")


@cache
def _drafter() -> Drafter:
    return Drafter()


def sample(stem: str) -> Assessment:
    return _drafter().assess(read_case(str(SAMPLES / f"{stem}.yaml")))


def assess(data: dict[str, Any]) -> Assessment:
    return _drafter().assess(validate_case(data))


def ev(text: str, strength: str = "strong") -> Evidence:
    return Evidence(id="e", strength=strength, text=text, facts={"k": 2.8}, source="common practice")  # type: ignore[arg-type]


def worked_up(assessment: Assessment) -> Assessment:
    """The thiazide-and-vomiting sample with a hand-built work-up, as the rule walk would give it."""
    gastric = CauseEntry.model_validate(
        {
            "cause": "gastric_loss",
            "label": "gastric acid loss",
            "tier": "likely",
            "for": [ev("Vomiting for three days."), ev("Urine chloride 14 mmol/L, below 20 mmol/L.")],
            "against": [],
            "undecided": ["whether vomiting continues"],
        }
    )
    mineralocorticoid = CauseEntry.model_validate(
        {
            "cause": "mineralocorticoid_excess",
            "label": "mineralocorticoid excess",
            "tier": "unlikely",
            "for": [],
            "against": [ev("Blood pressure 104/62 mmHg, not raised.")],
        }
    )
    return assessment.model_copy(
        update={
            "paragraph": "",  # drafted again from the hand-built work-up below
            "management": (),
            "chloride_class": "responsive",
            "chloride_notes": (),
            "generation": (),
            "differential": (gastric, mineralocorticoid),
            "maintenance": (
                FactorEntry(
                    factor="hypokalemia",
                    label="hypokalemia",
                    status="present",
                    text="Potassium 2.8 mmol/L.",
                    source="common practice",
                ),
            ),
            "next_tests": (
                SuggestedTest(
                    test="serum_magnesium", label="repeat serum magnesium", why="low magnesium blocks repletion"
                ),
            ),
            "trace": (
                TraceEntry(
                    kind="node",
                    id="urine_chloride_low",
                    condition="urine chloride below 20 mmol/L",
                    values={"urine_cl": "14 mmol/L"},
                    outcome="true",
                    goes_to="responsive",
                    source="Luke & Galla, JASN 2012",
                ),
            ),
        }
    )


def draft(assessment: Assessment, **options: Any) -> str:
    return render_note(assessment, DraftOptions(**options))


# Layout ----------------------------------------------------------------------------------------

CHART_SECTIONS = [
    "# Acid-base assessment\n\nCase: demo A: thiazide and vomiting\n\n",
    "The arterial gas (pH 7.50",
    "**Also flagged:**",
    "## Tests that would help",
    "## Management to consider",
    "## Cautions",
]
WORKSHEET_SECTIONS = [
    "# Worksheet",
    "## Values used",
    "## Calculations",
    "## Causes weighed",
    "## How it arose and what sustains it",
]
SECTIONS = CHART_SECTIONS + WORKSHEET_SECTIONS


def test_the_chart_note_leaves_the_working_to_the_worksheet() -> None:
    note = draft(worked_up(sample("thiazide_and_vomiting")))
    assert all(section in note for section in CHART_SECTIONS)
    assert not any(section in note for section in WORKSHEET_SECTIONS)
    assert "Source:" not in note and "Formula:" not in note


def test_sections_come_in_order() -> None:
    note = draft(worked_up(sample("thiazide_and_vomiting")), worksheet=True)
    positions = [note.find(section) for section in SECTIONS]
    assert -1 not in positions, [s for s, p in zip(SECTIONS, positions, strict=True) if p < 0]
    assert positions == sorted(positions)
    assert "## How this was reached" not in note
    assert "Critical values" not in note
    assert not re.search(r"\n{3,}", note) and note.endswith("\n") and not note.endswith("\n\n")


def test_the_work_up_sections_carry_the_findings() -> None:
    note = draft(worked_up(sample("thiazide_and_vomiting")), worksheet=True)
    assert "**Chloride class:** chloride-responsive" in note
    assert "**Chloride class:** chloride-responsive.\n" in note
    assert "### Gastric acid loss: likely" in note
    assert "- For (strong): Vomiting for three days. Source: common practice." in note
    assert (
        "### Unlikely\n\n- **Mineralocorticoid excess:** Blood pressure 104/62 mmHg, not raised. "
        "Source: common practice." in note
    )
    assert "Not settled" not in note
    assert "- **Hypokalemia:** Potassium 2.8 mmol/L. Source: common practice." in note
    # the test's reason is the one clinical sentence of rules/vocabulary/next_tests.yaml, not the walk's words
    assert "- **Repeat serum magnesium:** A low magnesium keeps potassium losses going and repletion" in note


def test_an_undetermined_factor_says_only_what_is_missing() -> None:
    def factor(factor_id: str, label: str, text: str) -> FactorEntry:
        return FactorEntry(factor=factor_id, label=label, status="undetermined", text=text, source="common practice")

    assessment = worked_up(sample("thiazide_and_vomiting")).model_copy(
        update={
            "maintenance": (
                factor(
                    "mineralocorticoid_activity", "mineralocorticoid activity", "x: cannot tell; aldosterone not given."
                ),
                factor("volume_contraction", "chloride and volume depletion", "y: cannot tell; the data not given."),
            )
        }
    )
    note = draft(assessment, worksheet=True)
    assert (
        "- **Mineralocorticoid activity:** not determined from these values (aldosterone not given). "
        "Source: common practice."
    ) in note
    assert "- **Chloride and volume depletion:** not determined from these values. Source: common practice." in note
    assert "cannot tell" not in note


def test_a_test_reason_is_one_clinical_sentence_and_whole_in_json() -> None:
    why = (
        "Best sent before saline. Urine chloride not given; the result would decide: chloride class (now unknown; "
        "could be responsive or resistant); chloride-resistant subtype (now waiting on the chloride class; could "
        "be not resistant or normotensive, subtype still open); diuretic use (now possible; could become likely)."
    )
    test = SuggestedTest(test="urine_chloride", label="spot urine chloride", why=why)
    assessment = worked_up(sample("thiazide_and_vomiting")).model_copy(update={"next_tests": (test,)})
    note = draft(assessment)
    assert (
        "- **Spot urine chloride:** Best sent before saline and after any diuretic has worn off; a low value makes "
        "the alkalosis chloride-responsive, a high one points to an active diuretic, mineralocorticoid excess or a "
        "tubulopathy.\n"
    ) in note
    for internal in ("now waiting", "could be", "could become", "subtype still open", "(now "):
        assert internal not in note
    assert json.loads(draft(assessment, output_format="json"))["next_tests"][0]["why"] == why
    unknown = assessment.model_copy(update={"next_tests": (test.model_copy(update={"test": "a_service_test"}),)})
    assert "- **Spot urine chloride**\n" in draft(unknown)  # a service's own test: its label alone


def test_unlikely_causes_give_their_sources_plainly() -> None:
    note = draft(sample("gastric_suction"), worksheet=True)
    unlikely = note[note.index("### Unlikely") : note.index("## How it arose")]
    assert "((" not in unlikely and "))" not in unlikely
    assert (
        "- **Mineralocorticoid excess:** Urine chloride <10 mmol/L is low, so the kidney is conserving chloride. "
        "Source: Luke & Galla, JASN 2012;23:204. Blood pressure 112/66 mmHg is not raised."
    ) in unlikely


def test_data_table_shows_units_as_reported_and_converted() -> None:
    note = draft(sample("venous_si_units"), worksheet=True)
    assert "| PvCO2 | 6.1 kPa | 45.8 mmHg | case file |" in note
    assert "| Creatinine | 70 µmol/L | 0.792 mg/dL | case file |" in note
    assert "| BUN | 6.8 mmol/L urea | 19 mg/dL | case file |" in note
    gastric = draft(sample("gastric_suction"), worksheet=True)
    assert "| Urine chloride | <10 mmol/L | unchanged | case file |" in gastric


def test_unrecognised_input_is_listed() -> None:
    assessment = assess(
        {"gas": {"ph": 7.5, "pco2": 48, "hco3": 36}, "context": {"meds": ["zzfake"], "findings": ["odd"]}}
    )
    note = draft(assessment, worksheet=True)
    assert "zzfake (not in the vocabulary, not reasoned with)" in note
    assert "**Given but not used:**" in note
    assert "Finding 'odd' is not recognised" in note


def test_calculations_show_formula_inputs_result_and_source() -> None:
    note = draft(sample("thiazide_and_vomiting"), worksheet=True)
    assert (
        "- **Anion gap: 8 mmol/L**\\\n  Formula: Na - (Cl + HCO3)\\\n"
        "  Inputs: Na 131 mmol/L, Cl 84 mmol/L, HCO3 (panel total CO2) 39 mmol/L\\\n"
    ) in note
    # CKD-EPI 2021 (Inker et al., NEJM 2021): female 74 years, creatinine 1.3 mg/dL -> about 43.
    assert "- **eGFR (CKD-EPI 2021): 43 mL/min/1.73 m2**" in note
    assert "Also computed, without bearing on this reading: Expected HCO3 if the PaCO2 change is acute" in note


def test_banner_only_when_an_alert_is_critical() -> None:
    assessment = assess({"case": "bed 4", "gas": {"sample": "arterial", "ph": 7.62, "pco2": 50, "hco3": 50}})
    assert any(alert.level == "critical" for alert in assessment.alerts)
    note = draft(assessment)
    lines = note.splitlines()
    assert lines[:4] == ["# Acid-base assessment", "", "Case: bed 4", ""]
    assert lines[4].startswith("> **Critical values:** pH 7.62 is at or above 7.6: severe alkalemia")
    assert lines[5] == "" and lines[6].startswith("The arterial gas (pH 7.62")
    for stem in ("thiazide_and_vomiting", "chronic_co2_retention"):
        assert "Critical values" not in draft(sample(stem))


def test_brief_is_the_paragraph_the_alerts_and_one_line_of_caution() -> None:
    assessment = assess({"gas": {"sample": "arterial", "ph": 7.62, "pco2": 50, "hco3": 50}, "chem": {"k": 2.8}})
    brief = draft(assessment, brief=True)
    blocks = brief.strip("\n").split("\n\n")
    assert blocks[0].startswith("> **Critical values:**")
    assert blocks[1] == complete_assessment(assessment).paragraph
    assert blocks[2] == "**Also flagged:**"
    assert blocks[3].startswith("- Potassium 2.8 mmol/L")
    assert blocks[4].startswith("*Draft from the values given, for the responsible clinician")
    assert len(blocks) == 5 and "#" not in brief


def test_brief_keeps_what_was_given_but_not_used() -> None:
    # a pasted line set aside, or a word notegen does not know, changes how the paragraph reads
    assessment = assess(
        {
            "gas": {"sample": "arterial", "ph": 7.49, "pco2": 48, "hco3": 36},
            "context": {"meds": ["an unlisted tablet"]},
        }
    )
    brief = draft(assessment, brief=True)
    blocks = brief.strip("\n").split("\n\n")
    at = blocks.index("**Given but not used:**")
    assert blocks[at + 1] == (
        "- Medication 'an unlisted tablet' is not recognised; it is listed but not reasoned with"
    )
    assert blocks[at + 2].startswith("*Draft from the values given")
    plain = assess({"gas": {"sample": "arterial", "ph": 7.4, "pco2": 40, "hco3": 24}})
    assert "Given but not used" not in draft(plain, brief=True)


def test_unrecognised_names_share_one_line_per_kind() -> None:
    # an inpatient lists many drugs with no acid-base role: one line each would crowd the chart note
    assessment = assess(
        {
            "gas": {"sample": "arterial", "ph": 7.49, "pco2": 48, "hco3": 36},
            "context": {
                "meds": ["furosemide", "meropenem", "hydroxychloroquine", "meropenem"],
                "findings": ["pneumonia", "vomiting", "delirium"],
            },
        }
    )
    lines = [line for line in draft(assessment).splitlines() if "not recognised" in line]
    assert lines == [
        "- Medications 'meropenem' and 'hydroxychloroquine' are not recognised; they are listed but not "
        "reasoned with",
        "- Findings 'pneumonia' and 'delirium' are not recognised; they are listed but not reasoned with",
    ]


def test_explain_adds_the_reasoning() -> None:
    assessment = worked_up(sample("thiazide_and_vomiting"))
    explained = draft(assessment, explain=True)
    assert explained.index("## Cautions") < explained.index("## How this was reached")
    assert "1. The gas is internally consistent" in explained
    assert (
        "| node urine\\_chloride\\_low | urine chloride below 20 mmol/L | urine\\_cl = 14 mmol/L | true | "
        "responsive | Luke & Galla, JASN 2012 |"
    ) in explained
    no_walk = draft(sample("chronic_co2_retention"), explain=True)
    assert "No rule walk was recorded for this case." in no_walk


def test_differential_says_why_it_is_absent() -> None:
    assert "No metabolic alkalosis on these values, so no alkalosis differential applies." in draft(
        sample("chronic_co2_retention"), worksheet=True
    )
    no_walk = sample("gastric_suction").model_copy(update={"chloride_class": None, "differential": ()})
    assert "have not been weighed in this draft" in draft(no_walk, worksheet=True)
    assert "### Gastric acid loss: likely" in draft(sample("gastric_suction"), worksheet=True)


# Formats ---------------------------------------------------------------------------------------


def test_text_is_plain_and_wrapped() -> None:
    text = draft(worked_up(sample("thiazide_and_vomiting")), output_format="text", width=60)
    assert "**" not in text and "##" not in text and "\\" not in text
    assert text.startswith("ACID-BASE ASSESSMENT\n\nCase: demo A: thiazide and vomiting\n")
    assert all(len(line) <= 60 or " " not in line.strip() for line in text.splitlines())
    ascii_text = draft(sample("venous_si_units"), output_format="text", ascii_only=True, worksheet=True)
    assert ascii_text.isascii() and "70 umol/L" in ascii_text


def test_html_is_a_page_with_the_banner_framed() -> None:
    assessment = assess({"case": "bed 4", "gas": {"sample": "arterial", "ph": 7.62, "pco2": 50, "hco3": 50}})
    page = draft(assessment, output_format="html", worksheet=True)
    assert page.startswith("<!DOCTYPE html>") and page.endswith("</html>\n")
    assert "<title>Acid-base assessment — bed 4</title>" in page
    assert '<blockquote class="critical-banner">' in page
    assert "<h2>Values used</h2>" in page and "<table>" in page


def test_json_is_the_completed_assessment() -> None:
    assessment = worked_up(sample("thiazide_and_vomiting"))
    text = draft(assessment, output_format="json")
    assert text.endswith("}\n")
    data = json.loads(text)
    assert data["paragraph"] == complete_assessment(assessment).paragraph != ""
    assert any("potassium chloride" in item.lower() for item in data["management"])
    assert data["differential"][0]["for"][0]["text"] == "Vomiting for three days."
    assert set(data["calculations"]["anion_gap"]) >= {"value", "unit", "formula", "source"}
    assert data["schema_version"] == "1.0" and data["chloride_class"] == "responsive"


def test_json_ignores_brief_and_explain() -> None:
    assessment = sample("gastric_suction")
    assert draft(assessment, output_format="json", brief=True) == draft(assessment, output_format="json")


def test_a_completed_assessment_is_kept() -> None:
    assessment = sample("gastric_suction").model_copy(update={"paragraph": "Set upstream.", "management": ("x",)})
    assert json.loads(draft(assessment, output_format="json"))["paragraph"] == "Set upstream."
    assert "Set upstream." in draft(assessment)


def test_unknown_format_is_a_usage_error() -> None:
    with pytest.raises(UsageError, match="unknown output format 'pdf'"):
        draft(sample("gastric_suction"), output_format="pdf")


# Case text is data ----------------------------------------------------------------------------

LITERAL = "{{ 7*7 }} {% if true %}x{% endif %}"


def literal_case() -> Assessment:
    return assess(
        {
            "case": LITERAL,
            "gas": {"sample": "arterial", "ph": 7.49, "pco2": 48, "hco3": 36},
            "context": {"meds": ["{{ 7*7 }} tablets", "<script>alert(1)</script>"]},
        }
    )


@pytest.mark.parametrize("fmt", FORMATS)
def test_template_syntax_in_case_text_prints_literally(fmt: str) -> None:
    output = draft(literal_case(), output_format=fmt)
    if fmt == "markdown":
        assert "{{ 7\\*7 }} {% if true %}x{% endif %}" in output  # renders as the label itself
    elif fmt == "json":
        data = json.loads(output)
        assert data["case"]["label"] == LITERAL
        assert data["case"]["context"]["meds"][0]["name"] == "{{ 7*7 }} tablets"
    else:
        assert LITERAL in output and "{{ 7*7 }} tablets" in output
    assert "49" not in output.replace("7.49", "")


def test_script_is_escaped_in_html() -> None:
    page = draft(literal_case(), output_format="html")
    assert "<script>" not in page
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in page


# A service's own template ----------------------------------------------------------------------


def test_service_template_renders_in_the_sandbox(tmp_path: Path) -> None:
    template = tmp_path / "ours.md.j2"
    template.write_text(
        "## Acid-base ({{ assessment.acid_base.primary }})\n\n{{ paragraph | md }}\n\n"
        '{% include "parts/cautions.md.j2" %}',
        encoding="utf-8",
    )
    assessment = sample("gastric_suction")
    note = render_note(assessment, DraftOptions(), template=template)
    assert note.startswith("## Acid-base (metabolic_alkalosis)\n\nThe arterial gas (pH 7.49")
    assert "## Cautions" in note
    text = render_note(assessment, DraftOptions(output_format="text"), template=template)
    assert text.startswith("ACID-BASE (METABOLIC_ALKALOSIS)")


def test_service_template_without_the_disclaimer_gets_it_appended(tmp_path: Path) -> None:
    template = tmp_path / "bare.md.j2"
    template.write_text("{{ paragraph | md }}\n", encoding="utf-8")
    note = render_note(sample("gastric_suction"), DraftOptions(), template=template)
    assert note.startswith("The arterial gas (pH 7.49")
    assert note.endswith(
        "\n\n*Draft from the values given, for the responsible clinician to check against the chart, edit and sign. "
        "Reference ranges vary by laboratory (this draft used pH 7.35–7.45 and an anion gap of 8–16 mmol/L); "
        "adults only; local protocols take precedence.*\n"
    )


def test_service_template_cannot_reach_python_internals(tmp_path: Path) -> None:
    template = tmp_path / "evil.md.j2"
    template.write_text("ok\n{{ paragraph.__class__.__mro__ }}\n", encoding="utf-8")
    with pytest.raises(TemplateError) as caught:
        render_note(sample("gastric_suction"), DraftOptions(), template=template)
    assert "evil.md.j2" in str(caught.value)


def test_service_template_errors_name_the_line(tmp_path: Path) -> None:
    template = tmp_path / "typo.md.j2"
    template.write_text("line one\nline two\n{{ paragrph }}\n", encoding="utf-8")
    with pytest.raises(TemplateError) as caught:
        render_note(sample("gastric_suction"), DraftOptions(), template=template)
    assert caught.value.line == 3 and "paragrph" in str(caught.value)


def test_service_template_cannot_change_the_context(tmp_path: Path) -> None:
    template = tmp_path / "mutate.md.j2"
    template.write_text("{{ management.append('x') }}\n", encoding="utf-8")
    with pytest.raises(TemplateError, match="sandbox"):
        render_note(sample("gastric_suction"), DraftOptions(), template=template)


def test_missing_service_template(tmp_path: Path) -> None:
    with pytest.raises(TemplateError, match="not found"):
        render_markdown(sample("gastric_suction"), DraftOptions(), template=tmp_path / "absent.md.j2")


def test_context_is_plain_data() -> None:
    context = note_context(complete_assessment(sample("thiazide_and_vomiting")), DraftOptions())

    def walk(value: object) -> None:
        if isinstance(value, dict):
            for item in value.values():
                walk(item)
        elif isinstance(value, list):
            for item in value:
                walk(item)
        else:
            assert value is None or isinstance(value, str | int | float | bool), type(value)

    walk(context)


def test_a_word_like_egfr_keeps_its_case_at_the_start_of_a_line() -> None:
    from notegen.render.filters import sentence_case

    assert sentence_case("eGFR (serum creatinine, age and sex)") == "eGFR (serum creatinine, age and sex)"
    assert sentence_case("urine chloride") == "Urine chloride"
