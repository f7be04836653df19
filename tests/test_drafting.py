"""The Drafter: the rule pack only when a case needs it, a service's pack always checked, JSON Lines output."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from notegen.case.validation import validate_case
from notegen.errors import RulePackError
from notegen.intake.read import read_case
from notegen.pipeline import Drafter, DraftOptions, _alkalosis_to_work_up
from notegen.workup.alkalosis import evaluate_alkalosis

ROOT = Path(__file__).parent.parent
SAMPLES = sorted((ROOT / "samples").glob("*.yaml"))
# Invented cases: a high gap hiding an alkalosis, acidoses with and without a gap, respiratory acidosis and
# alkalosis, a metabolic alkalosis; the drafter and the pack must agree on every one.
GASES = [
    {"gas": {"ph": 7.40, "pco2": 40, "hco3": 24}, "chem": {"na": 140, "cl": 90, "k": 4.0}},
    {"gas": {"ph": 7.25, "pco2": 30, "hco3": 13}, "chem": {"na": 140, "cl": 104, "k": 4.0}},
    {"gas": {"ph": 7.22, "pco2": 26, "hco3": 10}, "chem": {"na": 138, "cl": 98, "k": 5.1}},
    {"gas": {"ph": 7.30, "pco2": 60, "hco3": 29}},
    {"gas": {"ph": 7.48, "pco2": 30, "hco3": 22}},
    {"gas": {"ph": 7.52, "pco2": 46, "hco3": 37}, "chem": {"na": 139, "cl": 92, "k": 2.9}},
]


def test_the_drafter_and_the_pack_agree_on_when_the_pack_applies() -> None:
    drafter = Drafter()
    declared = [validate_case({"units": "conventional", **data}) for data in GASES]
    cases = [read_case(str(path)) for path in SAMPLES] + declared
    answers = []
    for case in cases:
        reading = drafter.assess(case).acid_base
        answers.append(_alkalosis_to_work_up(reading))
        assert answers[-1] == evaluate_alkalosis(case, reading, drafter.alkalosis_pack).applies
    assert True in answers and False in answers  # both kinds were tried


def test_a_note_without_an_alkalosis_never_walks_the_pack(monkeypatch: pytest.MonkeyPatch) -> None:
    # The engine itself is loaded for every note since the management considerations are engine
    # conditions (issue 14); the walk of the alkalosis pack runs only when there is an alkalosis.
    import notegen.workup.alkalosis as alkalosis

    def refuse(*args: object, **kwargs: object) -> None:
        raise AssertionError("the alkalosis pack was walked")

    monkeypatch.setattr(alkalosis, "walk", refuse)
    note = Drafter().draft(read_case(str(ROOT / "samples" / "chronic_co2_retention.yaml")))
    assert "renal compensation" in note


def test_a_broken_service_pack_is_reported_even_for_a_case_without_an_alkalosis(tmp_path: Path) -> None:
    (tmp_path / "alkalosis").mkdir()
    (tmp_path / "alkalosis" / "ours.yaml").write_text("causes:\n  - id: gastric_loss\n    labl: x\n", "utf-8")
    case = read_case(str(ROOT / "samples" / "chronic_co2_retention.yaml"))
    with pytest.raises(RulePackError) as info:
        Drafter(rules_dirs=(tmp_path,)).draft(case)
    assert f"{tmp_path / 'alkalosis' / 'ours.yaml'}:3" in str(info.value)


@pytest.mark.parametrize("path", SAMPLES, ids=[p.stem for p in SAMPLES])
def test_a_json_line_holds_the_json_note(path: Path) -> None:
    drafter = Drafter()
    case = read_case(str(path))
    line = drafter.draft_json_line(case, explain=True)
    assert line.endswith("\n") and "\n" not in line[:-1]
    assert json.loads(line) == json.loads(drafter.draft(case, DraftOptions(output_format="json", explain=True)))
