"""`notegen draft`: the format `-o FILE` implies, options that do not apply refused with the reason,
plain metavariables in help, the folder option's names; and `check-pack` on a folder with no pack."""

from __future__ import annotations

from pathlib import Path

import pytest
from typer.testing import CliRunner

from notegen.cli.app import app, main

runner = CliRunner()
SAMPLE = str(Path(__file__).resolve().parents[2] / "samples" / "gastric_suction.yaml")
OTHER = str(Path(__file__).resolve().parents[2] / "samples" / "thiazide_and_vomiting.yaml")


@pytest.mark.parametrize(
    ("suffix", "starts"),
    [(".md", "# Acid-base assessment"), (".txt", "ACID-BASE ASSESSMENT"), (".html", "<!DOCTYPE html>"), (".json", "{")],
)
def test_output_file_suffix_sets_the_format(tmp_path: Path, suffix: str, starts: str) -> None:
    target = tmp_path / f"note{suffix}"
    for run in (lambda: runner.invoke(app, ["draft", SAMPLE, "-o", str(target)]).exit_code, lambda: main(
        ["draft", SAMPLE, "-o", str(target)]
    )):  # typer's parser and the plain one agree
        target.unlink(missing_ok=True)
        assert run() == 0
        assert target.read_text(encoding="utf-8").startswith(starts)


def test_a_format_that_contradicts_the_suffix_is_refused(tmp_path: Path) -> None:
    result = runner.invoke(app, ["draft", SAMPLE, "-o", str(tmp_path / "note.html"), "--format", "text"])
    assert result.exit_code == 2
    assert "names a html file but --format is text" in result.stderr
    assert not (tmp_path / "note.html").exists()
    same = runner.invoke(app, ["draft", SAMPLE, "-o", str(tmp_path / "note.out"), "--format", "text"])
    assert same.exit_code == 0, same.stderr  # a suffix that names no format leaves the choice to --format


@pytest.mark.parametrize(
    ("arguments", "reason"),
    [
        (["--width", "60"], "--width sets the line width of plain text; it does nothing for markdown"),
        (["--format", "html", "--ascii"], "--ascii folds plain text to ASCII; it does nothing for html"),
        (["--format", "json", "--brief"], "--brief shortens the printed note; the JSON always carries"),
        (["--format", "json", "--worksheet"], "--worksheet adds the working to the printed note"),
        (["--brief", "--explain"], "--explain adds the rule walk to the full note"),
        (["--brief", "--worksheet"], "--worksheet follows the full note"),
        (["--format", "text", "--width", "20"], "--width 20: give a line width from 30 to 400"),
    ],
)
def test_an_option_that_does_not_apply_is_an_error_saying_why(arguments: list[str], reason: str) -> None:
    result = runner.invoke(app, ["draft", SAMPLE, *arguments])
    assert result.exit_code == 2, result.stdout
    assert reason in result.stderr and result.stdout == ""
    assert main(["draft", SAMPLE, *arguments]) == 2


def test_width_and_ascii_still_shape_plain_text() -> None:
    result = runner.invoke(app, ["draft", SAMPLE, "--format", "text", "--width", "40", "--ascii"])
    assert result.exit_code == 0, result.stderr
    assert result.stdout.isascii() and max(len(line) for line in result.stdout.splitlines()) <= 40


def test_help_shows_plain_metavariables() -> None:
    for command in (["draft", "--help"], ["check-pack", "--help"], ["new-case", "--help"]):
        result = runner.invoke(app, command)
        assert result.exit_code == 0
        assert "<" not in result.stdout and "list[" not in result.stdout and "range" not in result.stdout
    draft_help = runner.invoke(app, ["draft", "--help"]).stdout
    for metavar in ("FILE", "FOLDER", "--width N", "--set NAME=VALUE", "--output-folder FOLDER", "--worksheet"):
        assert metavar in draft_help
    assert "--out " not in draft_help  # the former name works but is not offered


def test_the_folder_option_and_its_former_name(tmp_path: Path) -> None:
    for option, folder in (("--output-folder", tmp_path / "new"), ("--out", tmp_path / "old")):
        result = runner.invoke(app, ["draft", SAMPLE, OTHER, option, str(folder)])
        assert result.exit_code == 0, result.stderr
        assert len(list(folder.glob("*.md"))) == 2
    both = runner.invoke(app, ["draft", SAMPLE, OTHER, "--output-folder", "a", "--out", "b"])
    assert both.exit_code == 2 and "--out is its former name" in both.stderr


def test_check_pack_on_a_folder_with_no_pack_says_so(tmp_path: Path) -> None:
    (tmp_path / "notes.txt").write_text("not a rule file\n", encoding="utf-8")
    result = runner.invoke(app, ["check-pack", str(tmp_path)])
    assert result.exit_code == 2
    files = "acid_base.yaml, management.yaml, alkalosis/*.yaml, acidosis/*.yaml"
    assert f"{tmp_path}: no rule-pack file here ({files})" in result.stderr
    assert "consistent" not in result.stdout


def test_both_parsers_know_the_same_formats() -> None:
    from notegen.cli.app import OutputFormat
    from notegen.cli.plain import FORMAT_NAMES

    assert tuple(member.value for member in OutputFormat) == FORMAT_NAMES
