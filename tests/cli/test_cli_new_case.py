"""`notegen new-case`: a commented blank case file that validates as it stands."""

from __future__ import annotations

from pathlib import Path

from typer.testing import CliRunner

from notegen.case.validation import validate_case
from notegen.cli.app import app
from notegen.intake.files import parse_text

runner = CliRunner()


def test_blank_case_prints_and_validates() -> None:
    result = runner.invoke(app, ["new-case"])
    assert result.exit_code == 0, result.output
    assert result.stdout.startswith("# notegen case file.")
    case = validate_case(parse_text(result.stdout, "blank.yaml"))
    assert case.gas.sample == "arterial" and case.gas.ph is None and case.context.volume == "unknown"


def test_blank_case_written_to_a_file_and_never_over_one(tmp_path: Path) -> None:
    target = tmp_path / "bed12.yaml"
    first = runner.invoke(app, ["new-case", "-o", str(target)])
    assert first.exit_code == 0, first.output
    assert target.read_text(encoding="utf-8").startswith("# notegen case file.")
    second = runner.invoke(app, ["new-case", "-o", str(target)])
    assert second.exit_code == 2
    assert f"{target} exists already" in second.stderr


def test_help_has_an_example_and_h_works() -> None:
    result = runner.invoke(app, ["new-case", "-h"])
    assert result.exit_code == 0, result.output
    assert "Example: notegen new-case -o bed12.yaml" in result.stdout
