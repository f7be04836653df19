"""Management considerations: loading, checking against the loaded pack, and agreement with the rest of the note.

Every case here is invented.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest
from management_cases import ACIDOSIS, BASE, assess, case
from typer.testing import CliRunner

from notegen import acidbase
from notegen.assess.considerations import check_considerations, load_considerations, management_considerations
from notegen.assess.facts import ALERT_CODES
from notegen.case.validation import validate_case
from notegen.cli.app import app
from notegen.errors import RulePackError
from notegen.note.writer import complete_assessment
from notegen.pipeline import Drafter, DraftOptions, check_rule_folders

LOW_K = {"k": 3.0}


# Loading and checking --------------------------------------------------------------------------

ONE = (
    "considerations:\n  - id: ours\n    when: {fact: metabolic_alkalosis, is: true}\n"
    "    says: Our wording.\n    source: local protocol\n"
)


def write(folder: Path, name: str, text: str) -> Path:
    (folder / name).parent.mkdir(parents=True, exist_ok=True)
    (folder / name).write_text(text, encoding="utf-8")
    return folder


def test_a_service_folder_replaces_by_id_and_adds(tmp_path: Path) -> None:
    folder = write(
        tmp_path,
        "management.yaml",
        "considerations:\n"
        "  - id: chloride_class_unknown\n"
        "    when: {fact: metabolic_alkalosis, is: true}\n"
        "    says: Our unit's wording.\n"
        "    source: local protocol\n" + ONE.removeprefix("considerations:\n"),
    )
    result = management_considerations(assess(BASE), rules_dirs=[folder])
    assert result[0] == "Our unit's wording." and result[-1] == "Our wording."


def test_the_example_service_folder_adds_its_consideration_where_it_applies() -> None:
    service = Path(__file__).resolve().parents[2] / "samples" / "service"
    assert check_rule_folders((service,)) == []
    low = management_considerations(assess(case(chem=LOW_K)), rules_dirs=[service])
    assert low[-1].startswith("Our ward potassium protocol")
    kidney_failure = management_considerations(assess(case(chem={**LOW_K, "creatinine": 6.0})), rules_dirs=[service])
    assert not any(text.startswith("Our ward") for text in kidney_failure)


def test_a_folder_without_the_file_changes_nothing(tmp_path: Path) -> None:
    assert management_considerations(assess(BASE), rules_dirs=[tmp_path]) == management_considerations(assess(BASE))


SERVICE_CAUSE = """\
causes:
  - id: tube_feed_alkali
    label: alkali in the tube feed
    evidence:
      for:
        - id: feed_alkali
          when: {fact: alkali_listed, is: true}
          strength: strong
          says: "An alkali is listed."
          source: local protocol
"""
SERVICE_MANAGEMENT = """\
considerations:
  - id: tube_feed_review
    when: {fact: cause_tube_feed_alkali, is: true}
    says: Our nutrition team reviews the feed's alkali content.
    source: local protocol
"""


def test_a_service_cause_can_be_named_in_its_own_management_file(tmp_path: Path) -> None:
    folder = write(write(tmp_path, "alkalosis/ours.yaml", SERVICE_CAUSE), "management.yaml", SERVICE_MANAGEMENT)
    assert check_rule_folders((folder,)) == []
    case_data = case(context={"meds": ["sodium citrate"]})
    note = Drafter(rules_dirs=(folder,)).draft(validate_case(case_data))
    assert "Our nutrition team reviews the feed's alkali content." in note
    assert "Our nutrition team" not in Drafter().draft(validate_case(case_data))


def test_check_pack_and_draft_agree_on_a_cause_the_folder_does_not_define(tmp_path: Path) -> None:
    folder = write(tmp_path, "management.yaml", SERVICE_MANAGEMENT)  # no alkalosis/ folder adds the cause
    expected = f"{folder / 'management.yaml'}:3: unknown fact `cause_tube_feed_alkali`"
    assert check_rule_folders((folder,)) == [expected]
    with pytest.raises(RulePackError) as caught:
        Drafter(rules_dirs=(folder,)).draft(validate_case(BASE))
    assert str(caught.value) == expected
    result = CliRunner().invoke(app, ["check-pack", str(folder)])
    assert result.exit_code == 2 and result.stderr.startswith(expected)


@pytest.mark.parametrize(
    ("text", "line", "message"),
    [
        (ONE.replace("metabolic_alkalosis", "metabolic_alkalosys"), 3, "unknown fact `metabolic_alkalosys`"),
        (ONE.replace("{fact: metabolic_alkalosis, is: true}", "{fact: k, below: 3}"), 3, "has no unit"),
        (ONE.replace("{fact: metabolic_alkalosis, is: true}", "{fact: k, below: k_lo}"), 3, "unknown setting"),
        (ONE.replace("{fact: metabolic_alkalosis, is: true}", "{fact: volume, is: dry}"), 3, "not a value"),
        (ONE.replace("{fact: metabolic_alkalosis, is: true}", "{fact: k, under: 3}"), 3, "unknown word"),
        (ONE.replace("Our wording.", "Our {wording}."), 4, "placeholder `{wording}`"),
        (ONE.replace("    source: local protocol\n", ""), 2, "source"),
        (ONE + "    never_when:\n      - {if: {fact: edema, is: true}, because: x}\n", 7, "source"),
        (ONE + ONE.removeprefix("considerations:\n"), 6, "used twice"),
        (ONE.replace("    says: Our wording.\n", "    says: a\n    says: b\n"), 5, "duplicate key"),
        ("advice: []\n", 1, "unknown section `advice`"),
        (ONE.replace("{fact: metabolic_alkalosis, is: true}", "{alkalosis: true}"), 3, "needs `fact:`"),
        (ONE + "    unless:\n      - {fact: edema, is: true}\n", 6, "unless"),
        ("medication_groups:\n  - {id: x, classes: [antifungal], label: x}\n", 2, "medication class `antifungal`"),
        ("settings:\n  - {id: k_low_below, value: 3, unit: mmol/L, source: x}\n", 2, "name of a pack setting"),
        (ONE + "    answers_alerts: [hypokalemya]\n", 6, "alert code `hypokalemya`"),
    ],
    ids=[
        "unknown fact",
        "no unit",
        "unknown setting",
        "enum value",
        "unknown operator",
        "placeholder",
        "no source",
        "contraindication without source",
        "duplicate id",
        "duplicate key",
        "unknown section",
        "old condition keys",
        "old unless",
        "unknown class",
        "setting clash",
        "unknown alert code",
    ],
)
def test_broken_files_are_refused_with_file_and_line(tmp_path: Path, text: str, line: int, message: str) -> None:
    folder = write(tmp_path, "management.yaml", text)
    problems = check_considerations([folder])
    assert problems, text
    filename, where, what = problems[0]
    assert filename.endswith("management.yaml") and where == line and message in what, problems
    with pytest.raises(RulePackError):
        load_considerations([folder])


# Agreement with the alerts, the tests section and the calculations -----------------------------


def test_the_alert_codes_the_considerations_know_are_those_notegen_raises() -> None:
    source = "".join(p.read_text(encoding="utf-8") for p in Path(acidbase.__file__).parent.glob("*.py"))
    raised = set(re.findall(r'code="([a-z_]+)"|_alert\(\s*"([a-z_]+)"', source, re.MULTILINE))
    codes = {a or b for a, b in raised}
    assert codes <= set(ALERT_CODES), codes - set(ALERT_CODES)
    assert all(code in source for code in ALERT_CODES)


def test_no_alert_assumes_an_alkalosis_or_asks_for_a_measured_magnesium() -> None:
    acidosis = assess(ACIDOSIS)  # magnesium measured
    messages = " ".join(a.message for a in acidosis.alerts)
    assert "hypokalemia" in messages and "alkalosis" not in messages and "magnesium" not in messages
    assert "chloride" not in " ".join(acidosis.management).lower()
    unmeasured = assess(case(ACIDOSIS, chem={"mg": None, "k": 2.2}))
    assert "an ECG, cardiac monitoring, prompt repletion and a magnesium level" in unmeasured.alerts[0].message


def test_magnesium_is_asked_for_in_one_place_only_when_not_measured() -> None:
    measured = Drafter().draft(validate_case(case(chem=LOW_K)))
    assert "magnesium level" not in measured and "Magnesium has not been measured" not in measured
    unmeasured = Drafter().draft(validate_case(case(chem={**LOW_K, "mg": None})))
    # asked for once: the suggested tests name it with why, so neither the alert nor a consideration repeats it
    assert unmeasured.count("**Serum magnesium:**") == 1
    assert "Magnesium has not been measured" not in unmeasured and "magnesium level" not in unmeasured
    assert "No further test is suggested" not in unmeasured  # the wording that contradicted it


def test_the_chloride_deficit_is_never_a_figure_in_the_note() -> None:
    data = case(chem={"cl": 84}, context={"volume": "low"})
    note = Drafter().draft(validate_case(data))
    assert "deficit" not in note.lower()
    deficit = Drafter().note(data).to_dict()["calculations"]["chloride_deficit"]
    assert deficit["unit"] == "mmol" and "an estimate, not an amount to give" in deficit["note"]


def test_the_json_and_the_explained_note_say_what_was_held_back_and_why() -> None:
    # Invented: heart failure with edema, potassium low, on furosemide; acetazolamide is held back.
    data = case(chem=LOW_K, context={"volume": "high", "findings": ["heart_failure"], "meds": ["furosemide"]})
    assessment = complete_assessment(assess(data))
    withheld = {item.id: item.reasons for item in assessment.management_withheld}
    assert "acetazolamide_in_overload" in withheld
    (reason,) = withheld["acetazolamide_in_overload"]
    assert reason.startswith("potassium low or not measured") and "[acetazolamide product label" in reason
    assert not any("acetazolamide" in text.lower() for text in assessment.management)
    explained = Drafter().draft(validate_case(data), DraftOptions(explain=True))
    assert "Considerations held back for this patient, and why:" in explained
    assert "- Acetazolamide in overload: potassium low or not measured" in explained
    assert "held back" not in Drafter().draft(validate_case(data))


def test_an_undecided_contraindication_is_named_as_such() -> None:
    data = case(chem={"k": None}, context={"volume": "high", "findings": ["edema"]})
    withheld = {item.id: item.reasons for item in complete_assessment(assess(data)).management_withheld}
    assert withheld["acetazolamide_in_overload"][0].startswith("cannot be ruled out from the values given: potassium")


def test_an_alert_is_stated_without_the_advice_a_printed_consideration_carries(tmp_path: Path) -> None:
    # Potassium 2.8 mmol/L (invented): "consider repletion" beside "Potassium repletion is indicated" said it twice.
    case_data = case(chem={"k": 2.8})
    note = Drafter().draft(validate_case(case_data))
    assert "- Potassium 2.8 mmol/L is below 3 mmol/L: hypokalemia.\n" in note
    assert "Potassium repletion is indicated" in note
    # A service whose potassium sentence does not answer the alert: the alert keeps its own advice.
    folder = write(
        tmp_path,
        "management.yaml",
        "considerations:\n  - id: potassium_repletion\n    when: {fact: k, below: k_low_below}\n"
        "    says: Our ward potassium protocol applies.\n    source: local protocol\n",
    )
    ours = Drafter(rules_dirs=(folder,)).draft(validate_case(case_data))
    assert "- Potassium 2.8 mmol/L is below 3 mmol/L: hypokalemia; consider repletion.\n" in ours
    # The JSON keeps the whole message.
    assessment = Drafter().assess(validate_case(case_data))
    assert [a["message"] for a in assessment.model_dump(mode="json")["alerts"] if a["code"] == "hypokalemia"] == [
        "Potassium 2.8 mmol/L is below 3 mmol/L: hypokalemia; consider repletion."
    ]
