"""Result times: never re-dated by a merge, a date order said once, implausible spans refused. Invented cases."""

from __future__ import annotations

from pathlib import Path

import pytest

from notegen.case.validation import validate_case
from notegen.errors import CaseValueError, InputError, PasteError
from notegen.intake.paste import parse_paste
from notegen.intake.read import read_case

OLD_CHEM = (
    "units: conventional\n"
    "gas: {sample: arterial, ph: 7.50, pco2: 48, hco3: 37, taken_at: '2026-03-14T06:20'}\n"
    "chem: {na: 132, cl: 85, taken_at: '2026-03-10T06:00'}\n"
)
FRESH_PASTE = "BMP 2026-03-14 06:10\nPotassium 2.9 mmol/L\nBicarbonate 38 mmol/L\n"


def _files(tmp_path: Path, case: str, paste: str) -> tuple[str, str]:
    (tmp_path / "case.yaml").write_text(case, encoding="utf-8")
    (tmp_path / "labs.txt").write_text(paste, encoding="utf-8")
    return str(tmp_path / "case.yaml"), str(tmp_path / "labs.txt")


def test_old_file_results_are_not_re_dated_by_a_fresh_paste(tmp_path: Path) -> None:
    # Before: the four-day-old sodium and chloride took the paste's time and gave a false high-gap acidosis.
    case_path, paste_path = _files(tmp_path, OLD_CHEM, FRESH_PASTE)
    case = read_case(case_path, paste=paste_path)
    assert case.chem.na is None and case.chem.cl is None  # the latest chemistry is the paste's
    assert case.chem.k == 2.9
    (earlier,) = case.earlier_chem
    assert (earlier.na, earlier.cl, earlier.taken_at.day if earlier.taken_at else None) == (132, 85, 10)
    sources = {m.field: m.source for m in case.measurements}
    assert sources["chem.na"] == "case file"
    assert sources["chem.k"].endswith("labs.txt line 2")


def test_a_timed_paste_and_an_untimed_file_section_are_refused(tmp_path: Path) -> None:
    # Before: a fresh potassium under a heading without a time took the file's old time, or the reverse.
    case_text = "units: conventional\nchem: {na: 132, cl: 85}\n"
    case_path, paste_path = _files(tmp_path, case_text, FRESH_PASTE)
    with pytest.raises(InputError) as info:
        read_case(case_path, paste=paste_path)
    assert "the paste's chem results have a time and the case file's have none" in str(info.value)


def test_an_ambiguous_date_names_the_way_to_say_the_order() -> None:
    with pytest.raises(PasteError, match=r"--date-order day-first \(or month-first\), or `dates: day-first`"):
        parse_paste("ABG 12/01/2026 06:20\npH 7.5\nABG 01/12/2026 07:20\npH 7.4\n")


@pytest.mark.parametrize(("order", "month"), [("day-first", 1), ("month-first", 12)])
def test_a_stated_date_order_reads_every_ambiguous_date(order: str, month: int) -> None:
    parsed = parse_paste("ABG 12/01/2026 06:20\npH 7.5\n", date_order=order)
    assert parsed.data["gas"]["taken_at"] == f"2026-{month:02d}-{13 - month:02d}T06:20:00"


def test_the_date_order_comes_from_the_case_file_or_set(tmp_path: Path) -> None:
    paste = "ABG 03/04/2026 06:20\npH 7.5\n"
    case_path, paste_path = _files(tmp_path, "units: conventional\ndates: day-first\n", paste)
    assert read_case(case_path, paste=paste_path).measurements[0].taken_at.month == 4  # type: ignore[union-attr]
    flipped = read_case(case_path, paste=paste_path, overrides=["dates=month-first"])
    assert flipped.measurements[0].taken_at.month == 3  # type: ignore[union-attr]


def test_an_unknown_date_order_is_refused() -> None:
    with pytest.raises(CaseValueError, match="'day-last' is not day-first or month-first"):
        validate_case({"dates": "day-last", "chem": {"na": 140}})


def test_results_a_decade_apart_are_refused() -> None:
    # Before: a result typed ten years late became "the latest" and set every other section aside.
    data = {
        "units": "conventional",
        "gas": {"ph": 7.5, "pco2": 48, "hco3": 37, "taken_at": "2026-03-14T06:20"},
        "chem": {"na": 140, "taken_at": "2036-03-14T06:10"},
    }
    with pytest.raises(CaseValueError) as info:
        validate_case(data, filename="case.yaml")
    assert str(info.value) == (
        "case.yaml: field `taken_at`: results run from 2026-03-14 06:20 to 2036-03-14 06:10, more than a year "
        "apart: a date is probably mistyped; correct it, or draft the older results as a case of their own"
    )
