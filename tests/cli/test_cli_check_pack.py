"""`notegen check-pack`: a service's own folder checked over the shipped pack, every problem located."""

from __future__ import annotations

from pathlib import Path

from typer.testing import CliRunner

from notegen.cli.app import app
from notegen.knowledge import ACIDOSIS_PACK, rule_pack

runner = CliRunner()

OVERLAY = """\
causes:
  - id: gastric_loss
    evidence:
      for:
        - id: our_extra
          when: {fact: urine_cl, below: 15, unit: mmol/L}
          strength: weak
          says: "Urine chloride {urine_cl}, under our own cut-off."
          source: common practice
"""


def _service(tmp_path: Path, pack_text: str, settings_text: str | None = None) -> Path:
    (tmp_path / "alkalosis").mkdir()
    (tmp_path / "alkalosis" / "ours.yaml").write_text(pack_text, encoding="utf-8")
    if settings_text is not None:
        (tmp_path / "acid_base.yaml").write_text(settings_text, encoding="utf-8")
    return tmp_path


def test_shipped_pack_is_consistent() -> None:
    result = runner.invoke(app, ["check-pack", "rules"])
    assert result.exit_code == 0, result.output
    assert result.stdout == "rule pack is consistent\n"


def test_a_sound_overlay_passes(tmp_path: Path) -> None:
    result = runner.invoke(app, ["check-pack", str(_service(tmp_path, OVERLAY))])
    assert result.exit_code == 0, result.output


def test_every_problem_is_named_with_file_and_line(tmp_path: Path) -> None:
    folder = _service(
        tmp_path,
        OVERLAY.replace("fact: urine_cl,", "fact: urine_chlorid,"),
        "anion_gap_high: {value: 11, unit: mmol/L, source: our analyser}\nanion_gap_hgh: {value: 3, source: x}\n",
    )
    result = runner.invoke(app, ["check-pack", str(folder)])
    assert result.exit_code == 2
    lines = result.stderr.splitlines()
    assert lines[0].startswith(f"{folder / 'acid_base.yaml'}:2: unknown setting `anion_gap_hgh`")
    assert lines[1] == f"{folder / 'alkalosis' / 'ours.yaml'}:6: unknown fact `urine_chlorid`"
    assert lines[2] == "notegen: 2 problem(s) found"


def test_missing_folder_is_reported(tmp_path: Path) -> None:
    result = runner.invoke(app, ["check-pack", str(tmp_path / "nope")])
    assert result.exit_code == 2
    assert "no such folder" in result.stderr


def test_a_service_threshold_changes_the_note(tmp_path: Path) -> None:
    # A service that reads its anion gap on an ion-selective analyser (reference 3-11, Kraut & Madias 2007).
    folder = tmp_path
    (folder / "acid_base.yaml").write_text(
        "anion_gap_low: {value: 3, unit: mmol/L, source: our analyser}\n"
        "anion_gap_high: {value: 11, unit: mmol/L, source: our analyser}\n",
        encoding="utf-8",
    )
    case = ["draft", "samples/gastric_suction.yaml", "-f", "json"]
    shipped = runner.invoke(app, case)
    ours = runner.invoke(app, [*case, "--rules", str(folder)])
    assert shipped.exit_code == 0 and ours.exit_code == 0, ours.output
    assert '"anion_gap_status": "normal"' in shipped.stdout
    assert '"anion_gap_status": "high"' in ours.stdout


def test_the_example_service_folder_is_consistent_and_takes_effect() -> None:
    # samples/service reads urine chloride below 25 mmol/L as responsive (some texts use 25; Luke & Galla 2012).
    assert runner.invoke(app, ["check-pack", "samples/service"]).exit_code == 0
    result = runner.invoke(
        app,
        [
            "draft",
            "samples/thiazide_and_vomiting.yaml",
            "--brief",
            "--rules",
            "samples/service",
            "--template",
            "samples/service/consult_note.md.j2",
        ],
    )
    assert result.exit_code == 0, result.output
    assert result.stdout.startswith("# Nephrology consult: acid-base\n")
    assert "Urine chloride 14 mmol/L, below 25 mmol/L, makes the alkalosis chloride-responsive." in result.stdout


ACIDOSIS_OVERLAY = """\
settings:
  - id: lactate_high_from
    value: 5
    unit: mmol/L
    source: our laboratory
causes:
  - id: ketoacidosis
    evidence:
      for:
        - id: our_ketone_meter
          when: {fact: bhb_meter, at_least: 1.5}
          strength: weak
          says: "Our meter reads {bhb_meter}."
          source: common practice
"""


def test_a_broken_acidosis_overlay_is_named_with_file_and_line(tmp_path: Path) -> None:
    (tmp_path / "acidosis").mkdir()
    (tmp_path / "acidosis" / "ours.yaml").write_text(ACIDOSIS_OVERLAY, encoding="utf-8")
    result = runner.invoke(app, ["check-pack", str(tmp_path)])
    assert result.exit_code == 2
    lines = result.stderr.splitlines()
    assert f"{tmp_path / 'acidosis' / 'ours.yaml'}:11: unknown fact `bhb_meter`" in lines
    assert lines[-1].endswith("problem(s) found")


def test_a_sound_acidosis_overlay_passes_and_changes_the_threshold(tmp_path: Path) -> None:
    (tmp_path / "acidosis").mkdir()
    sound = ACIDOSIS_OVERLAY.replace(
        "fact: bhb_meter, at_least: 1.5", "fact: bhb, at_least: 1.5, unit: mmol/L"
    ).replace("{bhb_meter}", "{bhb}")
    (tmp_path / "acidosis" / "ours.yaml").write_text(sound, encoding="utf-8")
    result = runner.invoke(app, ["check-pack", str(tmp_path)])
    assert result.exit_code == 0, result.output
    assert rule_pack(ACIDOSIS_PACK, [tmp_path]).settings["lactate_high_from"] == (5.0, "mmol/L")
