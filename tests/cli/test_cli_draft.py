"""`notegen draft`: the note on stdout, diagnostics on stderr, exit statuses 0, 1 and 2."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from typer.testing import CliRunner

from notegen.cli.app import app

runner = CliRunner()
SAMPLE = "samples/gastric_suction.yaml"


def test_draft_prints_markdown_on_stdout_only() -> None:
    result = runner.invoke(app, ["draft", SAMPLE])
    assert result.exit_code == 0, result.output
    assert result.stdout.startswith("# ")
    assert result.stderr == ""


@pytest.mark.parametrize("output_format", ["markdown", "text", "html", "json"])
def test_every_format_drafts(output_format: str) -> None:
    result = runner.invoke(app, ["draft", SAMPLE, "--format", output_format])
    assert result.exit_code == 0, result.output
    if output_format == "json":
        assert json.loads(result.stdout)["schema_version"]
    if output_format == "html":
        assert result.stdout.lstrip().lower().startswith("<!doctype html>")
    if output_format == "text":
        assert "**" not in result.stdout and "|" not in result.stdout


def test_case_from_standard_input_matches_the_file() -> None:
    from_file = runner.invoke(app, ["draft", SAMPLE, "-f", "json"])
    from_stdin = runner.invoke(app, ["draft", "-", "-f", "json"], input=Path(SAMPLE).read_bytes())
    assert from_stdin.exit_code == 0, from_stdin.output
    assert json.loads(from_stdin.stdout)["acid_base"] == json.loads(from_file.stdout)["acid_base"]


def test_output_file_holds_the_note_and_stdout_stays_empty(tmp_path: Path) -> None:
    target = tmp_path / "note.md"
    result = runner.invoke(app, ["draft", SAMPLE, "-o", str(target)])
    assert result.exit_code == 0, result.output
    assert result.stdout == ""
    assert target.read_text(encoding="utf-8") == runner.invoke(app, ["draft", SAMPLE]).stdout


def test_set_alone_drafts_a_quick_look() -> None:
    result = runner.invoke(
        app,
        ["draft", "--set", "gas.ph=7.52", "--set", "gas.pco2=47", "--set", "gas.hco3=37",
         "--set", "chem.k=2.9", "--set", "context.meds=furosemide", "-f", "json"],
    )
    assert result.exit_code == 0, result.output
    data = json.loads(result.stdout)
    assert data["acid_base"]["primary"] == "metabolic_alkalosis"
    assert data["chloride_class"] == "unknown"
    assert data["next_tests"][0]["test"] == "urine_chloride"


def test_bad_value_exits_2_with_the_field_and_no_traceback(tmp_path: Path) -> None:
    case = tmp_path / "bad.yaml"
    case.write_text("chem:\n  creatinine: 130 mg/dL\n", encoding="utf-8")
    result = runner.invoke(app, ["draft", str(case)])
    assert result.exit_code == 2
    assert result.stdout == ""
    assert result.stderr == (
        f"notegen: {case}: field `chem.creatinine`: 130 mg/dL is not a plausible creatinine "
        "(expected 0.2 to 25 mg/dL); did you mean 130 µmol/L (1.471 mg/dL)? Give the unit explicitly.\n"
    )
    assert "Traceback" not in result.output


def test_missing_file_exits_2() -> None:
    result = runner.invoke(app, ["draft", "no/such/case.yaml"])
    assert result.exit_code == 2
    assert result.stderr == "notegen: no/such/case.yaml: no such file\n"


def test_nothing_given_is_a_usage_error() -> None:
    result = runner.invoke(app, ["draft"])
    assert result.exit_code == 2
    assert "no case given" in result.stderr


def test_unknown_option_is_a_usage_error() -> None:
    result = runner.invoke(app, ["draft", SAMPLE, "--colour"])
    assert result.exit_code == 2


def test_help_has_an_example() -> None:
    result = runner.invoke(app, ["draft", "-h"])
    assert result.exit_code == 0, result.output
    assert "Example: notegen draft samples/" in result.stdout


def test_standard_input_past_the_size_limit_is_refused() -> None:
    from notegen.intake.files import MAX_BYTES

    result = runner.invoke(app, ["draft", "-"], input=b"#" * (MAX_BYTES + 10))
    assert result.exit_code == 2
    assert result.stdout == ""
    assert "is too large for a case file" in result.stderr
