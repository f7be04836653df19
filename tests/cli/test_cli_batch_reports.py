"""A batch refuses and reports as a single case does: nothing to assess, unknown medications. Invented cases."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from typer.testing import CliRunner

from notegen.cli.app import app

runner = CliRunner()
GOOD = "case: good\nunits: conventional\ngas: {sample: arterial, ph: 7.49, pco2: 48, hco3: 36}\n"
BLANK = "case: nothing measured\nunits: conventional\ncontext: {volume: low}\n"
UNKNOWN_MEDS = GOOD.replace("case: good", "case: odd drugs") + "context: {meds: [mysterolazine, quibblomab]}\n"
NOTHING = "nothing to assess: the case holds no measured value; give gas, chem or urine values"


def _ward(tmp_path: Path, **cases: str) -> Path:
    folder = tmp_path / "ward"
    folder.mkdir()
    for name, text in cases.items():
        (folder / f"{name}.yaml").write_text(text, encoding="utf-8")
    return folder


@pytest.mark.parametrize("jobs", ["1", "2"])
def test_a_folder_batch_refuses_a_case_with_no_measured_value(tmp_path: Path, jobs: str) -> None:
    # Before: the blank case was drafted with exit 0 in a batch, though refused on its own.
    ward = _ward(tmp_path, bed1=GOOD, bed2=BLANK, bed3=GOOD)
    out = tmp_path / "notes"
    result = runner.invoke(app, ["draft", str(ward), "--output-folder", str(out), "--jobs", jobs])
    assert result.exit_code == 2
    assert result.stderr.splitlines() == [f"notegen: {ward}/bed2.yaml: {NOTHING}", "notegen: 2 drafted, 1 rejected"]
    assert sorted(p.name for p in out.iterdir()) == ["bed1.md", "bed3.md"]


def test_json_lines_refuse_a_case_with_no_measured_value(tmp_path: Path) -> None:
    cases = tmp_path / "cases.jsonl"
    good = json.dumps({"case": "good", "gas": {"sample": "arterial", "ph": 7.49, "pco2": 48, "hco3": 36}})
    cases.write_text(good + "\n" + json.dumps({"case": "blank", "context": {"volume": "low"}}) + "\n")
    result = runner.invoke(app, ["draft", "--jsonl", str(cases), "--format", "json"])
    assert result.exit_code == 2
    rows = [json.loads(row) for row in result.stdout.splitlines()]
    assert "error" not in rows[0]
    assert rows[1]["error"] == {"message": f"{cases}:2: {NOTHING}", "field": None, "line": 2}
    assert result.stderr.splitlines() == [f"notegen: {cases}:2: {NOTHING}", "notegen: 1 drafted, 1 rejected"]


def test_the_single_case_refusal_still_offers_a_paste(tmp_path: Path) -> None:
    case = tmp_path / "blank.yaml"
    case.write_text(BLANK, encoding="utf-8")
    result = runner.invoke(app, ["draft", str(case)])
    assert (result.exit_code, result.stdout) == (2, "")
    assert result.stderr == f"notegen: {case}: {NOTHING}, or --paste a lab block\n"


@pytest.mark.parametrize("jobs", ["1", "2"])
def test_a_batch_names_unknown_medications_once_per_input(tmp_path: Path, jobs: str) -> None:
    # Before: only a single case said so on standard error; a batch said nothing.
    ward = _ward(tmp_path, bed1=GOOD, bed2=UNKNOWN_MEDS, bed3=GOOD.replace("case: good", "case: one odd drug")
                 + "context: {meds: [mysterolazine]}\n")
    result = runner.invoke(app, ["draft", str(ward), "--output-folder", str(tmp_path / "notes"), "--jobs", jobs])
    assert result.exit_code == 0, result.output
    assert result.stderr.splitlines() == [
        f"notegen: {ward}/bed2.yaml: medications 'mysterolazine', 'quibblomab' are not in notegen's vocabulary; "
        "they were kept but not reasoned with",
        f"notegen: {ward}/bed3.yaml: medication 'mysterolazine' is not in notegen's vocabulary; "
        "it was kept but not reasoned with",
        "notegen: 3 drafted, 0 rejected",
    ]


def test_json_lines_name_unknown_medications_with_their_line(tmp_path: Path) -> None:
    cases = tmp_path / "cases.jsonl"
    case = {"gas": {"sample": "arterial", "ph": 7.49, "pco2": 48, "hco3": 36}, "context": {"meds": ["quibblomab"]}}
    cases.write_text(json.dumps(case) + "\n", encoding="utf-8")
    result = runner.invoke(app, ["draft", "--jsonl", str(cases), "--format", "json"])
    assert result.exit_code == 0, result.output
    assert result.stderr.splitlines()[0] == (
        f"notegen: {cases}:1: medication 'quibblomab' is not in notegen's vocabulary; it was kept but not reasoned with"
    )
