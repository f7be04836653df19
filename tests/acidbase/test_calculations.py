"""The calculation core against its published sources (CLINICAL.md lists each source and figure)."""

from __future__ import annotations

import math

import pytest

from notegen._format import format_value
from notegen.acidbase.calculations import compute_calculations, missing_calculations
from notegen.acidbase.formulas import (
    CREATININE_MOLAR_MASS,
    anion_gap,
    calculated_osmolality,
    chloride_deficit,
    corrected_anion_gap,
    corrected_calcium,
    delta_gap,
    delta_ratio,
    egfr_ckd_epi_2021,
    expected_hco3_acute_respiratory_acidosis,
    expected_hco3_acute_respiratory_alkalosis,
    expected_hco3_chronic_respiratory_acidosis,
    expected_hco3_chronic_respiratory_alkalosis,
    expected_pco2_metabolic_acidosis,
    expected_pco2_metabolic_alkalosis,
    expected_total_co2,
    fractional_excretion,
    henderson_hasselbalch_hco3,
    henderson_hasselbalch_ph,
    osmolal_gap,
    urine_potassium_creatinine_ratio,
)
from notegen.case.model import Case, Chem, Gas, Patient, Urine
from notegen.errors import CaseValueError, InputError

# --- Blood gas arithmetic ---------------------------------------------------------------------------


def test_henderson_hasselbalch_textbook_form() -> None:
    # DuBose, in Harrison's: pH = 6.1 + log10(HCO3 / (0.03 x PaCO2)); 40 mmHg and 24 mmol/L give 7.40.
    assert henderson_hasselbalch_ph(40, 24, pk=6.1, solubility=0.03) == pytest.approx(7.401, abs=0.001)


def test_henderson_hasselbalch_analyser_form_moves_ph_about_001() -> None:
    # CLSI C46-A (2001) S = 0.0307; Story, Poustie & Bellomo 2001: constant choice moves pH by about 0.01.
    textbook = henderson_hasselbalch_ph(40, 24, solubility=0.03)
    analyser = henderson_hasselbalch_ph(40, 24)
    assert analyser == pytest.approx(7.391, abs=0.001)
    assert 0.005 < textbook - analyser < 0.015


@pytest.mark.parametrize("pco2,hco3", [(40, 24), (20, 10), (60, 34), (48, 36), (25, 15), (80, 45)])
def test_henderson_hasselbalch_agrees_with_henderson(pco2: float, hco3: float) -> None:
    # Kassirer & Bleich, NEJM 1965 (citation from memory): [H+] nmol/L = 24 x PaCO2 / HCO3.
    h_ion = 24 * pco2 / hco3
    ph_from_henderson = 9 - math.log10(h_ion)
    assert henderson_hasselbalch_ph(pco2, hco3) == pytest.approx(ph_from_henderson, abs=0.015)


def test_bicarbonate_from_ph_inverts_henderson_hasselbalch() -> None:
    ph = henderson_hasselbalch_ph(52, 31)
    assert henderson_hasselbalch_hco3(ph, 52) == pytest.approx(31, abs=1e-9)


def test_expected_total_co2_adds_dissolved_co2() -> None:
    # Analyser form (CLSI C46-A): total CO2 about HCO3 + 1.2 at PaCO2 40 (CLINICAL.md, computed).
    assert expected_total_co2(24, 40) - 24 == pytest.approx(1.2, abs=0.05)


# --- Compensation rules ------------------------------------------------------------------------------


def test_winters_formula() -> None:
    # Albert, Dell & Winters, Ann Intern Med 1967: HCO3 12 -> PaCO2 24-28.
    est = expected_pco2_metabolic_acidosis(12)
    assert (est.low, est.value, est.high) == pytest.approx((24, 26, 28))


def test_metabolic_alkalosis_rule() -> None:
    # Berend, de Vries & Gans, NEJM 2014, Table 1: PaCO2 = 40 + 0.7 x (HCO3 - 24) +/- 2; HCO3 34 -> 47.
    est = expected_pco2_metabolic_alkalosis(34)
    assert (est.low, est.value, est.high) == pytest.approx((45, 47, 49))


def test_metabolic_alkalosis_rule_within_an_alternative_published_form() -> None:
    # Kidney360 2022, Table 3 also lists PaCO2 = 0.7 x HCO3 + 20 +/- 5: Berend's value lies inside that band.
    for hco3 in (30, 36, 45):
        assert abs(expected_pco2_metabolic_alkalosis(hco3).value - (0.7 * hco3 + 20)) <= 5


@pytest.mark.parametrize(
    "rule,pco2,expected",
    [
        # Narins & Emmett, Medicine 1980; Berend 2014: +1 per 10 mmHg acute, +3.5 per 10 chronic.
        (expected_hco3_acute_respiratory_acidosis, 60, 26.0),
        (expected_hco3_chronic_respiratory_acidosis, 60, 31.0),
        # Narins & Emmett 1980: -2 per 10 mmHg acute; -4 per 10 chronic (Krapf, NEJM 1991: 0.41 per mmHg).
        (expected_hco3_acute_respiratory_alkalosis, 20, 20.0),
        (expected_hco3_chronic_respiratory_alkalosis, 20, 16.0),
    ],
    ids=["acute-resp-acidosis", "chronic-resp-acidosis", "acute-resp-alkalosis", "chronic-resp-alkalosis"],
)
def test_respiratory_compensation_rules(rule, pco2: float, expected: float) -> None:  # type: ignore[no-untyped-def]
    est = rule(pco2)
    assert est.value == pytest.approx(expected)
    assert (est.low, est.high) == pytest.approx((expected - 2, expected + 2))


def test_chronic_respiratory_alkalosis_near_krapf_measured_slope() -> None:
    # Krapf et al., NEJM 1991: measured fall 0.41 mmol/L per mmHg; the 4-per-10 rule is within 0.01/mmHg.
    fall_per_mmhg = (24 - expected_hco3_chronic_respiratory_alkalosis(30).value) / 10
    assert fall_per_mmhg == pytest.approx(0.41, abs=0.011)


# --- Gaps ---------------------------------------------------------------------------------------------


def test_anion_gap_worked_values() -> None:
    # CLINICAL.md worked checks (from the Winter 1990 / Kraut & Madias 2007 formula): 140, 100, 24 -> 16.
    assert anion_gap(140, 100, 24) == 16
    # Figge et al., Crit Care Med 1998: + 2.5 x (4.0 - 2.0) -> 21.
    assert corrected_anion_gap(16, 2.0) == pytest.approx(21)
    # Figge 1998 states 0.25 per g/L: the same as 2.5 per g/dL.
    assert corrected_anion_gap(16, 3.0, factor=0.25 * 10) == pytest.approx(16 + 0.25 * (40 - 30))


def test_delta_ratio_worked_value() -> None:
    # Rastegar, JASN 2007: (AG - 12) / (24 - HCO3); Na 140, Cl 100, HCO3 14 -> AG 26, ratio 1.4.
    gap = anion_gap(140, 100, 14)
    assert gap == 26
    assert delta_gap(gap) == 14
    assert delta_ratio(gap, 14) == pytest.approx(1.4)


def test_delta_ratio_undefined_without_a_fall_in_bicarbonate() -> None:
    with pytest.raises(ValueError, match="undefined"):
        delta_ratio(20, 24)


def test_osmolal_gap() -> None:
    # Hoffman et al., J Toxicol Clin Toxicol 1993: 2 x Na + glucose/18 + BUN/2.8.
    assert calculated_osmolality(140, 90, 14) == pytest.approx(290)
    assert osmolal_gap(300, 140, 90, 14) == pytest.approx(10)


# --- Kidney and urine --------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "creatinine,age,sex,expected",
    [(1.2, 55, "male", 71.4), (0.8, 60, "female", 84.3), (1.0, 50, "male", 91.7)],
    ids=["male-55-1.2", "female-60-0.8", "male-50-1.0"],
)
def test_egfr_ckd_epi_2021(creatinine: float, age: float, sex: str, expected: float) -> None:
    # Inker et al., NEJM 2021 (CKD-EPI 2021 without race); check values computed from the equation.
    assert egfr_ckd_epi_2021(creatinine, age, sex) == pytest.approx(expected, abs=0.05)  # type: ignore[arg-type]


def test_egfr_refused_under_18() -> None:
    with pytest.raises(CaseValueError) as info:
        egfr_ckd_epi_2021(0.6, 16, "female")
    assert isinstance(info.value, InputError)
    assert "patient.age" in str(info.value)
    assert "adults" in str(info.value)


def test_urine_potassium_creatinine_ratio_against_pint() -> None:
    # Independent unit check: mg/dL of creatinine (113.12 g/mol) to mmol/L with pint.
    import pint

    ureg = pint.UnitRegistry()
    creatinine = (100 * ureg("mg/dL") / (CREATININE_MOLAR_MASS * ureg("g/mol"))).to("mmol/L").magnitude
    assert urine_potassium_creatinine_ratio(20, 100) == pytest.approx(20 / creatinine)
    assert urine_potassium_creatinine_ratio(20, 100) == pytest.approx(2.262, abs=0.001)


def test_urine_potassium_cutoff_matches_its_mass_form() -> None:
    # Assadi, Iran J Kidney Dis 2008: 1.5 mmol/mmol is about 13 mEq/g (CLINICAL.md; the unit is from memory).
    import pint

    ureg = pint.UnitRegistry()
    per_gram = (1.5 * ureg("mmol") / (1 * ureg("mmol") * CREATININE_MOLAR_MASS * ureg("g/mol"))).to("mmol/g")
    assert per_gram.magnitude == pytest.approx(13.3, abs=0.1)


def test_fractional_excretion() -> None:
    # Clearance ratio (common practice): (U_Na x P_Cr) / (P_Na x U_Cr) x 100.
    assert fractional_excretion(20, 140, 100, 1.0) == pytest.approx(0.1429, abs=1e-4)
    assert fractional_excretion(40, 100, 50, 2.0) == pytest.approx(1.6)


def test_chloride_deficit_worked_value() -> None:
    # Miller's Anesthesia, 6th ed.: 0.2 x 70 kg x (100 - 85) = 210 mmol.
    assert chloride_deficit(70, 85) == pytest.approx(210)


def test_corrected_calcium() -> None:
    # Payne et al., BMJ 1973 (from memory): Ca + 0.8 x (4.0 - albumin); 8.0 mg/dL, albumin 2.0 -> 9.6.
    assert corrected_calcium(8.0, 2.0) == pytest.approx(9.6)


# --- Applied to a case -----------------------------------------------------------------------------------


def _full_case() -> Case:
    return Case(
        patient=Patient(age=55, sex="male", weight_kg=70),
        gas=Gas(sample="arterial", ph=7.49, pco2=48, hco3=36),
        chem=Chem(
            na=140, cl=85, k=2.9, tco2=37, albumin=2.0, creatinine=1.2, ca=8.0, glucose=90, bun=14, osm=300
        ),
        urine=Urine(na=50, k=40, cl=10, creatinine=100),
    )


def test_compute_calculations_returns_every_named_calculation() -> None:
    calcs = compute_calculations(_full_case())
    for name in (
        "anion_gap", "anion_gap_corrected", "delta_gap", "expected_pco2", "egfr", "osmolal_gap",
        "urine_k_creatinine", "fe_na", "fe_cl", "chloride_deficit", "corrected_calcium", "calculated_ph",
    ):  # fmt: skip
        assert name in calcs, name
        assert calcs[name].source, name
        assert calcs[name].formula, name
    assert "delta_ratio" not in calcs  # bicarbonate 37 has not fallen
    # The panel total CO2 37, not the gas HCO3 36 (Kraut & Madias, CJASN 2007;2:162): 140 - (85 + 37).
    assert calcs["anion_gap"].value == pytest.approx(18)
    assert calcs["anion_gap_corrected"].value == pytest.approx(23)
    assert calcs["egfr"].value == pytest.approx(71.4, abs=0.05)
    assert "steady state" in (calcs["egfr"].note or "")
    assert calcs["chloride_deficit"].value == pytest.approx(210)
    assert calcs["corrected_calcium"].value == pytest.approx(9.6)
    # Berend 2014: 40 + 0.7 x 12 = 48.4 +/- 2.
    assert (calcs["expected_pco2"].low, calcs["expected_pco2"].high) == pytest.approx((46.4, 50.4))
    assert calcs["calculated_ph"].value == pytest.approx(henderson_hasselbalch_ph(48, 36), abs=0.001)


def test_gap_bicarbonate_source_is_stated() -> None:
    # Anion-gap reference ranges were set with the panel's measured total CO2, so it is used when
    # given (Kraut & Madias, CJASN 2007;2:162; Winter et al., Arch Intern Med 1990); the gas HCO3 only
    # without one. Compensation still reads the gas bicarbonate.
    with_both = compute_calculations(Case(gas=Gas(hco3=20, pco2=35), chem=Chem(na=140, cl=100, tco2=22)))
    assert "HCO3 (panel total CO2)" in with_both["anion_gap"].inputs
    assert with_both["anion_gap"].value == 18
    assert "HCO3 (gas bicarbonate)" in with_both["expected_pco2"].inputs
    assert with_both["expected_pco2"].value == pytest.approx(38)  # Winter's formula, 1.5 x 20 + 8
    with_gas = compute_calculations(Case(gas=Gas(hco3=20, pco2=35), chem=Chem(na=140, cl=100)))
    assert "HCO3 (gas bicarbonate)" in with_gas["anion_gap"].inputs
    assert with_gas["anion_gap"].value == 20
    panel_only = compute_calculations(Case(chem=Chem(na=140, cl=100, tco2=22)))
    assert "HCO3 (panel total CO2)" in panel_only["anion_gap"].inputs
    assert panel_only["anion_gap"].value == 18
    assert "panel total CO2" in (panel_only["anion_gap"].note or "")
    # Winter's formula on the panel value (Albert 1967): 1.5 x 22 + 8 = 41.
    assert panel_only["expected_pco2"].value == pytest.approx(41)
    assert panel_only["delta_ratio"].value == pytest.approx((18 - 12) / (24 - 22))


def test_expected_hco3_both_chronicities_reported() -> None:
    calcs = compute_calculations(Case(gas=Gas(pco2=60)))
    assert calcs["expected_hco3_acute"].value == pytest.approx(26)
    assert calcs["expected_hco3_chronic"].value == pytest.approx(31)


def test_empty_case_computes_nothing_and_says_why() -> None:
    assert compute_calculations(Case()) == {}
    missing = missing_calculations(Case())
    assert missing["anion_gap"].startswith("needs sodium")
    assert set(missing) >= {"egfr", "fe_na", "calculated_ph"}


def test_egfr_not_computed_for_a_minor_and_the_reason_given() -> None:
    case = Case(patient=Patient(age=15, sex="female"), chem=Chem(creatinine=0.6))
    assert "egfr" not in compute_calculations(case)
    assert "adults" in missing_calculations(case)["egfr"]


def test_chloride_deficit_only_below_target() -> None:
    case = Case(patient=Patient(weight_kg=70), chem=Chem(cl=104))
    assert "chloride_deficit" not in compute_calculations(case)


@pytest.mark.parametrize(
    "value,unit,text",
    [(24.0, "mmol/L", "24 mmol/L"), (7.4, "", "7.4"), (0.0307, "", "0.031"), (-0.0001, "", "0")],
)
def test_format_value(value: float, unit: str, text: str) -> None:
    assert format_value(value, unit) == text


def test_missing_egfr_says_which_of_age_and_sex_is_lacking() -> None:
    from notegen.acidbase.calculations import missing_calculations

    case = Case(patient=Patient(age=66), chem=Chem(creatinine=1.4))
    assert missing_calculations(case)["egfr"] == (
        "not calculated: serum creatinine is given, but the patient's sex is not"
    )
    assert missing_calculations(Case())["egfr"] == "needs serum creatinine, age and sex"
    assert missing_calculations(Case(chem=Chem(creatinine=1.4)))["egfr"] == (
        "not calculated: serum creatinine is given, but the patient's age and sex are not"
    )


# --- Urine gaps, for the metabolic-acidosis work-up ------------------------------------------------


@pytest.mark.parametrize(
    ("na", "k", "cl", "gap"),
    [
        # Batlle et al., NEJM 1988;318:594: Na + K - Cl. The group means quoted here are from memory:
        # negative in diarrhea (about -20 mmol/L), positive in distal RTA (about +23 mmol/L).
        (40, 30, 90, -20),
        (50, 33, 60, 23),
        (40, 30, 100, -30),
    ],
)
def test_urine_anion_gap_is_sodium_plus_potassium_minus_chloride(na: float, k: float, cl: float, gap: float) -> None:
    from notegen.acidbase.formulas import urine_anion_gap

    assert urine_anion_gap(na, k, cl) == pytest.approx(gap)


def test_urine_osmolal_gap_and_the_ammonium_it_implies() -> None:
    from notegen.acidbase.formulas import urine_calculated_osmolality, urine_osmolal_gap

    # From memory (review literature, e.g. Kraut & Madias, Nat Rev Nephrol 2010;6:274): calculated
    # urine osmolality 2 x (Na + K) + urea; urea nitrogen 560 mg/dL is 200 mmol/L of urea (/2.8).
    assert urine_calculated_osmolality(50, 40, 560) == pytest.approx(380)
    assert urine_osmolal_gap(500, 50, 40, 560) == pytest.approx(120)  # about 60 mmol/L of ammonium
    # Glucose in mg/dL counts /18, as in the serum formula (Hoffman et al., 1993).
    assert urine_osmolal_gap(500, 50, 40, 560, urine_glucose=180) == pytest.approx(110)


def test_urine_gaps_are_computed_only_on_request_and_only_with_their_inputs() -> None:
    from notegen.acidbase.calculations import urine_gap_calculations

    case = Case(urine=Urine(na=40, k=30, cl=100, osm=500, urea_nitrogen=560))
    assert "urine_anion_gap" not in compute_calculations(case)  # alkalosis notes are unchanged
    found = urine_gap_calculations(case)
    assert found["urine_anion_gap"].value == -30
    assert found["urine_anion_gap"].source == "Batlle et al., NEJM 1988;318:594"
    assert found["urine_osmolal_gap"].value == pytest.approx(500 - (140 + 200))
    assert urine_gap_calculations(Case(urine=Urine(na=40, cl=100))) == {}
