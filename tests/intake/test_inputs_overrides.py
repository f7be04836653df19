"""`--set name=value` overrides on case-file data."""

from __future__ import annotations

import copy

import pytest

from notegen.errors import UsageError
from notegen.intake.overrides import apply_overrides, override_provenance


def test_overrides_build_a_case_from_nothing() -> None:
    result = apply_overrides({}, [
        "gas.ph=7.50", "chem.k=2.9 mmol/L", 'urine.cl="<10 mmol/L"', "context.meds=furosemide,spironolactone",
        "context.findings=vomiting", "patient.age=67", "patient.sex=female", "gas.sample=arterial",
        "context.bp=168/98", "units=si",
    ])
    assert result == {
        "gas": {"ph": {"value": 7.5}, "sample": "arterial"},
        "chem": {"k": {"value": 2.9, "unit": "mmol/L"}},
        "urine": {"cl": {"value": 10, "unit": "mmol/L", "qualifier": "<"}},
        "context": {"meds": ["furosemide", "spironolactone"], "findings": ["vomiting"], "bp": "168/98"},
        "patient": {"age": 67, "sex": "female"},
        "units": "si",
    }


def test_overrides_do_not_mutate_and_replace_values() -> None:
    data = {"chem": {"k": {"value": 3.1}, "na": 140}, "context": {"meds": ["furosemide"]}}
    before = copy.deepcopy(data)
    result = apply_overrides(data, ["chem.k=2.7", "context.meds=hydrochlorothiazide"])
    assert data == before
    assert result == {"chem": {"k": {"value": 2.7}, "na": 140}, "context": {"meds": ["hydrochlorothiazide"]}}


def test_repeated_list_names_add_up() -> None:
    result = apply_overrides({}, ["context.findings=vomiting", "context.findings=edema,hypertension"])
    assert result["context"]["findings"] == ["vomiting", "edema", "hypertension"]


def test_serial_sections_need_an_index() -> None:
    data = {"chem": [{"k": {"value": 2.8}}, {"k": {"value": 3.3}}]}
    with pytest.raises(UsageError, match=r"chem holds 2 serial results; name one, e.g. chem\[1\]\.k"):
        apply_overrides(data, ["chem.k=3.0"])
    result = apply_overrides(data, ["chem[1].k=3.0", "chem[-2].na=131"])
    assert result == {"chem": [{"k": {"value": 2.8}, "na": {"value": 131}}, {"k": {"value": 3.0}}]}
    with pytest.raises(UsageError, match="index 0 to 1"):
        apply_overrides(data, ["chem[2].k=3.0"])


@pytest.mark.parametrize(
    ("assignment", "message"),
    [
        ("chem.potassium=2.9", "'chem.potassium' is not a case-file field"),
        ("gas.pc02=48", "did you mean gas.pco2"),
        ("chem.k", "write it as name=value"),
        ("chem.k=", "no value after '='"),
        ("chem.k=low", "chem.k needs a number"),
        ("chem.k=<=3 mmol/L", "chem.k needs a number"),
        ("patient[0].age=4", "only gas, chem and urine fields take an index"),
    ],
    ids=["unknown-field", "typo-suggests", "no-equals", "empty-value", "not-a-number", "le-comparator",
         "index-on-patient"],
)
def test_bad_assignments_name_the_assignment(assignment: str, message: str) -> None:
    with pytest.raises(UsageError, match=message) as caught:
        apply_overrides({}, [assignment])
    assert f"--set {assignment!r}" in str(caught.value)


def test_override_provenance() -> None:
    assert override_provenance(["chem.k=2.9", "gas[0].ph=7.5"]) == {"chem.k": "--set", "gas[0].ph": "--set"}
