"""Deriving the alkalosis pack's facts from a validated case and its reading."""

from __future__ import annotations

import pytest
from alkalosis_cases import alkalosis_case, med

from notegen.acidbase.calculations import compute_calculations
from notegen.acidbase.reading import read_acid_base
from notegen.case.model import Case, Medication
from notegen.engine import BooleanFact, Fact, MissingFact, NumberFact, TextFact
from notegen.knowledge import shipped_knowledge
from notegen.workup.facts import derive_facts, urine_calcium_creatinine_ratio

PACK = shipped_knowledge().alkalosis_pack


def facts_of(case: Case) -> dict[str, Fact]:
    return derive_facts(case, read_acid_base(case), PACK, compute_calculations(case))


def test_every_catalogue_fact_is_derived() -> None:
    assert set(facts_of(alkalosis_case())) == set(PACK.facts)


def test_urine_calcium_creatinine_from_molar_masses() -> None:
    # 10 mg/dL calcium = 2.495 mmol/L; 100 mg/dL creatinine = 8.840 mmol/L (40.078 and 113.12 g/mol).
    assert urine_calcium_creatinine_ratio(10, 100) == pytest.approx(0.2822, abs=1e-4)


def test_values_units_and_bounds() -> None:
    facts = facts_of(alkalosis_case(urine_cl=10, urine_cl_qualifier="<", k=3.1, creatinine=1.2))
    assert facts["urine_cl"] == NumberFact(10, "mmol/L", "<")
    assert facts["k"] == NumberFact(3.1, "mmol/L")
    egfr = facts["egfr"]
    # CKD-EPI 2021, male 58, creatinine 1.2 mg/dL (Inker et al., NEJM 2021): about 70.
    assert isinstance(egfr, NumberFact) and egfr.unit == "mL/min/1.73 m2" and 65 < egfr.value < 75
    assert facts["arterial_pco2"] == NumberFact(47, "mmHg")


def test_what_the_case_does_not_hold_is_missing_with_a_reason() -> None:
    facts = facts_of(alkalosis_case(sample="venous", bp=None))
    assert facts["renin"] == MissingFact("not given")
    assert facts["diuretic_screen_positive"] == MissingFact("not given")
    assert facts["arterial_pco2"] == MissingFact("venous sample; its PCO2 is not converted")
    assert facts["systolic_bp"] == MissingFact()
    assert facts["volume"] == MissingFact()  # "unknown" in the case
    assert facts["urine_cl"] == MissingFact()


def test_findings_not_listed_are_not_reported() -> None:
    facts = facts_of(alkalosis_case(findings=("vomiting",), volume="low"))
    assert facts["vomiting"] == BooleanFact(True)
    assert facts["diarrhea"] == BooleanFact(False)
    assert facts["volume"] == TextFact("low")


@pytest.mark.parametrize(
    ("meds", "acting", "listed"),
    [
        ((), BooleanFact(False), BooleanFact(False)),
        # Each drug's own duration of effect (rules/vocabulary/medications.yaml; drug labels, from memory):
        ((med("furosemide", 6),), BooleanFact(True), BooleanFact(True)),  # furosemide about 6 h
        ((med("furosemide", 6.5),), BooleanFact(False), BooleanFact(True)),
        ((med("hydrochlorothiazide", 12),), BooleanFact(True), BooleanFact(True)),  # hydrochlorothiazide 6-12 h
        ((med("hydrochlorothiazide", 13),), BooleanFact(False), BooleanFact(True)),
        ((med("chlorthalidone", 30),), BooleanFact(True), BooleanFact(True)),  # chlorthalidone 48-72 h
        ((med("chlorthalidone", 73),), BooleanFact(False), BooleanFact(True)),
        ((med("furosemide"),), MissingFact("no last-dose time for furosemide"), BooleanFact(True)),
        ((med("furosemide"), med("hydrochlorothiazide", 3)), BooleanFact(True), BooleanFact(True)),
        (
            (med("mystery pill"),),
            MissingFact("unrecognised medication: mystery pill"),
            MissingFact("unrecognised medication: mystery pill"),
        ),
    ],
    ids=[
        "none",
        "furosemide-6h",
        "furosemide-6.5h",
        "hctz-12h",
        "hctz-13h",
        "chlorthalidone-30h",
        "chlorthalidone-73h",
        "untimed",
        "one-acting",
        "unrecognised",
    ],
)
def test_diuretic_action_window(meds: tuple[object, ...], acting: Fact, listed: Fact) -> None:
    facts = facts_of(alkalosis_case(meds=meds))  # type: ignore[arg-type]
    assert facts["loop_or_thiazide_acting"] == acting
    assert facts["loop_or_thiazide_listed"] == listed


def test_medication_names_for_sentences() -> None:
    facts = facts_of(alkalosis_case(meds=(med("sodium bicarbonate"), med("licorice"), med("furosemide", 2))))
    assert facts["alkali_names"] == TextFact("sodium bicarbonate")
    assert facts["mineralocorticoid_names"] == TextFact("licorice")
    assert facts["diuretic_names"] == TextFact("furosemide")
    assert facts["loop_or_thiazide_hours"] == NumberFact(2, "h")
    assert facts["glycyrrhizin_listed"] == BooleanFact(True)


def test_several_medication_names_read_as_a_list_in_a_sentence() -> None:
    two = facts_of(alkalosis_case(meds=(med("furosemide", 2), med("hydrochlorothiazide", 30))))
    assert two["diuretic_names"] == TextFact("furosemide and hydrochlorothiazide")
    bumetanide = Medication(name="bumetanide", generic="bumetanide", classes=("loop_diuretic",), last_dose_hours=5)
    three = facts_of(alkalosis_case(meds=(med("furosemide", 2), med("hydrochlorothiazide", 30), bumetanide)))
    assert three["diuretic_names"] == TextFact("furosemide, hydrochlorothiazide and bumetanide")


def test_chlorthalidone_taken_30_hours_ago_leaves_a_high_urine_chloride_indeterminate() -> None:
    # Chlorthalidone acts for 48-72 h (drug label; from memory): one class-wide 24 h window read it
    # as worn off at 30 h and called a urine chloride of 64 mmol/L chloride-resistant.
    from notegen.workup.alkalosis import evaluate_alkalosis

    case = alkalosis_case(urine_cl=64, meds=(med("chlorthalidone", 30),), bp=(150, 92))
    result = evaluate_alkalosis(case, read_acid_base(case), calculations=compute_calculations(case))
    assert result.chloride_class == "indeterminate"
    assert result.resistant_pattern == "not_resistant"
    assert {c.cause for c in result.differential if c.tier != "unlikely"}.isdisjoint(
        {"salt_wasting_tubulopathy"}
    )


@pytest.mark.parametrize(
    ("mg", "low", "severe"),
    [(1.69, True, False), (1.7, False, False), (1.19, True, True), (1.2, True, False)],
)
def test_magnesium_limits_are_the_reading_s(mg: float, low: bool, severe: bool) -> None:
    # rules/acid_base.yaml magnesium_low 1.7 mg/dL (common practice) and magnesium_low_warning 1.2 mg/dL
    # (about 0.5 mmol/L; common practice, from memory): one pair of limits for the alerts and the pack.
    facts = facts_of(alkalosis_case(mg=mg))
    assert facts["mg_low"] == BooleanFact(low)
    assert facts["mg_severe_low"] == BooleanFact(severe)
