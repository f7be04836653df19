"""Clinical reasoning on invented cases, end to end (case -> reading -> rule walk -> considerations).

Each test is a vignette made up for the point it checks, with the published source of the
principle beside it ("from memory" where the source was not checked against a stored copy).
"""

from __future__ import annotations

from typing import Any

from notegen.assess.considerations import load_considerations, select_considerations
from notegen.assess.model import Assessment
from notegen.case.validation import validate_case
from notegen.knowledge import shipped_knowledge
from notegen.pipeline import Drafter

DRAFTER = Drafter()


def assess(data: dict[str, Any]) -> Assessment:
    return DRAFTER.assess(validate_case({"units": "conventional", **data}))


def tiers(assessment: Assessment) -> dict[str, str]:
    return {c.cause: c.tier for c in assessment.differential}


def considerations(assessment: Assessment) -> dict[str, str]:
    return {item.id: item.text for item in select_considerations(assessment, load_considerations())}


def alert_codes(assessment: Assessment) -> set[str]:
    return {a.code for a in assessment.alerts}


# --- Calcium and the calcium-alkali syndrome ------------------------------------------------------------
# Patel & Goldfarb, JASN 2010;21:1440; Medarov, Mayo Clin Proc 2009;84:261 (from memory): calcium with
# absorbable alkali, hypercalcemia and a reduced GFR; hypercalcemia is natriuretic, so a high urine
# chloride does not make the alkalosis saline-resistant; volume repletion and stopping the calcium
# and alkali are first-line.

CALCIUM_ALKALI: dict[str, Any] = {
    "case": "invented: calcium carbonate for dyspepsia, confused and dry",
    "patient": {"age": 63, "sex": "female", "weight_kg": 60},
    "gas": {"sample": "arterial", "ph": 7.50, "pco2": 47, "hco3": 36},
    "chem": {"na": 138, "k": 3.7, "cl": 96, "tco2": 37, "creatinine": 2.4, "albumin": 3.8, "ca": 13.4},
    "urine": {"na": 70, "cl": 68, "creatinine": 60},
    "context": {"bp": "104/60", "meds": ["calcium carbonate"]},
}


def test_calcium_alkali_syndrome_has_its_own_cause_and_is_likely() -> None:
    assessment = assess(CALCIUM_ALKALI)
    assert tiers(assessment)["calcium_alkali"] == "likely"


def test_calcium_alkali_syndrome_is_named_alone_not_beside_alkali_load() -> None:
    # It is a form of alkali load (the pack's `form_of`): "two causes ... acting together" misread it as two.
    from notegen.note.paragraph import draft_paragraph

    assessment = assess(CALCIUM_ALKALI)
    assert tiers(assessment)["alkali_load"] == "likely"  # the differential keeps both; the paragraph folds
    paragraph = draft_paragraph(assessment)
    assert "The likely cause is calcium-alkali syndrome (" in paragraph
    assert "alkali load" not in paragraph and "acting together" not in paragraph


def test_hypercalcemia_keeps_a_high_urine_chloride_from_reading_as_chloride_resistant() -> None:
    assessment = assess(CALCIUM_ALKALI)
    assert assessment.chloride_class == "indeterminate"
    says = considerations(assessment)
    assert "chloride_resistant" not in says
    assert not any("saline will not correct" in text for text in says.values())
    assert "first-line" in says["calcium_alkali"]


def test_high_urine_chloride_with_hypercalcemia_does_not_raise_a_tubulopathy_or_covert_diuretic() -> None:
    found = tiers(assess(CALCIUM_ALKALI))
    assert found["salt_wasting_tubulopathy"] == "unlikely"
    assert found["diuretic"] == "unlikely"


def test_calcium_alerts_read_the_albumin_corrected_calcium() -> None:
    # Payne et al., BMJ 1973: Ca + 0.8 x (4.0 - albumin); 13.4 with albumin 3.8 -> 13.56, at or above the
    # critical 13 mg/dL (common practice).
    alerts = {a.code: a for a in assess(CALCIUM_ALKALI).alerts}
    assert alerts["hypercalcemia"].level == "critical"
    assert "13.6 mg/dL" in alerts["hypercalcemia"].message
    low = assess({**CALCIUM_ALKALI, "chem": {**CALCIUM_ALKALI["chem"], "ca": 6.0, "albumin": 4.0}})
    assert "severe_hypocalcemia" in alert_codes(low)


# --- The anion gap's bicarbonate ------------------------------------------------------------------------
# Kraut & Madias, CJASN 2007;2:162; Winter et al., Arch Intern Med 1990: anion-gap reference ranges were
# set with the panel's measured total CO2, so the gap uses it when the case has one, and says so.

PANEL_AND_GAS: dict[str, Any] = {
    "case": "invented: gas and panel drawn together",
    "patient": {"age": 52, "sex": "male"},
    "gas": {"sample": "arterial", "ph": 7.40, "pco2": 40, "hco3": 24},
    "chem": {"na": 140, "cl": 102, "tco2": 25, "albumin": 4.0},
}


def test_anion_gap_uses_the_panel_total_co2_and_says_so() -> None:
    reading = assess(PANEL_AND_GAS).acid_base
    assert reading.anion_gap_bicarbonate == "panel total CO2"
    assert reading.anion_gap == 13  # 140 - (102 + 25), not 14 from the gas 24
    assert any("using the panel total CO2" in f for f in reading.findings)


def test_a_gap_from_a_panel_that_disagrees_with_the_gas_carries_no_firm_diagnosis() -> None:
    # Gas HCO3 24 at PaCO2 40 predicts a total CO2 of 25.2 (HCO3 + 0.0307 x PaCO2, CLSI C46-A); a panel
    # total CO2 of 17 lies more than 3 mmol/L away (Story, Poustie & Bellomo 2001), so the gap of 21
    # it gives makes a metabolic acidosis possible, not established.
    data = {**PANEL_AND_GAS, "chem": {"na": 140, "cl": 102, "tco2": 17, "albumin": 4.0}}
    assessment = assess(data)
    reading = assessment.acid_base
    assert "gas_panel_mismatch" in alert_codes(assessment)
    assert "metabolic_acidosis" not in reading.disorders
    assert "metabolic_acidosis" in reading.possible_disorders
    assert any("disagree" in f for f in reading.findings)


# --- Post-hypercapnic alkalosis -------------------------------------------------------------------------
# Berend, de Vries & Gans, NEJM 2014;371:1434; Galla, JASN 2000;11:369: compensation does not overshoot;
# with an alkalemic pH a high bicarbonate is a metabolic alkalosis even while the PaCO2 is above 40, and
# treated hypercapnia in a CO2 retainer makes post-hypercapnic alkalosis likely.

POST_HYPERCAPNIC: dict[str, Any] = {
    "case": "invented: day two of non-invasive ventilation in a CO2 retainer",
    "patient": {"age": 71, "sex": "male"},
    "gas": {"sample": "arterial", "ph": 7.49, "pco2": 50, "hco3": 37},
    "chem": {"na": 139, "k": 3.9, "cl": 92, "tco2": 38, "creatinine": 1.0, "albumin": 3.8},
    "urine": {"cl": 15},
    "context": {"bp": "130/80", "findings": ["chronic CO2 retention", "non-invasive ventilation"]},
}


def test_treated_hypercapnia_with_alkalemia_makes_post_hypercapnic_alkalosis_likely() -> None:
    assessment = assess(POST_HYPERCAPNIC)
    assert assessment.acid_base.primary == "metabolic_alkalosis"
    cause = next(c for c in assessment.differential if c.cause == "post_hypercapnia")
    assert cause.tier == "likely"
    texts = " ".join(e.text for e in (*cause.supporting, *cause.opposing))
    assert "may still be compensation" not in texts
    assert "compensation does not overshoot" in texts


# --- No double counting; renin and aldosterone cautions -------------------------------------------------
# Funder et al., Endocrine Society guideline, JCEM 2016;101:1889: replete potassium before renin and
# aldosterone; ACE inhibitors, ARBs and diuretics raise renin. A listed diuretic's potassium loss is
# not also evidence of mineralocorticoid excess.

THIAZIDE_HYPERTENSION: dict[str, Any] = {
    "case": "invented: treated hypertension on hydrochlorothiazide, last dose the day before",
    "patient": {"age": 58, "sex": "female"},
    "gas": {"sample": "arterial", "ph": 7.47, "pco2": 45, "hco3": 32},
    "chem": {"na": 141, "k": 3.0, "cl": 99, "tco2": 33, "creatinine": 0.8, "albumin": 4.0, "ca": 9.4},
    "urine": {"na": 90, "k": 45, "cl": 70, "creatinine": 60},
    "context": {"bp": "162/96", "meds": [{"name": "hydrochlorothiazide", "last_dose_hours": 30}, "lisinopril"]},
}


def test_a_thiazide_s_potassium_loss_is_not_counted_again_for_mineralocorticoid_excess() -> None:
    assessment = assess(THIAZIDE_HYPERTENSION)
    cause = next(c for c in assessment.differential if c.cause == "mineralocorticoid_excess")
    ids = {e.id for e in (*cause.supporting, *cause.opposing)}
    assert "hypokalemia_with_hypertension" not in ids and "renal_potassium_wasting" not in ids
    assert cause.tier == "possible"  # hypertension on a thiazide: possible, not likely, without more


def test_renin_and_aldosterone_come_with_their_cautions() -> None:
    tests = {t.test: t.why for t in assess(THIAZIDE_HYPERTENSION).next_tests}
    assert "Replete potassium first" in tests["renin_aldosterone"]
    assert "ACE inhibitors, ARBs and diuretics raise renin" in tests["renin_aldosterone"]


# --- Tiers that match the evidence ------------------------------------------------------------------------
# Galla, JASN 2000;11:369: a listed loop diuretic, edema and hypokalemia with nothing else on board.


def test_a_listed_diuretic_with_its_pattern_and_no_rival_reads_likely() -> None:
    data = {
        "case": "invented: leg swelling treated with furosemide, time of last dose not known",
        "patient": {"age": 80, "sex": "female"},
        "gas": {"sample": "arterial", "ph": 7.48, "pco2": 46, "hco3": 33},
        "chem": {"na": 136, "k": 3.1, "cl": 92, "tco2": 34, "creatinine": 1.1, "albumin": 3.6, "ca": 9.0},
        "context": {"bp": "126/70", "meds": ["furosemide"], "findings": ["edema"]},
    }
    assert tiers(assess(data))["diuretic"] == "likely"


# --- An internally inconsistent gas -----------------------------------------------------------------------
# Henderson-Hasselbalch (pK 6.1, S 0.0307, CLSI C46-A): PaCO2 36 and HCO3 14 give pH 7.20 against 7.14
# reported, beyond the 0.03 tolerance (after Story, Poustie & Bellomo 2001). Winter's formula (Albert,
# Dell & Winters 1967) predicts 27-31 mmHg, so on a consistent gas the PaCO2 36 would add a respiratory
# acidosis; here it is only possible, and the reading says to repeat the gas first.


def test_an_inconsistent_gas_gets_no_firm_mixed_disorder() -> None:
    data = {
        "case": "invented: values keyed in by hand",
        "patient": {"age": 45, "sex": "male"},
        "gas": {"sample": "arterial", "ph": 7.14, "pco2": 36, "hco3": 14},
        "chem": {"na": 138, "cl": 110},
    }
    reading = assess(data).acid_base
    assert reading.consistency == "inconsistent"
    assert reading.primary == "metabolic_acidosis"
    assert reading.disorders == ("metabolic_acidosis",)
    assert "respiratory_acidosis" in reading.possible_disorders
    assert any("repeat the gas before relying on a mixed disorder" in f for f in reading.findings)
    from notegen.pipeline import draft

    text = draft(data).text(width=1000)
    assert "with an added respiratory acidosis" not in text
    assert "would add a respiratory acidosis if a repeat gas confirms these values" in text


# --- Other critical values in the case --------------------------------------------------------------------
# Common practice (laboratories set their own critical values): sodium below 125 or above 155 mmol/L,
# glucose below 54 or above 500 mg/dL, potassium at both ends; thresholds in rules/acid_base.yaml.


BASE_CHEM_CASE: dict[str, Any] = {"case": "invented: critical values", "units": "conventional", "patient": {"age": 50}}


def _alerts_for(chem: dict[str, float]) -> set[str]:
    return alert_codes(assess({"case": "invented: critical values", "patient": {"age": 50}, "chem": chem}))


def test_critical_sodium_glucose_and_potassium_are_flagged_at_both_ends() -> None:
    assert "severe_hyponatremia" in _alerts_for({"na": 124})
    assert "severe_hyponatremia" not in _alerts_for({"na": 125})
    assert "severe_hypernatremia" in _alerts_for({"na": 156})
    assert "severe_hypernatremia" not in _alerts_for({"na": 155})
    assert "hypoglycemia" in _alerts_for({"glucose": 50})
    assert "hypoglycemia" not in _alerts_for({"glucose": 54})
    assert "severe_hyperglycemia" in _alerts_for({"glucose": 620})
    assert "severe_hypokalemia" in _alerts_for({"k": 2.4})
    assert "severe_hyperkalemia" in _alerts_for({"k": 6.6})


def test_a_high_lactate_and_a_toxic_salicylate_stand_out_as_critical_values() -> None:
    # Evans et al., Crit Care Med 2021;49:e1063 (Surviving Sepsis Campaign; from memory): a lactate of
    # 4 mmol/L or more marks hypoperfusion to act on. A salicylate of 30 mg/dL or more is above the
    # anti-inflammatory range (common practice; from memory), the acidosis pack's own threshold for
    # poisoning. Before: a salicylate of 58 mg/dL and a lactate of 7.5 mmol/L raised no flag at all.
    assert "high_lactate" in _alerts_for({"lactate": 7.5})
    assert "high_lactate" in _alerts_for({"lactate": 4.0})
    assert "high_lactate" not in _alerts_for({"lactate": 3.9})
    assert "toxic_salicylate" in _alerts_for({"salicylate": 58})
    assert "toxic_salicylate" in _alerts_for({"salicylate": 30})
    assert "toxic_salicylate" not in _alerts_for({"salicylate": 25})
    note = Drafter().draft(validate_case({**BASE_CHEM_CASE, "chem": {"salicylate": 58, "lactate": 7.5}}))
    assert note.index("Critical values") < note.index("Salicylate 58 mg/dL is at or above 30 mg/dL")
    assert "Lactate 7.5 mmol/L is at or above 4 mmol/L" in note


def test_the_salicylate_alert_and_the_acidosis_pack_share_one_threshold() -> None:
    pack = shipped_knowledge().acidosis_pack
    assert shipped_knowledge().settings.salicylate_critical.value == pack.settings["salicylate_toxic_from"][0]


# --- Citrate ------------------------------------------------------------------------------------------------
# Galla, JASN 2000;11:369: citrate in blood products is metabolised to bicarbonate; an alkalosis follows
# about 8-10 or more units (the count is from memory), or plasma exchange.


def test_the_number_of_citrated_units_given_is_evidence_of_an_alkali_load() -> None:
    data = {
        "case": "invented: day after a massive transfusion for a bleeding ulcer",
        "patient": {"age": 66, "sex": "male"},
        "gas": {"sample": "arterial", "ph": 7.49, "pco2": 46, "hco3": 34},
        "chem": {"na": 139, "k": 3.8, "cl": 98, "tco2": 35, "creatinine": 1.0, "albumin": 3.5, "ca": 8.6},
        "context": {"bp": "118/66", "blood_product_units": 12},
    }
    assessment = assess(data)
    cause = next(c for c in assessment.differential if c.cause == "alkali_load")
    assert "citrate_units" in {e.id for e in cause.supporting}
    assert cause.tier == "likely"
    fewer = assess({**data, "context": {"bp": "118/66", "blood_product_units": 2}})
    assert tiers(fewer)["alkali_load"] == "unlikely"


def test_blood_product_units_must_be_a_whole_number() -> None:
    import pytest

    from notegen.errors import CaseValueError

    with pytest.raises(CaseValueError, match="not a whole number of units"):
        validate_case({"context": {"blood_product_units": 2.5}})


# --- Covert vomiting and covert diuretic use --------------------------------------------------------------
# Luke & Galla, JASN 2012;23:204 (details from memory): a low urine chloride with sodium or potassium carried
# out in an alkaline urine is the bicarbonaturia of recent gastric loss, even when vomiting is denied; a
# urine diuretic screen tests the alternative, as it does for a urine chloride that swings with no diuretic.

COVERT_VOMITING: dict[str, Any] = {
    "case": "invented: young woman, denies vomiting, dental erosions",
    "patient": {"age": 23, "sex": "female", "weight_kg": 50},
    "gas": {"sample": "arterial", "ph": 7.50, "pco2": 47, "hco3": 36},
    "chem": {"na": 137, "k": 2.9, "cl": 90, "tco2": 37, "creatinine": 0.7, "albumin": 4.2, "ca": 9.6},
    "urine": {"na": 48, "k": 38, "cl": 9, "ph": 7.6, "creatinine": 80},
    "context": {"bp": "100/62"},
}


def test_bicarbonaturia_makes_gastric_loss_likely_though_vomiting_is_denied() -> None:
    assessment = assess(COVERT_VOMITING)
    assert tiers(assessment)["gastric_loss"] == "likely"
    why = {t.test: t.why for t in assessment.next_tests}
    assert "careful history for vomiting" in why["urine_diuretic_screen"]


def test_a_swinging_urine_chloride_with_no_diuretic_listed_calls_for_a_screen() -> None:
    data = {
        "case": "invented: recurrent alkalosis, no diuretic prescribed",
        "patient": {"age": 39, "sex": "female"},
        "gas": {"sample": "arterial", "ph": 7.48, "pco2": 46, "hco3": 33},
        "chem": {"na": 138, "k": 3.1, "cl": 95, "tco2": 34, "creatinine": 0.7, "albumin": 4.1, "ca": 9.5},
        "urine": [
            {"taken_at": "2026-05-02T08:00", "na": 110, "cl": 96, "creatinine": 50},
            {"taken_at": "2026-05-03T08:00", "na": 15, "cl": 11, "creatinine": 90},
        ],
        "context": {"bp": "104/66"},
    }
    assessment = assess(data)
    assert "urine_diuretic_screen" in {t.test for t in assessment.next_tests}
    assert tiers(assessment)["diuretic"] in ("likely", "possible")
