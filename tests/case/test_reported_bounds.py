"""Reported bounds ("<10", ">110") stay bounds; `<=`, `>=` and digits other than 0-9 are refused.

Every case here is invented. Each test names the misread it guards against.
"""

from __future__ import annotations

from typing import Any

import pytest
from typer.testing import CliRunner

from notegen.acidbase.calculations import blocked_by_bounds, compute_calculations
from notegen.acidbase.reading import read_acid_base
from notegen.assess.warnings import collect_warnings
from notegen.case.bounds import bound_notices, exact_only
from notegen.case.validation import validate_case
from notegen.cli.app import app
from notegen.errors import CaseValueError, PasteError
from notegen.intake.paste import parse_paste

_ALKALOSIS: dict[str, Any] = {
    "units": "conventional",
    "gas": {"sample": "arterial", "ph": 7.50, "pco2": 48, "hco3": 37},
    "chem": {"na": 138, "cl": 96, "creatinine": 1.0},
    "urine": {"na": 40, "cl": "<10 mmol/L", "creatinine": 80},
}


def _problem(data: Any) -> str:
    with pytest.raises(CaseValueError) as info:
        validate_case(data, filename="case.yaml")
    return str(info.value)


def test_a_bounded_urine_chloride_gives_no_exact_fractional_excretion() -> None:
    # Before: FE-Cl was computed from "<10" as if it were 10 and printed as exact.
    case = validate_case(_ALKALOSIS)
    calculations = compute_calculations(case)
    assert "fe_cl" not in calculations
    assert "fe_na" in calculations  # the exact urine sodium still gives its fractional excretion
    assert bound_notices(case) == [
        "Urine chloride was reported as <10 mmol/L, a bound, not a value: no calculation uses it, "
        "and it is compared only where the bound decides"
    ]


def test_a_bounded_chloride_gives_no_anion_gap_rather_than_a_false_one() -> None:
    # Before: chloride ">110" was taken as 110, giving an anion gap of 4 called a possible laboratory error.
    data = {**_ALKALOSIS, "chem": {"na": 140, "cl": ">110", "creatinine": 1.0}}
    case = validate_case(data)
    reading = read_acid_base(case)
    assert reading.anion_gap is None
    assert "anion_gap" not in compute_calculations(case)
    warnings = collect_warnings(case, reading, compute_calculations(case))
    assert "Chloride was reported as >110 mmol/L, a bound, not a value, so the anion gap is not computed." in warnings


def test_a_bound_that_blocks_nothing_the_chart_reads_stays_out_of_the_chart_note() -> None:
    # Before: every chart note with a urine chloride "<10" listed, under "Missing", that it was a bound
    # no calculation uses: a line the clinician would strike, since the paragraph already reads it
    # ("Urine chloride <10 mmol/L, below 20 mmol/L, makes the alkalosis chloride-responsive").
    case = validate_case(_ALKALOSIS)
    calculations = compute_calculations(case)
    assert not any("bound" in text for text in collect_warnings(case, read_acid_base(case), calculations))
    assert blocked_by_bounds(case, done=calculations) == {"urine.cl": ("fe_cl",)}  # the worksheet's FE-Cl only
    from notegen.pipeline import Drafter, DraftOptions

    chart = Drafter().draft(case)
    assert "Urine chloride <10 mmol/L" in chart
    assert "a bound, not a value" not in chart
    worksheet = Drafter().draft(case, DraftOptions(worksheet=True))
    assert "- Urine chloride was reported as <10 mmol/L, a bound, not a value: no calculation uses it" in worksheet
    assert Drafter().assess(case).reported_bounds == (
        "Urine chloride was reported as <10 mmol/L, a bound, not a value: no calculation uses it, "
        "and it is compared only where the bound decides.",
    )


def test_the_bound_is_kept_for_the_comparisons_that_it_decides() -> None:
    case = validate_case(_ALKALOSIS)
    assert case.urine.cl == 10  # held as reported, with its qualifier, for the rule walk
    assert exact_only(case).urine.cl is None  # and left out of arithmetic
    assert exact_only(case).urine.na == 40


def test_an_earlier_bounded_value_does_not_hide_the_latest_exact_one() -> None:
    data = {
        "units": "conventional",
        "urine": [
            {"cl": "<10", "taken_at": "2026-03-01T06:00"},
            {"cl": 35, "taken_at": "2026-03-01T12:00"},
        ],
    }
    case = validate_case(data)
    assert bound_notices(case) == []
    assert exact_only(case).urine.cl == 35


@pytest.mark.parametrize(("text", "sign"), [("<=20", "<="), (">= 40 mmol/L", ">="), ("≤20", "≤")])
def test_or_equal_bounds_in_a_case_file_are_refused(text: str, sign: str) -> None:
    # Before: "<=20" was silently read as "<20", which can flip the chloride class.
    assert _problem({"urine": {"cl": text}}) == (
        f"case.yaml: field `urine.cl`: {text!r}: {sign!r} cannot be held; a reported bound is < or > (e.g. \"<20\")"
    )


@pytest.mark.parametrize(("text", "digit"), [("৪", "BENGALI DIGIT FOUR"), ("१४०", "DEVANAGARI DIGIT ONE"),
                                             ("١٤٠", "ARABIC-INDIC DIGIT ONE"), ("１４０", "FULLWIDTH DIGIT ONE")])
def test_digits_other_than_ascii_are_refused_in_a_case_file(text: str, digit: str) -> None:
    # Before: the Bengali digit four, which looks like 8, was read as 4.
    assert f"({digit}); write numbers with the digits 0-9" in _problem({"chem": {"k": text}})


def test_digits_other_than_ascii_are_refused_in_a_paste() -> None:
    with pytest.raises(PasteError) as info:
        parse_paste("BMP 2026-03-14 06:10\nPotassium ৪ mmol/L\n", source="labs.txt")
    assert str(info.value) == (
        "labs.txt, line 2: 'Potassium ৪ mmol/L' holds the digit '৪' (BENGALI DIGIT FOUR); "
        "write numbers with the digits 0-9"
    )


def test_a_case_with_no_measured_value_is_refused(tmp_path: Any) -> None:
    # Before: a blank case drafted a note with exit 0.
    case = tmp_path / "blank.yaml"
    case.write_text("case: nothing measured\ncontext: {volume: low}\n")
    result = CliRunner().invoke(app, ["draft", str(case)])
    assert result.exit_code == 2
    assert result.stdout == ""
    assert result.stderr == (
        f"notegen: {case}: nothing to assess: the case holds no measured value; give gas, chem or urine values, "
        "or --paste a lab block\n"
    )
