"""Each threshold of the shipped alkalosis pack, tested at its edge, with its source named."""

from __future__ import annotations

import pytest

from notegen.differential import default_alkalosis_pack
from notegen.engine import BooleanFact, FactInput, NumberFact, WalkResult, walk

PACK = default_alkalosis_pack()


def run(**facts: FactInput) -> WalkResult:
    return walk(PACK, facts)


def evidence_ids(result: WalkResult, cause: str) -> set[str]:
    found = result.cause(cause)
    return {e.id for e in (*found.supporting, *found.opposing)}


def factor_status(result: WalkResult, factor: str) -> str | None:
    return next((f.status for f in result.factors if f.id == factor), None)


@pytest.mark.parametrize(
    ("setting", "value", "unit", "source_words"),
    [
        ("urine_cl_responsive_below", 20, "mmol/L", "Luke & Galla, JASN 2012"),
        ("urine_cl_resistant_above", 40, "mmol/L", "Luke & Galla, JASN 2012"),
        ("egfr_maintenance_below", 40, "mL/min/1.73 m2", "common practice"),
        ("k_low_below", 3.5, "mmol/L", "common practice"),
        ("k_severe_below", 2.0, "mmol/L", "from memory"),
        ("mg_low_below", 1.7, "mg/dL", "common practice"),
        ("urine_k_creatinine_renal_from", 1.5, "mmol/mmol", "Assadi"),
        ("urine_calcium_creatinine_low_at_most", 0.2, "mmol/mmol", "from memory"),
        ("systolic_high_from", 140, "mmHg", "from memory"),
        ("diastolic_high_from", 90, "mmHg", "from memory"),
        ("loop_diuretic_action_hours", 6, "h", "common practice"),
        ("thiazide_diuretic_action_hours", 24, "h", "common practice"),
        ("urine_na_high_from", 20, "mmol/L", "common practice"),
        ("pco2_high_above", 45, "mmHg", "common practice"),
    ],
)
def test_settings_hold_the_published_figures(setting: str, value: float, unit: str, source_words: str) -> None:
    assert PACK.settings[setting] == (value, unit)
    source = next(s.source for s in PACK.spec.settings if s.id == setting)
    assert source_words in source


# Urine chloride < 20 responsive, > 40 resistant, between indeterminate (Luke & Galla, JASN 2012;23:204).
@pytest.mark.parametrize(
    ("urine_cl", "outcome"),
    [(19.9, "responsive"), (20, "indeterminate"), (40, "indeterminate"), (40.1, "resistant")],
    ids=["19.9-responsive-LukeGalla2012", "20-between", "40-between", "40.1-resistant-LukeGalla2012"],
)
def test_urine_chloride_cut_offs(urine_cl: float, outcome: str) -> None:
    result = run(urine_cl=NumberFact(urine_cl, "mmol/L"), loop_or_thiazide_acting=False)
    assert result.outcome("chloride_class").outcome == outcome


def test_reported_bound_below_the_cut_off_classifies() -> None:
    # "<10 mmol/L" is below 20 whatever its true value (Luke & Galla 2012).
    result = run(urine_cl=NumberFact(10, "mmol/L", "<"))
    assert result.outcome("chloride_class").outcome == "responsive"


def test_egfr_40_maintains_common_practice() -> None:
    assert factor_status(run(egfr=NumberFact(39.9, "mL/min/1.73 m2")), "reduced_gfr") == "present"
    assert factor_status(run(egfr=NumberFact(40, "mL/min/1.73 m2")), "reduced_gfr") is None


def test_potassium_cut_offs() -> None:
    # Hypokalemia below 3.5 mmol/L: common practice (lower reference limit).
    assert factor_status(run(k=NumberFact(3.49, "mmol/L")), "hypokalemia") == "present"
    assert factor_status(run(k=NumberFact(3.5, "mmol/L")), "hypokalemia") is None
    # Severe depletion below 2.0 mmol/L: Galla, JASN 2000 (from memory).
    assert "severe_hypokalemia" in evidence_ids(run(k=NumberFact(1.99, "mmol/L")), "potassium_magnesium_depletion")
    assert "severe_hypokalemia" not in evidence_ids(run(k=NumberFact(2.0, "mmol/L")), "potassium_magnesium_depletion")


def test_magnesium_cut_off_common_practice() -> None:
    assert "hypomagnesemia" in evidence_ids(run(mg=NumberFact(1.69, "mg/dL")), "potassium_magnesium_depletion")
    assert "hypomagnesemia" not in evidence_ids(run(mg=NumberFact(1.7, "mg/dL")), "potassium_magnesium_depletion")


def test_urine_potassium_creatinine_cut_off_assadi_2008() -> None:
    low_k = NumberFact(3.0, "mmol/L")
    wasting = run(k=low_k, urine_k_creatinine=NumberFact(1.5, "mmol/mmol"))
    assert "renal_potassium_loss" in evidence_ids(wasting, "potassium_magnesium_depletion")
    conserving = run(k=low_k, urine_k_creatinine=NumberFact(1.49, "mmol/mmol"))
    assert "renal_potassium_loss" not in evidence_ids(conserving, "potassium_magnesium_depletion")


@pytest.mark.parametrize(
    ("ratio", "pattern"),
    [(0.2, "thiazide_or_gitelman_pattern"), (0.21, "loop_or_bartter_pattern")],
    ids=["0.2-low-Blanchard2017-from-memory", "0.21-not-low"],
)
def test_urine_calcium_creatinine_cut_off(ratio: float, pattern: str) -> None:
    result = run(
        urine_cl=NumberFact(60, "mmol/L"),
        loop_or_thiazide_acting=False,
        loop_or_thiazide_listed=False,
        systolic_bp=NumberFact(110, "mmHg"),
        diastolic_bp=NumberFact(70, "mmHg"),
        hypertension=False,
        urine_calcium_creatinine=NumberFact(ratio, "mmol/mmol"),
    )
    assert result.outcome("resistant_pattern").outcome == pattern


@pytest.mark.parametrize(
    ("systolic", "diastolic", "outcome"),
    [(139, 89, "not_high"), (140, 80, "high"), (120, 90, "high")],
    ids=["139/89-not-high", "140-systolic-Williams2018", "90-diastolic-Williams2018"],
)
def test_blood_pressure_cut_offs_from_memory(systolic: float, diastolic: float, outcome: str) -> None:
    result = run(
        systolic_bp=NumberFact(systolic, "mmHg"), diastolic_bp=NumberFact(diastolic, "mmHg"), hypertension=False
    )
    assert result.outcome("blood_pressure").outcome == outcome


def test_urine_sodium_with_low_chloride_common_practice() -> None:
    low_cl = NumberFact(10, "mmol/L")
    assert "bicarbonaturia" in evidence_ids(run(urine_cl=low_cl, urine_na=NumberFact(20, "mmol/L")), "gastric_loss")
    assert "bicarbonaturia" not in evidence_ids(run(urine_cl=low_cl, urine_na=NumberFact(19, "mmol/L")), "gastric_loss")


def test_pco2_after_hypercapnia_common_practice() -> None:
    corrected = BooleanFact(True)
    normal = run(corrected_hypercapnia=corrected, arterial_pco2=NumberFact(45, "mmHg"))
    assert "pco2_now_normal" in evidence_ids(normal, "post_hypercapnia")
    still = run(corrected_hypercapnia=corrected, arterial_pco2=NumberFact(45.1, "mmHg"))
    assert "still_hypercapnic" in evidence_ids(still, "post_hypercapnia")


def test_walk_time_is_measured_elsewhere() -> None:
    # bench/alkalosis_walk.py measures the walk; here only that an empty fact set walks at all.
    result = run()
    assert result.outcome("chloride_class").outcome == "unknown"
    assert result.suggestions[0].test == "urine_chloride"
