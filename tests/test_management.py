"""Management considerations: chosen by class, cause, factor and alert; no doses; checked at load."""

from __future__ import annotations

import re
from functools import cache
from pathlib import Path
from typing import Any

import pytest

from notegen.assess.considerations import load_considerations, management_considerations, select_considerations
from notegen.assess.model import Assessment
from notegen.case.validation import validate_case
from notegen.errors import RulePackError
from notegen.intake.read import read_case
from notegen.pipeline import Drafter
from notegen.workup.model import CauseEntry, FactorEntry

SAMPLES = Path(__file__).resolve().parent.parent / "samples"


@cache
def sample(stem: str) -> Assessment:
    return Drafter().assess(read_case(str(SAMPLES / f"{stem}.yaml")))


def assess(data: dict[str, Any]) -> Assessment:
    return Drafter().assess(validate_case(data))


def likely(cause_id: str, tier: str = "likely") -> CauseEntry:
    return CauseEntry.model_validate({"cause": cause_id, "label": cause_id, "tier": tier, "for": [], "against": []})


def ids(assessment: Assessment) -> list[str]:
    return [item.id for item in select_considerations(assessment, load_considerations())]


def test_every_consideration_has_provenance_and_no_dose() -> None:
    dose = re.compile(r"\d\s*(mg|g|mmol|meq|mEq|ml|mL|units?|mcg|µg)\b|\bper (hour|day|kg)\b", re.IGNORECASE)
    considerations = load_considerations()
    assert len(considerations) >= 15
    for item in considerations:
        assert item.source.strip(), item.id
        assert not dose.search(item.says), item.id


def test_chloride_responsive_vomiting_with_low_potassium() -> None:
    assessment = sample("thiazide_and_vomiting").model_copy(
        update={
            "chloride_class": "responsive",
            "differential": (likely("gastric_loss"), likely("diuretic"), likely("alkali_load", "unlikely")),
            "maintenance": (
                FactorEntry(factor="hypokalemia", label="hypokalemia", status="present", text="", source="x"),
            ),
        }
    )
    chosen = ids(assessment)
    assert chosen[:2] == ["generation_and_maintenance", "chloride_responsive_replacement"]
    assert {"gastric_loss", "diuretic", "potassium_repletion", "magnesium_low"} <= set(chosen)
    assert "alkali_sources" not in chosen  # an unlikely cause draws nothing
    text = " ".join(management_considerations(assessment))
    assert "isotonic sodium chloride" in text and "rate limits of local protocol" in text


def test_heart_failure_turns_saline_into_a_caution() -> None:
    assessment = sample("loop_diuretic_heart_failure").model_copy(update={"chloride_class": "responsive"})
    chosen = ids(assessment)
    assert "chloride_responsive_replacement" not in chosen
    assert {"chloride_responsive_with_overload", "acetazolamide_in_overload"} <= set(chosen)


def test_alkali_in_kidney_failure() -> None:
    chosen = ids(sample("alkali_kidney_disease"))
    assert {"alkali_sources", "reduced_kidney_function"} <= set(chosen)


def test_chronic_hypercapnia_without_alkalosis() -> None:
    assert ids(sample("chronic_co2_retention")) == ["compensated_hypercapnia"]


def test_normal_gas_draws_nothing() -> None:
    assert ids(assess({"gas": {"sample": "arterial", "ph": 7.4, "pco2": 40, "hco3": 24}})) == []


def test_magnesium_is_asked_for_only_when_not_measured() -> None:
    measured_normal = ids(sample("hypertension_low_potassium"))  # potassium 2.7, magnesium 2.0 mg/dL
    assert "potassium_repletion" in measured_normal
    assert not {"magnesium_low", "magnesium_unmeasured"} & set(measured_normal)
    unmeasured = ids(assess({"gas": {"sample": "arterial", "ph": 7.5, "pco2": 48, "hco3": 36}, "chem": {"k": 2.7}}))
    assert "magnesium_unmeasured" in unmeasured and "magnesium_low" not in unmeasured


def test_alert_level_is_matched_when_asked() -> None:
    critical = assess({"gas": {"sample": "arterial", "ph": 7.62, "pco2": 50, "hco3": 50}})
    marked = assess({"gas": {"sample": "arterial", "ph": 7.56, "pco2": 50, "hco3": 44}})
    assert "severe_alkalemia" in ids(critical)
    assert any(alert.code == "severe_alkalemia" for alert in marked.alerts)
    assert "severe_alkalemia" not in ids(marked)


# Loading ---------------------------------------------------------------------------------------


def write_pack(folder: Path, text: str) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    (folder / "management.yaml").write_text(text, encoding="utf-8")
    return folder


def test_a_service_folder_replaces_by_id_and_adds(tmp_path: Path) -> None:
    folder = write_pack(
        tmp_path / "ours",
        "considerations:\n"
        "  - id: compensated_hypercapnia\n"
        "    when: {primary: [respiratory_acidosis]}\n"
        "    says: Our respiratory team's wording.\n"
        "    source: local protocol\n"
        "  - id: local_extra\n"
        "    when: {primary: [respiratory_acidosis]}\n"
        "    says: Call the respiratory team.\n"
        "    source: local protocol\n",
    )
    result = management_considerations(sample("chronic_co2_retention"), rules_dirs=[folder])
    assert result == ("Our respiratory team's wording.", "Call the respiratory team.")


def test_a_folder_without_the_file_changes_nothing(tmp_path: Path) -> None:
    (tmp_path / "empty").mkdir()
    assessment = sample("chronic_co2_retention")
    assert management_considerations(assessment, rules_dirs=[tmp_path / "empty"]) == management_considerations(
        assessment
    )


@pytest.mark.parametrize(
    ("text", "line", "message"),
    [
        ("considerations:\n  - id: a\n    when: {cause: [gastric]}\n    says: x\n    source: y\n", 2, "unknown cause"),
        ("considerations:\n  - id: a\n    when: {colour: [red]}\n    says: x\n    source: y\n", 2, "colour"),
        (
            "considerations:\n  - id: a\n    when: {alert: ['hypokalemia:loud']}\n    says: x\n    source: y\n",
            2,
            "level",
        ),
        ("considerations:\n  - id: a\n    when: {alkalosis: true}\n    says: x\n", 2, "source"),
        (
            "considerations:\n  - id: a\n    when: {unmeasured: [chem.magnesium]}\n    says: x\n    source: y\n",
            2,
            "case field",
        ),
        (
            "considerations:\n  - id: a\n    when: {alkalosis: true}\n    says: x\n    source: y\n"
            "  - id: a\n    when: {alkalosis: true}\n    says: z\n    source: y\n",
            6,
            "used twice",
        ),
        ("considerations:\n  - id: a\n    says: x\n    says: y\n", 4, "given twice"),
        ("advice: []\n", 1, "considerations"),
    ],
    ids=[
        "unknown cause",
        "unknown key",
        "alert level",
        "no source",
        "field",
        "duplicate id",
        "duplicate key",
        "top key",
    ],
)
def test_broken_files_are_refused_with_file_and_line(tmp_path: Path, text: str, line: int, message: str) -> None:
    folder = write_pack(tmp_path / "broken", text)
    with pytest.raises(RulePackError) as caught:
        load_considerations([folder])
    (filename, where, what), *_ = caught.value.problems
    assert filename.endswith("management.yaml") and where == line and message in what


def test_acidosis_considerations_follow_the_acidosis_work_up() -> None:
    # A suspected toxic alcohol: an emergency to discuss with poison control or toxicology.
    assert "poisoning_emergency" in ids(sample("toxic_alcohol_osmolal_gap"))
    assert "bicarbonate_cautions" in ids(sample("toxic_alcohol_osmolal_gap"))  # severe acidemia, pH 7.16
    # Salicylate with hypokalemia maintaining an alkalosis: potassium before alkali.
    triple = ids(sample("salicylate_triple_disorder"))
    assert {"poisoning_emergency", "potassium_before_alkali"} <= set(triple)
    assert "bicarbonate_cautions" not in triple
    # A normal-gap acidosis from the gut raises none of them.
    assert not {"poisoning_emergency", "potassium_before_alkali", "bicarbonate_cautions"} & set(
        ids(sample("ileostomy_normal_gap"))
    )


def test_a_consideration_may_name_an_acidosis_cause_and_a_typo_fails_at_load(tmp_path: Path) -> None:
    text = "considerations:\n  - id: ours\n    when: {cause: [ketoacidosis]}\n    says: x\n    source: x\n"
    for name, cause in (("good", "ketoacidosis"), ("typo", "ketoacidosiss")):
        (tmp_path / name).mkdir()
        (tmp_path / name / "management.yaml").write_text(text.replace("ketoacidosis", cause), encoding="utf-8")
    assert "ours" in [item.id for item in load_considerations([tmp_path / "good"])]
    with pytest.raises(RulePackError):
        load_considerations([tmp_path / "typo"])
