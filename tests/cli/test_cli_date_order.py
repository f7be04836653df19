"""How a pasted 03/04/2026 reads: `--date-order`, the case's `dates:`, a service's `date_order`. Invented cases."""

from __future__ import annotations

from pathlib import Path

import pytest
from typer.testing import CliRunner

from notegen.cli.app import _plain_draft_arguments, app, main
from notegen.errors import InputError, RulePackError
from notegen.intake.read import read_case
from notegen.knowledge.settings import load_acid_base_settings
from notegen.pipeline import Drafter, check_rule_folders

runner = CliRunner()
# two results of different days: their order depends on how the dates read
PASTE = "ABG 03/04/2026 06:20\npH 7.49\npCO2 48 mmHg\nHCO3 36 mmol/L\nBMP 04/03/2026 08:00\nK 3.1 mmol/L\n"


def _paste(tmp_path: Path) -> str:
    path = tmp_path / "labs.txt"
    path.write_text(PASTE, encoding="utf-8")
    return str(path)


def _service(tmp_path: Path, order: str, name: str = "service") -> Path:
    folder = tmp_path / name
    folder.mkdir()
    (folder / "acid_base.yaml").write_text(
        f"date_order: {{value: {order}, source: our laboratory prints dates this way}}\n", encoding="utf-8")
    return folder


def _gas_month(case_path: str | None, paste: str, **how: object) -> int:
    case = read_case(case_path, paste=paste, **how)  # type: ignore[arg-type]
    ph = next(m for m in case.measurements if m.field == "gas.ph")  # a gas set aside as stale is still listed
    return ph.taken_at.month  # type: ignore[union-attr]


@pytest.mark.parametrize(("order", "month"), [("day-first", 4), ("month-first", 3)])
def test_the_option_reads_the_paste_on_both_parsers(tmp_path: Path, order: str, month: int,
                                                   capsys: pytest.CaptureFixture[str]) -> None:
    argv = ["draft", "--paste", _paste(tmp_path), "--date-order", order, "--set", "units=conventional", "-f", "json"]
    assert _plain_draft_arguments(argv) is not None  # the plain parser takes it, as typer does
    status = main(argv)
    plain = capsys.readouterr()
    through_typer = runner.invoke(app, argv)
    assert (status, plain.out, plain.err) == (through_typer.exit_code, through_typer.stdout, through_typer.stderr)
    assert status == 0, plain.err
    assert f'"taken_at": "2026-{month:02d}-' in plain.out


def test_an_unknown_order_is_refused_by_both_parsers(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    argv = ["draft", "--paste", _paste(tmp_path), "--date-order", "day-last"]
    status = main(argv)
    plain = capsys.readouterr()
    through_typer = runner.invoke(app, argv)
    message = "notegen: --date-order day-last: give day-first (03/04/2026 is 3 April) or month-first (4 March)\n"
    assert (status, plain.err) == (2, message)
    assert (through_typer.exit_code, through_typer.stderr) == (2, message)


def test_a_batch_refuses_the_option_rather_than_ignore_it(tmp_path: Path) -> None:
    samples = Path(__file__).resolve().parents[2] / "samples"
    result = runner.invoke(app, ["draft", str(samples / "gastric_suction.yaml"),
                                 str(samples / "thiazide_and_vomiting.yaml"), "--date-order", "day-first"])
    assert result.exit_code == 2
    assert result.stderr == "notegen: --paste, --set and --date-order apply to a single case, not to a batch\n"


def test_the_order_is_taken_option_then_case_file_then_service(tmp_path: Path) -> None:
    paste = _paste(tmp_path)
    case_file = tmp_path / "case.yaml"
    case_file.write_text("units: conventional\ndates: month-first\n", encoding="utf-8")
    with pytest.raises(InputError, match="could be day/month or month/day"):
        read_case(None, paste=paste)
    assert _gas_month(None, paste, service_date_order="day-first") == 4
    assert _gas_month(str(case_file), paste, service_date_order="day-first") == 3  # the case file's
    assert _gas_month(str(case_file), paste, date_order="day-first", service_date_order="month-first") == 4
    assert _gas_month(str(case_file), paste, overrides=["dates=day-first"]) == 4  # --set is the command line's


def test_the_option_and_set_dates_must_agree(tmp_path: Path) -> None:
    with pytest.raises(InputError, match="--date-order day-first and --set dates=month-first disagree"):
        read_case(None, paste=_paste(tmp_path), date_order="day-first", overrides=["dates=month-first"])


def test_a_service_sets_the_order_for_the_drafter_and_the_command_line(tmp_path: Path) -> None:
    service = _service(tmp_path, "day-first")
    drafter = Drafter(rules_dirs=(service,))
    assert drafter.date_order == "day-first" and Drafter().date_order is None
    case = drafter.read_case(None, paste=_paste(tmp_path), overrides=["units=conventional"])
    assert case.gas.taken_at is not None and case.gas.taken_at.month == 4  # 3 April, the newest
    result = runner.invoke(app, ["draft", "--paste", _paste(tmp_path), "--rules", str(service),
                                 "--set", "units=conventional", "-f", "json"])
    assert result.exit_code == 0, result.stderr
    assert '"taken_at": "2026-04-03T06:20:00"' in result.stdout
    refused = runner.invoke(app, ["draft", "--paste", _paste(tmp_path), "--set", "units=conventional"])
    assert refused.exit_code == 2 and "--date-order day-first (or month-first)" in refused.stderr


def test_the_service_setting_is_checked_with_its_file_and_line(tmp_path: Path) -> None:
    later = _service(tmp_path, "month-first", "later")
    settings = load_acid_base_settings([_service(tmp_path, "day-first"), later])
    assert settings.date_order is not None and settings.date_order.value == "month-first"  # the later folder wins
    assert settings.date_order.origin == str(later / "acid_base.yaml")
    assert load_acid_base_settings().date_order is None  # shipped: unset, an ambiguous date is refused
    bad = _service(tmp_path, "day-last", "bad")
    with pytest.raises(RulePackError, match=r"acid_base.yaml:1: setting `date_order`: 'day-last' is not day-first"):
        load_acid_base_settings([bad])
    assert any("setting `date_order`" in line for line in check_rule_folders((bad,)))
    unsourced = tmp_path / "unsourced"
    unsourced.mkdir()
    (unsourced / "acid_base.yaml").write_text("date_order: {value: day-first}\n", encoding="utf-8")
    with pytest.raises(RulePackError, match="must be a mapping with value and source"):
        load_acid_base_settings([unsourced])
