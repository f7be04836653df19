"""Medication names: chart abbreviations are synonyms; a slip from a known drug is refused, never dropped.

Every case here is invented.
"""

from __future__ import annotations

from typing import Any

import pytest
from typer.testing import CliRunner

from notegen.case.drug_names import edit_distance, near_miss
from notegen.case.validation import validate_case
from notegen.cli.app import app
from notegen.errors import CaseValueError, UsageError
from notegen.intake.overrides import apply_overrides


def _meds(*names: Any) -> dict[str, Any]:
    return {"context": {"meds": list(names)}}


@pytest.mark.parametrize(
    ("written", "generic"),
    [
        ("HCTZ", "hydrochlorothiazide"),
        ("calcium carb 500 mg", "calcium carbonate"),
        ("sodium bicarb", "sodium bicarbonate"),
        ("Na bicarb 650 mg", "sodium bicarbonate"),
        ("KCl 20 mEq", "potassium chloride"),
        ("spiro", "spironolactone"),
    ],
)
def test_chart_abbreviations_are_synonyms(written: str, generic: str) -> None:
    # Before: "calcium carb" and "sodium bicarb" were unknown names, kept but left out of the reasoning.
    (med,) = validate_case(_meds(written)).context.meds
    assert med.generic == generic


@pytest.mark.parametrize(
    ("written", "meant"),
    [
        ("furosemid", "furosemide"),
        ("hydrochlorthiazide", "hydrochlorothiazide"),
        ("Spironolacton 25 mg", "spironolactone"),
    ],
)
def test_a_slip_from_a_known_drug_is_refused_with_the_name_meant(written: str, meant: str) -> None:
    # Before: a one-letter slip made the diuretic an unknown name, listed as "unlikely", exit 0.
    with pytest.raises(CaseValueError) as info:
        validate_case(_meds(written), filename="case.yaml")
    assert str(info.value) == (
        f"case.yaml: field `context.meds[0]`: {written!r} is not a medication notegen knows; did you mean "
        f"{meant!r}? Correct the spelling (a misspelt diuretic would leave the reasoning)"
    )


@pytest.mark.parametrize("written", ["mysterol", "herbal tea", "vitamin D 1000 units", "ginkgo", "melatonin"])
def test_a_name_far_from_every_known_drug_is_kept_as_unknown(written: str) -> None:
    case = validate_case(_meds(written))
    assert not case.context.meds[0].recognised
    assert near_miss(written) is None


def test_short_abbreviations_get_no_suggestion() -> None:
    assert near_miss("hcl") is None  # one letter from kcl, but three letters say too little


def test_edit_distance_counts_a_swap_as_one_slip() -> None:
    assert edit_distance("furosemdie", "furosemide", 2) == 1
    assert edit_distance("abc", "abcdef", 2) == 3  # beyond the limit: limit + 1


def test_an_unknown_medication_is_reported_on_standard_error_too(tmp_path: Any) -> None:
    case = tmp_path / "case.yaml"
    case.write_text("units: conventional\ngas: {ph: 7.5, pco2: 48, hco3: 36}\ncontext: {meds: [mysterol]}\n")
    result = CliRunner().invoke(app, ["draft", str(case)])
    assert result.exit_code == 0
    assert result.stderr == (
        "notegen: medication 'mysterol' is not in notegen's vocabulary; it was kept but not reasoned with\n"
    )
    assert "mysterol" in result.stdout


def test_set_takes_a_list_in_brackets_commas_or_repeated() -> None:
    # Before: "[furosemide" and "hctz]" were kept as two unknown names.
    data = apply_overrides({}, ["context.meds=[furosemide, hctz]", "context.meds=KCl", "context.findings=vomiting"])
    assert data["context"] == {"meds": ["furosemide", "hctz", "KCl"], "findings": ["vomiting"]}
    case = validate_case(data)
    assert [m.generic for m in case.context.meds] == ["furosemide", "hydrochlorothiazide", "potassium chloride"]


@pytest.mark.parametrize("value", ["furosemide,,hctz", "[furosemide, [hctz]]", "[]"])
def test_set_refuses_a_list_it_cannot_read_exactly(value: str) -> None:
    with pytest.raises(UsageError, match="write a list as names separated by commas"):
        apply_overrides({}, [f"context.meds={value}"])
