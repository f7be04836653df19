"""The shipped metabolic-acidosis pack (rules/acidosis), walked by the generic engine.

Every case here is invented. For each cause of the issue there is a case where it leads the
differential, and one where its key evidence argues against it. Thresholds are the pack's settings,
each with its source in rules/acidosis/pack.yaml; figures marked "from memory" there are so here.
"""

from __future__ import annotations

import subprocess
import sys
from typing import Any

import pytest
import yaml

from notegen.acidbase.calculations import compute_calculations, urine_gap_calculations
from notegen.acidbase.reading import read_acid_base
from notegen.engine import FactInput
from notegen.intake.read import read_case_data
from notegen.knowledge import shipped_knowledge
from notegen.pipeline import Drafter
from notegen.resources import rules_dir
from notegen.workup.acidosis import evaluate_acidosis
from notegen.workup.acidosis_model import ACIDOSIS_CAUSE_IDS, AcidosisWorkup

PACK = shipped_knowledge().acidosis_pack
DRAFTER = Drafter()
ADULT = {"age": 45, "sex": "male"}
# A high anion gap acidosis: Na 138 - (Cl 100 + HCO3 8) = 30 mmol/L; Winter's formula
# (Albert, Dell & Winters 1967) 1.5 x 8 + 8 = 20 +/- 2, met by PaCO2 20.
HIGH_GAP = {
    "patient": ADULT,
    "gas": {"sample": "arterial", "ph": 7.20, "pco2": 20, "hco3": 8},
    "chem": {"na": 138, "k": 4.5, "cl": 100, "albumin": 4.0, "creatinine": 1.0, "bun": 14, "glucose": 100},
}
# A normal anion gap acidosis: 138 - (115 + 13) = 10 mmol/L; Winter's 1.5 x 13 + 8 = 27.5 +/- 2, PaCO2 28.
NORMAL_GAP = {
    "patient": ADULT,
    "gas": {"sample": "arterial", "ph": 7.28, "pco2": 28, "hco3": 13},
    "chem": {"na": 138, "k": 4.0, "cl": 115, "albumin": 4.0, "creatinine": 1.0, "bun": 14, "glucose": 100},
}
# Urine Na 40 + K 30 - Cl 100 = -30 mmol/L: ammonium excreted (Batlle et al., NEJM 1988;318:594).
URINE_NEGATIVE_GAP = {"na": 40, "k": 30, "cl": 100}
# Urine Na 50 + K 30 - Cl 60 = +20 mmol/L: ammonium not excreted (Batlle et al., 1988).
URINE_POSITIVE_GAP = {"na": 50, "k": 30, "cl": 60}


def case_with(base: dict[str, Any], **changes: Any) -> dict[str, Any]:
    data: dict[str, Any] = {key: dict(value) for key, value in base.items()}
    for section, values in changes.items():
        data.setdefault(section, {}).update(values)
    return data


def workup(data: dict[str, Any], extra: dict[str, FactInput] | None = None) -> AcidosisWorkup:
    case = read_case_data({"units": "conventional", **data})
    reading = read_acid_base(case)
    calculations = {**compute_calculations(case), **urine_gap_calculations(case)}
    result = evaluate_acidosis(case, reading, PACK, calculations=calculations, extra_facts=extra)
    assert result is not None, "no acidosis work-up for this case"
    return result


def cause_of(result: AcidosisWorkup, cause: str) -> Any:
    return next(c for c in result.differential if c.cause == cause)


def against_ids(result: AcidosisWorkup, cause: str) -> set[str]:
    return {e.id for e in cause_of(result, cause).opposing}


LEADS: list[tuple[str, dict[str, Any], dict[str, FactInput] | None]] = [
    (
        "ketoacidosis",
        case_with(HIGH_GAP, chem={"bhb": 6.0, "glucose": 450}, context={"findings": ["diabetes"]}),
        None,
    ),
    ("lactic_acidosis", case_with(HIGH_GAP, chem={"lactate": 8.0}, context={"findings": ["septic shock"]}), None),
    (
        # Osmolal gap 340 - (2 x 138 + 100/18 + 14/2.8) = 53.4 mOsm/kg (Hoffman et al., 1993 formula).
        "toxic_alcohol",
        case_with(HIGH_GAP, chem={"osm": 340}, context={"findings": ["antifreeze ingestion"]}),
        None,
    ),
    ("salicylate", case_with(HIGH_GAP, chem={"salicylate": 55}, context={"meds": ["aspirin"]}), None),
    # Creatinine 6.0 mg/dL at 45 gives an eGFR near 11 (CKD-EPI 2021, Inker et al., NEJM 2021).
    ("kidney_failure", case_with(HIGH_GAP, chem={"creatinine": 6.0, "bun": 90}), None),
    (
        "pyroglutamic_acidosis",
        case_with(
            HIGH_GAP,
            chem={"lactate": 1.2, "bhb": 0.3},
            context={"meds": ["paracetamol"], "findings": ["malnutrition"]},
        ),
        None,
    ),
    (
        "d_lactic_acidosis",
        case_with(HIGH_GAP, chem={"lactate": 1.1}, context={"findings": ["short bowel syndrome"]}),
        None,
    ),
    ("gi_bicarbonate_loss", case_with(NORMAL_GAP, urine=URINE_NEGATIVE_GAP, context={"findings": ["diarrhea"]}), None),
    ("distal_rta", case_with(NORMAL_GAP, chem={"k": 3.0}, urine={**URINE_POSITIVE_GAP, "ph": 6.5}), None),
    (
        "proximal_rta",
        case_with(NORMAL_GAP, chem={"k": 3.0, "phos": 1.8}, urine={**URINE_NEGATIVE_GAP, "ph": 5.0}),
        None,
    ),
    (
        "hyperkalemic_rta",
        case_with(
            NORMAL_GAP, chem={"k": 6.0}, urine={"ph": 5.2}, context={"meds": ["lisinopril"], "findings": ["diabetes"]}
        ),
        None,
    ),
    ("chloride_load", case_with(NORMAL_GAP, context={"findings": ["saline resuscitation"]}), None),
    ("carbonic_anhydrase_inhibitor", case_with(NORMAL_GAP, context={"meds": ["acetazolamide"]}), None),
    # Chronic kidney disease with a normal gap: creatinine 3.0 mg/dL at 45 gives an eGFR near 25
    # (CKD-EPI 2021, Inker et al., NEJM 2021), below 30, where the acidosis of kidney disease is
    # usually still normal-gap (Kraut & Madias, Am J Kidney Dis 2016; from memory).
    ("kidney_failure", case_with(NORMAL_GAP, chem={"creatinine": 3.0}, context={"findings": ["ckd"]}), None),
]

AGAINST: list[tuple[str, str, dict[str, Any], dict[str, FactInput] | None]] = [
    # (cause, its key evidence against, case, extra facts)
    ("ketoacidosis", "bhb_normal", case_with(HIGH_GAP, chem={"bhb": 0.3, "glucose": 450}), None),
    (
        "lactic_acidosis",
        "lactate_normal",
        case_with(HIGH_GAP, chem={"lactate": 1.0}, context={"findings": ["sepsis"]}),
        None,
    ),
    # Osmolal gap 290 - 286.6 = 3.4 mOsm/kg, below 10 (Kraut & Xing, AJKD 2011;58:480).
    ("toxic_alcohol", "osmolal_gap_normal", case_with(HIGH_GAP, chem={"osm": 290}), None),
    (
        "toxic_alcohol",
        "level_negative",
        case_with(HIGH_GAP, context={"findings": ["ingestion"]}),
        {"toxic_alcohol_detected": False},
    ),
    ("salicylate", "level_low", case_with(HIGH_GAP, chem={"salicylate": 3}, context={"meds": ["aspirin"]}), None),
    (
        "kidney_failure",
        "egfr_preserved",
        case_with(HIGH_GAP, chem={"creatinine": 0.9}, context={"findings": ["ckd"]}),
        None,
    ),
    (
        "pyroglutamic_acidosis",
        "no_acetaminophen_listed",
        case_with(
            HIGH_GAP, chem={"lactate": 1.2, "bhb": 0.3}, context={"meds": ["lisinopril"], "findings": ["malnutrition"]}
        ),
        None,
    ),
    ("d_lactic_acidosis", "no_short_bowel", case_with(HIGH_GAP, chem={"lactate": 1.1}), None),
    (
        "gi_bicarbonate_loss",
        "ammonium_low",
        case_with(NORMAL_GAP, urine=URINE_POSITIVE_GAP, context={"findings": ["diarrhea"]}),
        None,
    ),
    ("distal_rta", "urine_acid", case_with(NORMAL_GAP, chem={"k": 3.0}, urine={**URINE_POSITIVE_GAP, "ph": 5.0}), None),
    ("proximal_rta", "urine_not_acid", case_with(NORMAL_GAP, chem={"k": 3.0, "phos": 1.8}, urine={"ph": 6.8}), None),
    (
        "hyperkalemic_rta",
        "potassium_not_high",
        case_with(NORMAL_GAP, chem={"k": 4.0}, context={"meds": ["lisinopril"]}),
        None,
    ),
    ("chloride_load", "no_saline_reported", case_with(NORMAL_GAP, context={"findings": ["diarrhea"]}), None),
    ("carbonic_anhydrase_inhibitor", "none_listed", case_with(NORMAL_GAP, context={"meds": ["lisinopril"]}), None),
]


def test_every_cause_of_the_issue_is_in_the_pack_with_its_id() -> None:
    assert {cause.id for cause in PACK.spec.causes} == ACIDOSIS_CAUSE_IDS
    assert {cause for cause, _, _ in LEADS} == ACIDOSIS_CAUSE_IDS
    assert {cause for cause, *_ in AGAINST} == ACIDOSIS_CAUSE_IDS


def test_every_suggested_test_of_the_issue_is_in_the_pack_with_its_id() -> None:
    assert [test.id for test in PACK.spec.tests] == [
        "ketones",
        "lactate",
        "serum_osmolality",
        "toxic_alcohol_levels",
        "salicylate_level",
        "acetaminophen_level",
        "urine_anion_gap",
        "urine_ph",
    ]


@pytest.mark.parametrize(("cause", "data", "extra"), LEADS, ids=[c for c, _, _ in LEADS])
def test_each_cause_leads_on_its_own_evidence(
    cause: str, data: dict[str, Any], extra: dict[str, FactInput] | None
) -> None:
    result = workup(data, extra)
    assert result.differential[0].cause == cause
    assert result.differential[0].tier == "likely"
    assert result.differential[0].supporting
    # No other cause is also likely on these invented values.
    assert all(c.tier != "likely" for c in result.differential[1:])


@pytest.mark.parametrize(("cause", "evidence", "data", "extra"), AGAINST, ids=[f"{c}-{e}" for c, e, _, _ in AGAINST])
def test_key_evidence_argues_against_each_cause(
    cause: str, evidence: str, data: dict[str, Any], extra: dict[str, FactInput] | None
) -> None:
    result = workup(data, extra)
    assert evidence in against_ids(result, cause)
    assert cause_of(result, cause).tier != "likely"
    assert result.differential[0].cause != cause or result.differential[0].tier != "likely"


def test_high_gap_shows_only_high_gap_causes_and_normal_gap_only_normal_gap_ones() -> None:
    high = workup(HIGH_GAP)
    normal = workup(NORMAL_GAP)
    assert high.kind == "high_gap" and normal.kind == "normal_gap"
    assert {c.cause for c in high.differential} == {
        "ketoacidosis", "lactic_acidosis", "toxic_alcohol", "salicylate", "kidney_failure",
        "pyroglutamic_acidosis", "d_lactic_acidosis",
    }  # fmt: skip
    # Kidney disease is on both sides: its acidosis is normal-gap until the late stages.
    assert {c.cause for c in normal.differential} == {
        "gi_bicarbonate_loss", "distal_rta", "proximal_rta", "hyperkalemic_rta", "chloride_load",
        "carbonic_anhydrase_inhibitor", "kidney_failure",
    }  # fmt: skip
    assert cause_of(normal, "kidney_failure").tier == "unlikely"  # eGFR about 100 at creatinine 1.0
    # A normal-gap value moves nothing on the high-gap side, so no urine test is suggested there.
    assert not {"urine_anion_gap", "urine_ph"} & {t.test for t in high.next_tests}
    assert not {"ketones", "lactate", "serum_osmolality"} & {t.test for t in normal.next_tests}


def test_a_high_gap_acidosis_without_ketones_or_lactate_asks_for_them() -> None:
    # The issue's complaint: an anion gap of 34 got no suggestion of ketones, lactate or an osmolal gap.
    data = case_with(HIGH_GAP, chem={"cl": 96})  # 138 - (96 + 8) = 34 mmol/L
    tests = {t.test: t for t in workup(data).next_tests}
    assert {"ketones", "lactate", "serum_osmolality"} <= set(tests)
    assert "ketoacidosis" in tests["ketones"].why and "lactic acidosis" in tests["lactate"].why


def test_a_normal_gap_acidosis_asks_for_the_urine_anion_gap_and_urine_ph() -> None:
    tests = {t.test for t in workup(NORMAL_GAP).next_tests}
    assert {"urine_anion_gap", "urine_ph"} <= tests


@pytest.mark.parametrize(
    ("urine", "chem", "outcome"),
    [
        (URINE_NEGATIVE_GAP, {}, "adequate"),
        (URINE_POSITIVE_GAP, {}, "low"),
        # Urine sodium 12, below 20: the gap cannot be read (Batlle et al., NEJM 1988;318:594).
        ({"na": 12, "k": 30, "cl": 30}, {}, "unreadable"),
        # Ketonuria adds unmeasured anions (Batlle et al., 1988).
        ({**URINE_POSITIVE_GAP, "ketones": 80}, {}, "unreadable"),
        ({}, {}, "unknown"),
        # Urine osmolal gap 600 - (2 x (50 + 30) + 700/2.8) = 190, at or above 150: ammonium excreted
        # (from memory), read before the urine anion gap, which is positive here.
        ({**URINE_POSITIVE_GAP, "osm": 600, "urea_nitrogen": 700}, {}, "adequate"),
        # 400 - (160 + 700/2.8) = -10: below 150, low ammonium (from memory).
        ({**URINE_NEGATIVE_GAP, "osm": 400, "urea_nitrogen": 700, "na": 50, "k": 30, "cl": 110}, {}, "low"),
    ],
)
def test_the_urine_ammonium_reading_and_its_limits(urine: dict[str, Any], chem: dict[str, Any], outcome: str) -> None:
    result = workup(case_with(NORMAL_GAP, urine=urine, chem=chem))
    assert result.ammonium == outcome


def test_the_urine_anion_gap_is_not_read_beside_a_high_gap_acidosis() -> None:
    # Na 138 - (Cl 115 + HCO3 6) = 17 with a delta ratio (17 - 12)/(24 - 6) = 0.28, below 0.4
    # (Rastegar, JASN 2007): high and normal gap together. Winter's 1.5 x 6 + 8 = 17 +/- 2.
    data = {
        "patient": ADULT,
        "gas": {"sample": "arterial", "ph": 7.16, "pco2": 17, "hco3": 6},
        "chem": {"na": 138, "k": 4.0, "cl": 115, "albumin": 4.0},
        "urine": URINE_NEGATIVE_GAP,
    }
    result = workup(data)
    assert result.kind == "mixed"
    assert result.ammonium == "unreadable"
    assert len(result.differential) == 13
    assert "urine_anion_gap" not in {t.test for t in result.next_tests}


def test_no_work_up_without_a_metabolic_acidosis() -> None:
    case = read_case_data({"gas": {"sample": "arterial", "ph": 7.40, "pco2": 40, "hco3": 24}})
    assert evaluate_acidosis(case, read_acid_base(case), PACK) is None
    assert DRAFTER.assess(case).acidosis is None


def test_the_pack_osmolal_gap_threshold_is_the_reading_s() -> None:
    # One figure in two files: rules/acid_base.yaml (the reading) and rules/acidosis (the pack).
    assert PACK.settings["osmolal_gap_high_from"] == (DRAFTER.settings.osmolal_gap_high.value, "mOsm/kg")


def test_every_setting_names_its_source() -> None:
    spec = yaml.safe_load((rules_dir() / "acidosis" / "pack.yaml").read_text(encoding="utf-8"))
    for setting in spec["settings"]:
        assert setting["source"].strip(), setting["id"]


def test_the_engine_still_imports_no_work_up_or_clinical_module() -> None:
    code = (
        "import sys, notegen.engine; "
        "bad = [m for m in sys.modules if m.startswith(('notegen.workup', 'notegen.acidbase', 'notegen.case', "
        "'notegen.knowledge', 'notegen.assess', 'notegen.note'))]; print(bad)"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    assert out.strip() == "[]"


def test_the_engine_source_names_no_acidosis_cause() -> None:
    from pathlib import Path

    import notegen.engine

    text = " ".join(p.read_text(encoding="utf-8") for p in Path(notegen.engine.__file__).parent.glob("*.py"))
    assert not [cause for cause in ACIDOSIS_CAUSE_IDS if cause in text]


def test_a_service_overlay_changes_a_threshold_in_the_drafted_note(tmp_path: Any) -> None:
    (tmp_path / "acidosis").mkdir()
    (tmp_path / "acidosis" / "ours.yaml").write_text(
        "settings:\n  - {id: lactate_high_from, value: 9, unit: mmol/L, source: our laboratory}\n", encoding="utf-8"
    )
    data = case_with(HIGH_GAP, chem={"lactate": 8.0})
    shipped = DRAFTER.assess(read_case_data({"units": "conventional", **data})).acidosis
    ours = Drafter(rules_dirs=(tmp_path,)).assess(read_case_data({"units": "conventional", **data})).acidosis
    assert shipped is not None and ours is not None
    assert {e.id for e in cause_of(shipped, "lactic_acidosis").supporting} == {"lactate_high"}
    assert {e.id for e in cause_of(ours, "lactic_acidosis").supporting} == {"lactate_raised"}


def test_the_sample_service_overlay_reads_a_lower_urine_osmolal_gap_as_adequate() -> None:
    from pathlib import Path

    service = Path(__file__).resolve().parents[2] / "samples" / "service"
    # Urine osmolal gap 500 - (2 x (50 + 30) + 616/2.8) = 120 mOsm/kg: below the shipped 150, above the service's 100.
    data = case_with(NORMAL_GAP, urine={**URINE_POSITIVE_GAP, "osm": 500, "urea_nitrogen": 616})
    shipped = DRAFTER.assess(read_case_data({"units": "conventional", **data})).acidosis
    ours = Drafter(rules_dirs=(service,)).assess(read_case_data({"units": "conventional", **data})).acidosis
    assert shipped is not None and ours is not None
    assert (shipped.ammonium, ours.ammonium) == ("low", "adequate")


# --- Metformin and kidney function; a moderately raised ketone ------------------------------------------
def test_metformin_weighs_more_where_kidney_function_lets_it_accumulate() -> None:
    # Creatinine 4.0 mg/dL at 45 gives an eGFR near 18 (CKD-EPI 2021, Inker et al., NEJM 2021), below 30,
    # where metformin is contraindicated (FDA drug safety communication 2016; from memory).
    low = workup(case_with(HIGH_GAP, chem={"lactate": 6.0, "creatinine": 4.0}, context={"meds": ["metformin"]}))
    kept = workup(case_with(HIGH_GAP, chem={"lactate": 6.0}, context={"meds": ["metformin"]}))
    assert {e.id for e in cause_of(low, "lactic_acidosis").supporting} == {"lactate_high", "metformin_low_gfr"}
    assert {e.id for e in cause_of(kept, "lactic_acidosis").supporting} == {"lactate_high", "metformin"}


def test_a_moderately_raised_ketone_with_starvation_makes_ketoacidosis_likely() -> None:
    # Beta-hydroxybutyrate 2.1 mmol/L: above 0.6 (common practice) but below 3 (Umpierrez et al., 2024).
    alone = workup(case_with(HIGH_GAP, chem={"bhb": 2.1}))
    fasting = workup(case_with(HIGH_GAP, chem={"bhb": 2.1}, context={"findings": ["poor oral intake"]}))
    assert {e.id for e in cause_of(alone, "ketoacidosis").supporting} == {"bhb_moderately_raised"}
    assert cause_of(alone, "ketoacidosis").tier == "possible"
    assert cause_of(fasting, "ketoacidosis").tier == "likely"


@pytest.mark.parametrize("drug", ["ibuprofen", "naproxen", "trimethoprim-sulfamethoxazole"])
def test_nsaids_and_trimethoprim_count_as_drugs_that_raise_potassium(drug: str) -> None:
    # NSAIDs lower renin and aldosterone; trimethoprim blocks the sodium channel as amiloride does
    # (Kraut & Madias, Nat Rev Nephrol 2010; from memory).
    result = workup(case_with(NORMAL_GAP, chem={"k": 6.0}, context={"meds": [drug]}))
    assert "potassium_raising_drug" in {e.id for e in cause_of(result, "hyperkalemic_rta").supporting}


def test_a_rising_creatinine_keeps_a_preserved_egfr_from_arguing_against_kidney_disease() -> None:
    # Creatinine 1.0 mg/dL gives an eGFR near 90 (CKD-EPI 2021); with acute kidney injury reported the
    # creatinine is not steady and overstates kidney function (KDIGO 2012; from memory).
    steady = workup(HIGH_GAP)
    rising = workup(case_with(HIGH_GAP, context={"findings": ["acute kidney injury"]}))
    assert "egfr_preserved" in against_ids(steady, "kidney_failure")
    assert "egfr_preserved" not in against_ids(rising, "kidney_failure")
