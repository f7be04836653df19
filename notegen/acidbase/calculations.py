"""The calculation core: pure functions, each naming its published source.

Inputs are in the canonical conventional units of `notegen.case.model` (mmHg, mmol/L, mg/dL for
creatinine, BUN, glucose and calcium, g/dL for albumin). `compute_calculations` applies them to
a case and returns every calculation whose inputs are present, each with its formula, inputs
and source, so a note can show its working.
"""

from __future__ import annotations

from collections.abc import Mapping

from notegen._format import format_range, format_value
from notegen.acidbase.calculation import PH_READABLE as PH_READABLE
from notegen.acidbase.calculation import Calculation as Calculation
from notegen.acidbase.calculation import make_calculation
from notegen.acidbase.calculation import usable as usable
from notegen.acidbase.calculation import usable_ph as usable_ph
from notegen.acidbase.formulas import (
    EGFR_MIN_AGE,
    _expected_hco3_respiratory,
    anion_gap,
    corrected_anion_gap,
    delta_gap,
    delta_ratio,
    expected_pco2_metabolic_acidosis,
    expected_pco2_metabolic_alkalosis,
    expected_total_co2,
    henderson_hasselbalch_hco3,
    henderson_hasselbalch_ph,
    osmolal_gap,
)
from notegen.acidbase.kidney_calculations import kidney_calculations
from notegen.acidbase.kidney_calculations import urine_gap_calculations as urine_gap_calculations
from notegen.case.bounds import current_bounds, exact_only
from notegen.case.model import Case
from notegen.knowledge import shipped_knowledge
from notegen.knowledge.settings import AcidBaseSettings, Setting

# --- Applying the core to a case -------------------------------------------------------------------

def gap_bicarbonate(case: Case) -> tuple[float, str] | None:
    """The bicarbonate used for the anion gap: the panel total CO2 if given, else the gas HCO3.

    Published anion-gap reference ranges were set with the chemistry panel's measured total CO2
    (Winter et al., Arch Intern Med 1990; Kraut & Madias, CJASN 2007;2:162).
    """
    if usable(case.chem.tco2):
        assert case.chem.tco2 is not None
        return case.chem.tco2, "panel total CO2"
    if usable(case.gas.hco3):
        assert case.gas.hco3 is not None
        return case.gas.hco3, "gas bicarbonate"
    return None


def gas_bicarbonate(case: Case, s: AcidBaseSettings) -> tuple[float, str] | None:
    """The bicarbonate the compensation rules read: the gas HCO3, else one calculated from the gas pH
    and PaCO2 (Henderson-Hasselbalch), else the panel total CO2."""
    gas = case.gas
    if usable(gas.hco3):
        assert gas.hco3 is not None
        return gas.hco3, "gas bicarbonate"
    if usable_ph(gas.ph) and usable(gas.pco2):
        assert gas.ph is not None and gas.pco2 is not None
        value = henderson_hasselbalch_hco3(gas.ph, gas.pco2, s.pk_carbonic.value, s.co2_solubility.value)
        return value, "calculated bicarbonate"
    if usable(case.chem.tco2):
        assert case.chem.tco2 is not None
        return case.chem.tco2, "panel total CO2"
    return None


def _gas_calculations(case: Case, s: AcidBaseSettings, out: dict[str, Calculation]) -> None:
    gas = case.gas
    pk, sol = s.pk_carbonic.value, s.co2_solubility.value
    hh_source = "Henderson-Hasselbalch; constants as in CLSI C46-A (2001)"
    pco2_name = "PvCO2" if gas.sample == "venous" else "PaCO2"  # a venous value is never labelled arterial
    if usable(gas.pco2) and usable(gas.hco3):
        assert gas.pco2 is not None and gas.hco3 is not None
        inputs = {pco2_name: format_value(gas.pco2, "mmHg"), "HCO3 (gas)": format_value(gas.hco3, "mmol/L")}
        out["calculated_ph"] = make_calculation(
            "calculated_ph",
            henderson_hasselbalch_ph(gas.pco2, gas.hco3, pk, sol),
            "",
            f"{pk:g} + log10(HCO3 / ({sol:g} x PaCO2))",
            inputs,
            hh_source,
        )
        out["expected_total_co2"] = make_calculation(
            "expected_total_co2",
            expected_total_co2(gas.hco3, gas.pco2, sol),
            "mmol/L",
            f"HCO3 + {sol:g} x PaCO2",
            inputs,
            hh_source,
            note="the panel total CO2 should come close to this when drawn at the same time",
        )
    if usable(gas.pco2):
        assert gas.pco2 is not None
        pco2 = gas.pco2
        n_p, n_h, tol = s.pco2_normal.value, s.hco3_normal.value, s.resp_hco3_tolerance.value
        inputs = {pco2_name: format_value(pco2, "mmHg")}
        rules: tuple[tuple[str, Setting, str], ...] = ()
        if pco2 > n_p:
            rules = (
                ("expected_hco3_acute", s.resp_acidosis_acute_slope, "acute respiratory acidosis"),
                ("expected_hco3_chronic", s.resp_acidosis_chronic_slope, "chronic respiratory acidosis"),
            )
        elif pco2 < n_p:
            rules = (
                ("expected_hco3_acute", s.resp_alkalosis_acute_slope, "acute respiratory alkalosis"),
                ("expected_hco3_chronic", s.resp_alkalosis_chronic_slope, "chronic respiratory alkalosis"),
            )
        sign = "+" if pco2 > n_p else "-"
        for name, slope, label in rules:
            est = _expected_hco3_respiratory(pco2, slope.value, tol, n_p, n_h)
            out[name] = make_calculation(
                name,
                est.value,
                "mmol/L",
                f"{n_h:g} {sign} {slope.value:g} x |PaCO2 - {n_p:g}| / 10, +/- {tol:g}",
                inputs,
                slope.source,
                note=f"expected for {label}",
                estimate=est,
            )


def _gap_calculations(case: Case, s: AcidBaseSettings, out: dict[str, Calculation]) -> None:
    chem = case.chem
    bicarbonate = gap_bicarbonate(case)
    if bicarbonate is None:
        _expected_pco2(case, s, out)
        return
    hco3, hco3_label = bicarbonate
    hco3_note = f"bicarbonate taken from the {hco3_label}"
    if usable(chem.na) and usable(chem.cl):
        assert chem.na is not None and chem.cl is not None
        inputs = {
            "Na": format_value(chem.na, "mmol/L"),
            "Cl": format_value(chem.cl, "mmol/L"),
            f"HCO3 ({hco3_label})": format_value(hco3, "mmol/L"),
        }
        gap = anion_gap(chem.na, chem.cl, hco3)
        out["anion_gap"] = make_calculation(
            "anion_gap",
            gap,
            "mmol/L",
            "Na - (Cl + HCO3)",
            inputs,
            s.anion_gap_high.source,
            note=f"{hco3_note}; reference {format_range(s.anion_gap_low.value, s.anion_gap_high.value, 'mmol/L')} "
            "(analyser-dependent)",
        )
        gap_used = gap
        if usable(chem.albumin):
            assert chem.albumin is not None
            n_alb, factor = s.normal_albumin.value, s.albumin_gap_factor.value
            gap_used = corrected_anion_gap(gap, chem.albumin, n_alb, factor)
            out["anion_gap_corrected"] = make_calculation(
                "anion_gap_corrected",
                gap_used,
                "mmol/L",
                f"AG + {factor:g} x ({n_alb:g} - albumin)",
                {"anion gap": format_value(gap, "mmol/L"), "albumin": format_value(chem.albumin, "g/dL")},
                s.albumin_gap_factor.source,
                note=f"normal albumin taken as {format_value(n_alb, 'g/dL')}",
            )
        which = "albumin-corrected anion gap" if "anion_gap_corrected" in out else "anion gap (uncorrected)"
        n_gap, n_hco3 = s.anion_gap_normal.value, s.hco3_normal.value
        out["delta_gap"] = make_calculation(
            "delta_gap",
            delta_gap(gap_used, n_gap),
            "mmol/L",
            f"AG - {n_gap:g}",
            {which: format_value(gap_used, "mmol/L")},
            s.anion_gap_normal.source,
        )
        if hco3 < n_hco3:
            out["delta_ratio"] = make_calculation(
                "delta_ratio",
                delta_ratio(gap_used, hco3, n_gap, n_hco3),
                "",
                f"(AG - {n_gap:g}) / ({n_hco3:g} - HCO3)",
                {
                    which: format_value(gap_used, "mmol/L"),
                    f"HCO3 ({hco3_label})": format_value(hco3, "mmol/L"),
                },
                s.delta_ratio_high.source,
                note=f"{hco3_note}; unstable when the bicarbonate has fallen by only 1-2 mmol/L",
            )
    _expected_pco2(case, s, out)


def _expected_pco2(case: Case, s: AcidBaseSettings, out: dict[str, Calculation]) -> None:
    bicarbonate = gas_bicarbonate(case, s)
    if bicarbonate is None:
        return
    hco3, hco3_label = bicarbonate
    hco3_note = f"bicarbonate taken from the {hco3_label}"
    inputs_h = {f"HCO3 ({hco3_label})": format_value(round(hco3, 2), "mmol/L")}
    n_hco3 = s.hco3_normal.value
    if hco3 < n_hco3:
        est = expected_pco2_metabolic_acidosis(hco3, s.winters_tolerance.value)
        out["expected_pco2"] = make_calculation(
            "expected_pco2",
            est.value,
            "mmHg",
            f"1.5 x HCO3 + 8, +/- {s.winters_tolerance.value:g}",
            inputs_h,
            s.winters_tolerance.source,
            note=f"Winter's formula, if the low bicarbonate is a metabolic acidosis; {hco3_note}",
            estimate=est,
        )
    elif hco3 > n_hco3:
        slope, tol = s.alkalosis_pco2_slope.value, s.alkalosis_pco2_tolerance.value
        est = expected_pco2_metabolic_alkalosis(hco3, slope, tol, s.pco2_normal.value, n_hco3)
        out["expected_pco2"] = make_calculation(
            "expected_pco2",
            est.value,
            "mmHg",
            f"{s.pco2_normal.value:g} + {slope:g} x (HCO3 - {n_hco3:g}), +/- {tol:g}",
            inputs_h,
            s.alkalosis_pco2_slope.source,
            note=f"0.7 rule, if the high bicarbonate is a metabolic alkalosis; compensation above about "
            f"{s.alkalosis_pco2_ceiling.value:g} mmHg is uncommon; {hco3_note}",
            estimate=est,
        )


def compute_calculations(case: Case, settings: AcidBaseSettings | None = None) -> dict[str, Calculation]:
    """Every calculation whose inputs the case holds, keyed by stable name, in a fixed order."""
    s = settings or shipped_knowledge().settings
    return _computed(exact_only(case), s)  # a reported bound ("<10") is never used as if it were exact


def _computed(case: Case, s: AcidBaseSettings) -> dict[str, Calculation]:
    out: dict[str, Calculation] = {}
    _gas_calculations(case, s, out)
    _gap_calculations(case, s, out)
    kidney_calculations(case, s, out)
    return out


def blocked_by_bounds(
    case: Case, settings: AcidBaseSettings | None = None, *, done: Mapping[str, Calculation]
) -> dict[str, tuple[str, ...]]:
    """For each reported bound of the case's latest set, the calculations it alone keeps from being computed.

    Worked out by computing with that one bound as if exact and the others still left out; the
    results are thrown away. `done` is the case's `compute_calculations` result.
    """
    s = settings or shipped_knowledge().settings
    blocked: dict[str, tuple[str, ...]] = {}
    for measurement in current_bounds(case):
        would = _computed(exact_only(case, keep=measurement.field), s)
        names = tuple(name for name in would if name not in done)
        if names:
            blocked[measurement.field] = names
    return blocked


def missing_calculations(
    case: Case, settings: AcidBaseSettings | None = None, *, done: Mapping[str, Calculation] | None = None
) -> dict[str, str]:
    """For each core calculation not computed, what it lacks, in words.

    `done` is the case's `compute_calculations` result when the caller has it already.
    """
    if done is None:
        done = compute_calculations(case, settings)
    needs = {
        "calculated_ph": "a gas PaCO2 and bicarbonate",
        "anion_gap": "sodium, chloride and a bicarbonate (gas or panel total CO2)",
        "anion_gap_corrected": "the anion gap inputs and serum albumin",
        "delta_gap": "the anion gap inputs",
        "delta_ratio": "the anion gap inputs and a bicarbonate below normal",
        "expected_pco2": "a bicarbonate away from normal",
        "egfr": "serum creatinine, age and sex",
        "osmolal_gap": "measured osmolality, sodium, glucose and BUN",
        "urine_k_creatinine": "urine potassium and urine creatinine",
        "fe_na": "urine and plasma sodium and creatinine",
        "fe_cl": "urine and plasma chloride and creatinine",
        "chloride_deficit": "weight and a chloride below target",
        "corrected_calcium": "total calcium and albumin",
    }
    out = {name: f"needs {text}" for name, text in needs.items() if name not in done}
    impossible = impossible_osmolal_gap(case, settings)
    if impossible is not None:
        out["osmolal_gap"] = impossible
    age = case.patient.age
    if "egfr" in out and age is not None and age < EGFR_MIN_AGE and usable(case.chem.creatinine):
        out["egfr"] = f"not calculated: age {age:g} years; CKD-EPI 2021 applies to adults only"
    elif "egfr" in out and usable(case.chem.creatinine):
        lacking = [word for word, value in (("age", age), ("sex", case.patient.sex)) if value is None]
        if lacking:
            verb = "are" if len(lacking) > 1 else "is"
            out["egfr"] = (
                f"not calculated: serum creatinine is given, but the patient's {' and '.join(lacking)} {verb} not"
            )
    return out


def impossible_osmolal_gap(case: Case, settings: AcidBaseSettings | None = None) -> str | None:
    """Why the osmolal gap was not given, when its inputs give a gap no patient has; else None."""
    s = settings or shipped_knowledge().settings
    chem = case.chem
    if not (usable(chem.osm) and usable(chem.na) and usable(chem.glucose) and usable(chem.bun)):
        return None
    assert chem.osm is not None and chem.na is not None and chem.glucose is not None and chem.bun is not None
    gap = osmolal_gap(chem.osm, chem.na, chem.glucose, chem.bun)
    if gap >= s.osmolal_gap_floor.value:
        return None
    return (
        f"not given: the measured osmolality is more than {format_value(-s.osmolal_gap_floor.value, 'mOsm/kg')} "
        "below the one calculated from sodium, glucose and BUN, beyond any published range (about -14 to +10); "
        "a sodium, glucose or BUN in the wrong unit, or a mistyped value, is likely: check them"
    )
