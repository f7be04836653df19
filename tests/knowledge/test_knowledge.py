"""One `Knowledge` holds everything read from rules/; `check-pack` and `draft --rules` read the same."""

from __future__ import annotations

from pathlib import Path

import pytest
from typer.testing import CliRunner

from notegen.cli.app import app
from notegen.knowledge import Knowledge, shipped_knowledge
from notegen.pipeline import Drafter

SAMPLES = Path(__file__).resolve().parents[2] / "samples"
CASE = SAMPLES / "thiazide_and_vomiting.yaml"


def test_the_shipped_rules_have_no_problem() -> None:
    assert Knowledge().problems() == []


def test_drafters_without_service_folders_share_the_shipped_knowledge() -> None:
    assert Drafter().knowledge is Drafter().knowledge is shipped_knowledge()
    assert Drafter(rules_dirs=(SAMPLES / "service",)).knowledge is not shipped_knowledge()


def test_each_part_is_read_once() -> None:
    knowledge = Knowledge()
    assert knowledge.settings is knowledge.settings
    assert knowledge.medications is knowledge.medications
    assert "furosemide" in knowledge.medications


def test_a_pack_asked_for_by_name_loads_only_that_pack() -> None:
    knowledge = Knowledge()
    assert knowledge.pack("alkalosis") is knowledge.alkalosis_pack
    assert "acidosis_pack" not in vars(knowledge)  # each pack costs milliseconds to load
    assert knowledge.pack("acidosis") is knowledge.acidosis_pack
    with pytest.raises(KeyError):
        knowledge.pack("no-such-pack")


def _folders(tmp_path: Path) -> dict[str, Path]:
    """Invented service folders, good and broken, each broken in one file."""
    made: dict[str, Path] = {}

    def folder(name: str, files: dict[str, str]) -> None:
        root = tmp_path / name
        root.mkdir()
        for relative, text in files.items():
            (root / relative).parent.mkdir(parents=True, exist_ok=True)
            (root / relative).write_text(text, encoding="utf-8")
        made[name] = root

    folder("good", {"acid_base.yaml": "anion_gap_high: {value: 11, unit: mmol/L, source: our analyser}\n"})
    folder("nan-setting", {"acid_base.yaml": "anion_gap_high: {value: .nan, unit: mmol/L, source: x}\n"})
    folder("unknown-setting", {"acid_base.yaml": "anion_gap_hihg: {value: 11, unit: mmol/L, source: x}\n"})
    folder("alias-in-pack", {"alkalosis/ours.yaml": "a: &a [1]\nb: *a\n"})
    folder("not-utf8", {"acid_base.yaml": "anion_gap_high: {value: 11, unit: mmol/L, source: caf\xe9}\n"})
    (made["not-utf8"] / "acid_base.yaml").write_bytes(b"anion_gap_high: {value: 11, unit: mmol/L, source: caf\xe9}\n")
    return made


def test_check_pack_and_draft_agree_on_every_folder(tmp_path: Path) -> None:
    runner = CliRunner()
    for name, folder in _folders(tmp_path).items():
        checked = runner.invoke(app, ["check-pack", str(folder)])
        drafted = runner.invoke(app, ["draft", str(CASE), "--rules", str(folder)])
        assert (checked.exit_code == 0) == (drafted.exit_code == 0), (name, checked.output, drafted.output)
        expected = 0 if name == "good" else 2
        assert checked.exit_code == drafted.exit_code == expected, (name, checked.output, drafted.output)


@pytest.mark.parametrize("name", ["nan-setting", "unknown-setting", "alias-in-pack", "not-utf8"])
def test_problems_name_the_file_and_line(tmp_path: Path, name: str) -> None:
    folder = _folders(tmp_path)[name]
    problems = Knowledge((folder,)).problems()
    assert problems, name
    filename, line, _ = problems[0]
    assert filename.startswith(str(folder)) and line is not None
