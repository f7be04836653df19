"""Case data -> validated Case: conversions, refusals with the field named, serial results."""

from __future__ import annotations

from typing import Any

import pytest

from notegen.case.validation import validate_case
from notegen.errors import CaseFileError, CaseValueError


def _problem(data: Any) -> str:
    with pytest.raises(CaseValueError) as info:
        validate_case(data, filename="case.yaml")
    return str(info.value)


def test_si_case_is_converted_to_conventional_units() -> None:
    case = validate_case(
        {
            "units": "si",
            "gas": {"ph": 7.52, "pco2": 6.4, "hco3": 38},
            "chem": {"creatinine": 88.4, "urea": 7.0, "albumin": 40, "glucose": 5.0},
        }
    )
    assert case.gas.pco2 == pytest.approx(6.4 * 7.50062, rel=1e-5)
    assert case.chem.creatinine == pytest.approx(1.0, rel=1e-3)
    assert case.chem.bun == pytest.approx(7.0 * 2.801, rel=1e-3)  # urea mmol/L x 2.801 = BUN mg/dL
    assert case.chem.albumin == pytest.approx(4.0)
    assert case.chem.glucose == pytest.approx(90.08, rel=1e-3)


def test_explicit_units_in_text_and_mapping_forms() -> None:
    case = validate_case({"gas": {"pco2": "6.2 kPa"}, "chem": {"creatinine": {"value": 130, "unit": "umol/L"}}})
    assert case.gas.pco2 == pytest.approx(46.5, abs=0.05)
    assert case.chem.creatinine == pytest.approx(1.47, abs=0.005)
    reported = {m.field: (m.reported_value, m.reported_unit) for m in case.measurements}
    assert reported == {"gas.pco2": (6.2, "kPa"), "chem.creatinine": (130.0, "µmol/L")}


def test_censored_value_keeps_its_qualifier() -> None:
    case = validate_case({"urine": {"cl": "<10 mmol/L"}})
    assert case.urine.cl == 10
    assert case.measurements[0].qualifier == "<"


def test_creatinine_in_the_wrong_unit_is_refused_with_the_likely_unit() -> None:
    assert _problem({"chem": {"creatinine": "130 mg/dL"}}) == (
        "case.yaml: field `chem.creatinine`: 130 mg/dL is not a plausible creatinine (expected 0.2 to 25 mg/dL); "
        "did you mean 130 µmol/L (1.471 mg/dL)? Give the unit explicitly."
    )


def test_albumin_in_g_per_l_without_si_is_refused() -> None:
    assert "did you mean 35 g/L (3.5 g/dL)?" in _problem({"chem": {"albumin": 35}})


def test_unknown_key_suggests_the_close_one() -> None:
    assert _problem({"chem": {"albmin": 3.1}}).startswith(
        "case.yaml: field `chem.albmin`: not a known key; did you mean `albumin`?"
    )


def test_all_problems_are_reported_at_once() -> None:
    message = _problem({"gas": {"ph": "high"}, "chem": {"k": 25}, "context": {"volume": "dry"}})
    assert message.splitlines()[0] == "case.yaml: 3 fields cannot be used:"
    assert "field `gas.ph`" in message and "field `chem.k`" in message and "field `context.volume`" in message


@pytest.mark.parametrize(
    ("data", "kind"),
    [([1, 2], "a list"), (7.5, "a single float value"), ("text", "a single str value")],
    ids=["list", "number", "string"],
)
def test_top_level_must_be_a_mapping(data: Any, kind: str) -> None:
    with pytest.raises(CaseFileError, match=kind):
        validate_case(data, filename="case.yaml")


def test_wrong_types_are_named() -> None:
    assert "expected a number, got True" in _problem({"chem": {"na": True}})
    assert "is not female or male" in _problem({"patient": {"sex": "x"}})
    assert "not a blood pressure" in _problem({"context": {"bp": "high"}})


def test_unknown_unit_is_refused_with_accepted_ones() -> None:
    assert "unit 'mg' is not accepted here (accepted: mmol/L, mEq/L)" in _problem({"chem": {"k": "3 mg"}})


def test_medications_map_to_classes_and_unknown_ones_are_kept() -> None:
    case = validate_case(
        {"context": {"meds": [{"name": "Furosemide 40 mg IV", "last_dose_hours": 5}, "HCTZ", "mysterol"]}}
    )
    meds = case.context.meds
    assert [(m.generic, m.classes, m.last_dose_hours) for m in meds] == [
        ("furosemide", ("loop_diuretic",), 5.0),
        ("hydrochlorothiazide", ("thiazide_diuretic",), None),
        (None, (), None),
    ]
    assert meds[2].name == "mysterol" and not meds[2].recognised
    assert any("mysterol" in notice for notice in case.notices)


def test_finding_synonyms_map_to_ids() -> None:
    case = validate_case({"context": {"findings": ["Emesis", "NG suction", "HTN", "vomiting", "itchy"]}})
    assert case.context.findings == ("vomiting", "gastric_drainage", "hypertension")
    assert any("itchy" in notice for notice in case.notices)


def test_ascites_is_a_known_finding_not_a_notice() -> None:
    # Before: "Finding 'ascites' is not recognised", and an overloaded cirrhotic read as volume-depleted.
    case = validate_case({"context": {"findings": ["Ascites", "tense ascites", "cirrhosis"]}})
    assert case.context.findings == ("ascites", "cirrhosis")
    assert not any("ascites" in notice for notice in case.notices)


def test_serial_results_read_the_latest_complete_gas() -> None:
    case = validate_case(
        {
            "gas": [
                {"taken_at": "2026-03-01T06:00", "ph": 7.48, "pco2": 44, "hco3": 32},
                {"taken_at": "2026-03-01T14:00", "ph": 7.53, "pco2": 47, "hco3": 38},
                {"taken_at": "2026-03-01T16:00", "hco3": 39},
            ]
        }
    )
    assert case.gas.ph == 7.53
    assert [g.hco3 for g in case.earlier_gas] == [32, 39]


def test_stale_section_is_not_combined_with_newer_results() -> None:
    case = validate_case(
        {
            "gas": {"taken_at": "2026-03-03T08:00", "ph": 7.5, "pco2": 46},
            "chem": {"taken_at": "2026-03-01T08:00", "k": 3.1},
        }
    )
    assert case.chem.k is None and case.earlier_chem[0].k == 3.1
    assert any("not combined" in notice for notice in case.notices)


def test_two_different_values_at_the_same_time_are_refused() -> None:
    message = _problem(
        {"chem": [{"taken_at": "2026-03-01T06:00", "na": 132}, {"taken_at": "2026-03-01T06:00", "na": 140}]}
    )
    assert "field `chem.na`: two different values (132 and 140) at the same time" in message


def test_serial_results_need_times() -> None:
    assert "serial results need `taken_at`" in _problem({"chem": [{"na": 132}, {"na": 134}]})


def test_too_many_medications_is_refused_quickly() -> None:
    assert "5000 medications is more than the 200" in _problem({"context": {"meds": ["furosemide"] * 5000}})


def test_kpa_typed_into_a_conventional_case_is_refused_not_converted() -> None:
    # 12 "mmHg" is inside the plausibility bounds, but with pH 7.2 and HCO3 35 only 12 kPa
    # (90 mmHg) fits Henderson-Hasselbalch: ask for the unit rather than guess it.
    assert _problem({"units": "conventional", "gas": {"ph": 7.2, "pco2": 12, "hco3": 35}}) == (
        "case.yaml: field `gas.pco2`: 12 mmHg does not fit pH 7.2 and bicarbonate 35, but 12 kPa "
        '(90.01 mmHg) would; give the unit explicitly (e.g. "12 kPa")'
    )


def test_a_pco2_no_living_adult_has_is_refused_as_a_likely_kpa_value() -> None:
    # Before: a bare 5.3 beside pH 7.45 and no HCO3 was read as 5.3 mmHg. Below 10 mmHg it is kPa.
    assert _problem({"units": "conventional", "gas": {"ph": 7.45, "pco2": 5.3}}) == (
        "case.yaml: field `gas.pco2`: 5.3 mmHg is not a plausible PCO2 (expected 10 to 200 mmHg); "
        "did you mean 5.3 kPa (39.75 mmHg)? Give the unit explicitly."
    )


def test_an_explicit_pco2_unit_is_taken_as_given() -> None:
    case = validate_case({"gas": {"ph": 7.52, "pco2": "6.4 kPa", "hco3": 38}})
    assert case.gas.pco2 == pytest.approx(48.0, abs=0.05)


def test_mmhg_typed_into_an_si_case_is_refused() -> None:
    assert "did you mean 48 mmHg?" in _problem({"units": "si", "gas": {"ph": 7.52, "pco2": 48, "hco3": 38}})


def test_categorical_results_read_against_the_laboratory_range() -> None:
    case = validate_case(
        {
            "context": {
                "renin": "Suppressed",
                "aldosterone": "raised",
                "diuretic_screen": "negative",
                "cortisol_excess": "no",
            }
        }
    )
    context = case.context
    assert (context.renin, context.aldosterone, context.diuretic_screen, context.cortisol_excess) == (
        "low",
        "high",
        "negative",
        False,
    )
    assert "is not low, normal or high" in _problem({"context": {"renin": "12 ng/mL/h"}})


@pytest.mark.parametrize(
    ("data", "hint"),
    [
        ({"chem": {"sodium": 140}}, "field `chem.sodium`: not a known key; did you mean `na`?"),
        ({"chem": {"potasium": 3.1}}, "field `chem.potasium`: not a known key; did you mean `k`?"),
        ({"gas": {"bicarbonate": 20}}, "field `gas.bicarbonate`: not a known key; did you mean `hco3`?"),
        (
            {"context": {"medications": ["furosemide"]}},
            "field `context.medications`: not a known key; did you mean `meds`?",
        ),
    ],
)
def test_a_misspelt_or_spelt_out_key_gets_the_closest_valid_key(data: Any, hint: str) -> None:
    # Before: "sodium", "potasium" and "medications" were refused with no suggestion.
    assert hint in _problem(data)
