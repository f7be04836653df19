"""One ambiguous pasted date, the same everywhere: the times order the results and the date is shown as
written, never as a chosen calendar date. Any other date beside it is refused. Invented cases."""

from __future__ import annotations

import json
from datetime import UTC, datetime
from pathlib import Path

import jsonschema
import pytest

from notegen._format import format_result_time
from notegen.errors import InputError, PasteError
from notegen.intake.paste import parse_paste
from notegen.intake.read import read_case
from notegen.pipeline import Drafter, DraftOptions
from notegen.schemas import schema_text

# three sections on one day, as a ward printout dates them: 12 January or 1 December, whichever way it reads
SAME_DAY = (
    "ABG 12/01/2026 06:20\npH 7.48\npCO2 47 mmHg\nHCO3 34 mmol/L\n"
    "BMP 12/01/2026 06:10\nNa 136 mmol/L\nK 3.1 mmol/L\nCl 92 mmol/L\n"
    "ABG 12/01/2026 14:05\npH 7.51\npCO2 49 mmHg\nHCO3 37 mmol/L\n"
)
# the two calendar dates it could be, in every form an output might print them
READINGS = ("2026-01-12", "2026-12-01", "2026-1-12", "2026-12-1", "12 Jan", "1 Dec", "Jan 12", "Dec 1")
OPTION = "--date-order day-first (or month-first)"


def _paste(tmp_path: Path, text: str = SAME_DAY) -> str:
    path = tmp_path / "labs.txt"
    path.write_text(text, encoding="utf-8")
    return str(path)


def test_one_ambiguous_date_written_the_same_everywhere_is_accepted() -> None:
    # Before: refused as an ambiguous date, though the order of the results does not depend on it.
    parsed = parse_paste(SAME_DAY)
    assert parsed.date_as_written == "12/01/2026"
    gases = parsed.data["gas"]
    assert [g["ph"]["value"] for g in gases] == [7.48, 7.51]  # the times order them: 06:20, then 14:05


def test_the_case_keeps_the_date_as_written_and_reads_the_latest_gas(tmp_path: Path) -> None:
    case = read_case(None, paste=_paste(tmp_path), overrides=["units=conventional"])
    assert case.date_as_written == "12/01/2026"
    assert case.gas.ph == 7.51 and [g.ph for g in case.earlier_gas] == [7.48]
    assert any("gas of 12/01/2026 14:05" in notice for notice in case.notices)


@pytest.mark.parametrize("output_format", ["markdown", "text", "html", "json"])
def test_no_output_shows_a_chosen_calendar_date(tmp_path: Path, output_format: str) -> None:
    case = read_case(None, paste=_paste(tmp_path), overrides=["units=conventional"])
    options = DraftOptions(output_format=output_format, worksheet=output_format != "json", explain=True)
    note = Drafter().draft(case, options)
    assert "12/01/2026 06:20" in note or "12/01/2026 06:20" in note.replace("\n", " ")
    for reading in READINGS:
        assert reading not in note, reading


def test_the_worksheet_and_trend_show_the_date_as_written(tmp_path: Path) -> None:
    case = read_case(None, paste=_paste(tmp_path), overrides=["units=conventional"])
    sheet = Drafter().draft(case, DraftOptions(output_format="text", worksheet=True, width=120))
    assert "- pH: 7.48 (12/01/2026 06:20) → 7.51 (14:05)" in sheet
    assert "12/01/2026 06:10" in sheet  # the sodium's time in the values table


def test_the_json_writes_every_time_as_written_and_fits_its_schema(tmp_path: Path) -> None:
    case = read_case(None, paste=_paste(tmp_path), overrides=["units=conventional"])
    data = json.loads(Drafter().draft(case, DraftOptions(output_format="json")))
    assert data["case"]["date_as_written"] == "12/01/2026"
    times = [m["taken_at"] for m in data["case"]["measurements"]]
    times += [p["taken_at"] for series in data["trend"] for p in series["points"]]
    times += [data["case"]["gas"]["taken_at"], data["case"]["chem"]["taken_at"]]
    times += [g["taken_at"] for g in data["case"]["earlier_gas"]]
    assert times and all(t.startswith("12/01/2026 ") for t in times)
    schema = json.loads(schema_text("output"))
    assert list(jsonschema.Draft202012Validator(schema).iter_errors(data)) == []
    # the JSON Lines path writes the same
    line = json.loads(Drafter().draft_json_line(case))
    assert line["case"]["gas"]["taken_at"] == "12/01/2026 14:05"


def test_a_stale_set_is_named_with_the_date_as_written(tmp_path: Path) -> None:
    # one day only: the window compares times within it, whichever calendar date it is
    case = read_case(None, paste=_paste(tmp_path), overrides=["units=conventional"], window_hours=2)
    assert "chem results from 12/01/2026 06:10 are more than 2 hours older than the newest results" in " ".join(
        case.notices)


def test_with_a_date_order_the_calendar_date_is_known_and_shown(tmp_path: Path) -> None:
    case = read_case(None, paste=_paste(tmp_path), overrides=["units=conventional"], date_order="day-first")
    assert case.date_as_written is None
    note = Drafter().draft(case, DraftOptions(worksheet=True))
    assert "2026-01-12 06:20" in note and "12/01/2026" not in note


@pytest.mark.parametrize(
    ("text", "other"),
    [
        (SAME_DAY.replace("ABG 12/01/2026 14:05", "ABG 01/12/2026 14:05"), "'01/12/2026'"),  # another ambiguous
        (SAME_DAY.replace("ABG 12/01/2026 14:05", "ABG 13/01/2026 14:05"), "'13/01/2026'"),  # reads one way
        (SAME_DAY.replace("ABG 12/01/2026 14:05", "ABG 2026-01-12 14:05"), "'2026-01-12'"),  # ISO
        (SAME_DAY.replace("ABG 12/01/2026 14:05", "ABG 12/1/2026 14:05"), "'12/1/2026'"),  # written otherwise
    ],
    ids=["two-ambiguous", "one-unambiguous", "iso", "written-otherwise"],
)
def test_any_other_date_in_the_paste_is_refused_naming_the_option(text: str, other: str) -> None:
    with pytest.raises(PasteError) as info:
        parse_paste(text, source="labs.txt")
    message = str(info.value)
    assert message.startswith("labs.txt, line 1: '12/01/2026' could be day/month or month/day, and the paste "
                              f"holds another date ({other})")
    assert OPTION in message


def test_dated_case_file_results_beside_it_are_refused(tmp_path: Path) -> None:
    case_file = tmp_path / "case.yaml"
    case_file.write_text("units: conventional\nurine: {cl: 12, taken_at: '2026-01-12T09:00'}\n", encoding="utf-8")
    with pytest.raises(InputError) as info:
        read_case(str(case_file), paste=_paste(tmp_path))
    assert "the pasted date '12/01/2026' could be day/month or month/day, and the case file's results carry " \
           "dates" in str(info.value)
    assert OPTION in str(info.value)
    with pytest.raises(InputError, match="--set gives a result time"):
        read_case(None, paste=_paste(tmp_path), overrides=["units=conventional", "urine.taken_at=2026-01-12T09:00",
                                                           "urine.cl=12"])


def test_an_undated_case_file_beside_it_is_accepted(tmp_path: Path) -> None:
    case_file = tmp_path / "case.yaml"
    case_file.write_text("units: conventional\npatient: {age: 70, sex: male}\nurine: {cl: 12}\n", encoding="utf-8")
    case = read_case(str(case_file), paste=_paste(tmp_path))
    assert case.date_as_written == "12/01/2026" and case.urine.cl == 12


def test_the_one_formatter_of_result_times() -> None:
    when = datetime(2026, 12, 1, 6, 20)
    assert format_result_time(when) == "2026-12-01 06:20"
    assert format_result_time(when, "12/01/2026") == "12/01/2026 06:20"
    aware = datetime.fromisoformat("2026-12-01T06:20:00+01:00")
    assert format_result_time(aware) == "2026-12-01 06:20 +01:00"
    assert format_result_time(aware, "12/01/26") == "12/01/26 06:20 +01:00"
    assert format_result_time(aware.replace(tzinfo=UTC)) == "2026-12-01 06:20 UTC"
