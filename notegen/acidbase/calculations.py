"""The calculation core: pure functions, each naming its published source.

Inputs are in the canonical conventional units of `notegen.case.model` (mmHg, mmol/L, mg/dL for
creatinine, BUN, glucose and calcium, g/dL for albumin). `compute_calculations` applies them to
a case and returns every calculation whose inputs are present, each with its formula, inputs
and source, so a note can show its working.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

from pydantic import BaseModel, ConfigDict

from notegen._format import format_range, format_value
from notegen.acidbase.formulas import (
    CREATININE_MOLAR_MASS,
    EGFR_MIN_AGE,
    Estimate,
    _expected_hco3_respiratory,
    anion_gap,
    chloride_deficit,
    corrected_anion_gap,
    corrected_calcium,
    delta_gap,
    delta_ratio,
    egfr_ckd_epi_2021,
    expected_pco2_metabolic_acidosis,
    expected_pco2_metabolic_alkalosis,
    expected_total_co2,
    fractional_excretion,
    henderson_hasselbalch_hco3,
    henderson_hasselbalch_ph,
    osmolal_gap,
    urine_anion_gap,
    urine_osmolal_gap,
    urine_potassium_creatinine_ratio,
)
from notegen.case.bounds import exact_only
from notegen.case.model import Case
from notegen.knowledge.settings import AcidBaseSettings, Setting, default_acid_base_settings

# --- Applying the core to a case -------------------------------------------------------------------


class Calculation(BaseModel):
    """One computed value with its working. `low`/`high` hold a rule's allowed range when it has one."""

    model_config = ConfigDict(frozen=True, extra="forbid")

    name: str
    value: float
    unit: str
    formula: str
    inputs: dict[str, str]  # input name -> value with unit, as text
    source: str
    note: str | None = None
    low: float | None = None
    high: float | None = None


# Bounds far outside survival: they only keep the arithmetic finite should an unvalidated case arrive.
_ARITHMETIC_FLOOR = 1e-6
_ARITHMETIC_LIMIT = 1e6
PH_READABLE = (6.0, 8.5)


def usable(value: float | None) -> bool:
    """A value the arithmetic can use: present, finite, and neither vanishingly small nor absurdly large."""
    return value is not None and math.isfinite(value) and _ARITHMETIC_FLOOR < value < _ARITHMETIC_LIMIT


def usable_ph(value: float | None) -> bool:
    """A pH the arithmetic can use: within 6.0-8.5, far beyond any survivable value."""
    return value is not None and math.isfinite(value) and PH_READABLE[0] <= value <= PH_READABLE[1]


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


def _round(value: float) -> float:
    return round(value, 3)


def _calc(
    name: str,
    value: float,
    unit: str,
    formula: str,
    inputs: dict[str, str],
    source: str,
    note: str | None = None,
    estimate: Estimate | None = None,
) -> Calculation:
    return Calculation(
        name=name,
        value=_round(value),
        unit=unit,
        formula=formula,
        inputs=inputs,
        source=source,
        note=note,
        low=_round(estimate.low) if estimate else None,
        high=_round(estimate.high) if estimate else None,
    )


def _gas_calculations(case: Case, s: AcidBaseSettings, out: dict[str, Calculation]) -> None:
    gas = case.gas
    pk, sol = s.pk_carbonic.value, s.co2_solubility.value
    hh_source = "Henderson-Hasselbalch; constants as in CLSI C46-A (2001)"
    pco2_name = "PvCO2" if gas.sample == "venous" else "PaCO2"  # a venous value is never labelled arterial
    if usable(gas.pco2) and usable(gas.hco3):
        assert gas.pco2 is not None and gas.hco3 is not None
        inputs = {pco2_name: format_value(gas.pco2, "mmHg"), "HCO3 (gas)": format_value(gas.hco3, "mmol/L")}
        out["calculated_ph"] = _calc(
            "calculated_ph",
            henderson_hasselbalch_ph(gas.pco2, gas.hco3, pk, sol),
            "",
            f"{pk:g} + log10(HCO3 / ({sol:g} x PaCO2))",
            inputs,
            hh_source,
        )
        out["expected_total_co2"] = _calc(
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
            out[name] = _calc(
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
        out["anion_gap"] = _calc(
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
            out["anion_gap_corrected"] = _calc(
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
        out["delta_gap"] = _calc(
            "delta_gap",
            delta_gap(gap_used, n_gap),
            "mmol/L",
            f"AG - {n_gap:g}",
            {which: format_value(gap_used, "mmol/L")},
            s.anion_gap_normal.source,
        )
        if hco3 < n_hco3:
            out["delta_ratio"] = _calc(
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
        out["expected_pco2"] = _calc(
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
        out["expected_pco2"] = _calc(
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


def _kidney_calculations(case: Case, s: AcidBaseSettings, out: dict[str, Calculation]) -> None:
    chem, urine, patient = case.chem, case.urine, case.patient
    if usable(chem.creatinine) and patient.age is not None and patient.sex is not None:
        assert chem.creatinine is not None
        if patient.age >= EGFR_MIN_AGE:
            out["egfr"] = _calc(
                "egfr",
                egfr_ckd_epi_2021(chem.creatinine, patient.age, patient.sex),
                "mL/min/1.73 m2",
                "142 x min(Scr/k, 1)^a x max(Scr/k, 1)^-1.200 x 0.9938^age (x 1.012 if female)",
                {
                    "creatinine": format_value(chem.creatinine, "mg/dL"),
                    "age": format_value(patient.age, "years"),
                    "sex": patient.sex,
                },
                "Inker et al., NEJM 2021 (CKD-EPI 2021, no race term)",
                note="assumes creatinine is in a steady state; not valid while it is rising or falling",
            )
    gap: float | None = None
    if usable(chem.osm) and usable(chem.na) and usable(chem.glucose) and usable(chem.bun):
        assert chem.osm is not None and chem.na is not None and chem.glucose is not None
        assert chem.bun is not None
        gap = osmolal_gap(chem.osm, chem.na, chem.glucose, chem.bun)
    if gap is not None and gap >= s.osmolal_gap_floor.value:  # below: named by `impossible_osmolal_gap`
        assert chem.osm is not None and chem.na is not None and chem.glucose is not None
        assert chem.bun is not None
        out["osmolal_gap"] = _calc(
            "osmolal_gap",
            gap,
            "mOsm/kg",
            "measured - (2 x Na + glucose/18 + BUN/2.8)",
            {
                "measured osmolality": format_value(chem.osm, "mOsm/kg"),
                "Na": format_value(chem.na, "mmol/L"),
                "glucose": format_value(chem.glucose, "mg/dL"),
                "BUN": format_value(chem.bun, "mg/dL"),
            },
            s.osmolal_gap_high.source,
        )
    if usable(urine.k) and usable(urine.creatinine):
        assert urine.k is not None and urine.creatinine is not None
        out["urine_k_creatinine"] = _calc(
            "urine_k_creatinine",
            urine_potassium_creatinine_ratio(urine.k, urine.creatinine),
            "mmol/mmol",
            f"urine K / (urine creatinine x 10 / {CREATININE_MOLAR_MASS:g})",
            {
                "urine K": format_value(urine.k, "mmol/L"),
                "urine creatinine": format_value(urine.creatinine, "mg/dL"),
            },
            "Assadi, Iran J Kidney Dis 2008",
            note="about 1.5 mmol/mmol or more points to renal potassium loss",
        )
    if usable(chem.creatinine) and usable(urine.creatinine):
        assert chem.creatinine is not None and urine.creatinine is not None
        for name, label, u_val, p_val in (
            ("fe_na", "Na", urine.na, chem.na),
            ("fe_cl", "Cl", urine.cl, chem.cl),
        ):
            if usable(u_val) and usable(p_val):
                assert u_val is not None and p_val is not None
                out[name] = _calc(
                    name,
                    fractional_excretion(u_val, p_val, urine.creatinine, chem.creatinine),
                    "%",
                    f"(urine {label} x plasma creatinine) / (plasma {label} x urine creatinine) x 100",
                    {
                        f"urine {label}": format_value(u_val, "mmol/L"),
                        f"plasma {label}": format_value(p_val, "mmol/L"),
                        "urine creatinine": format_value(urine.creatinine, "mg/dL"),
                        "plasma creatinine": format_value(chem.creatinine, "mg/dL"),
                    },
                    "clearance ratio (common practice)",
                )
    target, dist = s.chloride_target.value, s.chloride_distribution.value
    if usable(patient.weight_kg) and usable(chem.cl):
        assert patient.weight_kg is not None and chem.cl is not None
        if chem.cl < target:
            out["chloride_deficit"] = _calc(
                "chloride_deficit",
                chloride_deficit(patient.weight_kg, chem.cl, target, dist),
                "mmol",
                f"{dist:g} x weight x ({target:g} - Cl)",
                {"weight": format_value(patient.weight_kg, "kg"), "Cl": format_value(chem.cl, "mmol/L")},
                s.chloride_distribution.source,
                note=(
                    "an estimate, not an amount to give: it assumes chloride spread through "
                    f"{dist:g} L/kg of body weight and a target chloride of {format_value(target, 'mmol/L')}, "
                    "and ignores continuing losses"
                ),
            )
    if usable(chem.ca) and usable(chem.albumin):
        assert chem.ca is not None and chem.albumin is not None
        n_alb, factor = s.normal_albumin.value, s.calcium_albumin_factor.value
        out["corrected_calcium"] = _calc(
            "corrected_calcium",
            corrected_calcium(chem.ca, chem.albumin, n_alb, factor),
            "mg/dL",
            f"Ca + {factor:g} x ({n_alb:g} - albumin)",
            {"calcium": format_value(chem.ca, "mg/dL"), "albumin": format_value(chem.albumin, "g/dL")},
            s.calcium_albumin_factor.source,
            note="an estimate; ionized calcium is the better measure, especially in alkalemia",
        )


def compute_calculations(case: Case, settings: AcidBaseSettings | None = None) -> dict[str, Calculation]:
    """Every calculation whose inputs the case holds, keyed by stable name, in a fixed order."""
    s = settings or default_acid_base_settings()
    case = exact_only(case)  # a reported bound ("<10") is never used as if it were exact
    out: dict[str, Calculation] = {}
    _gas_calculations(case, s, out)
    _gap_calculations(case, s, out)
    _kidney_calculations(case, s, out)
    return out


def urine_gap_calculations(case: Case) -> dict[str, Calculation]:
    """The urine anion and osmolal gaps, for the metabolic-acidosis work-up only.

    Kept out of `compute_calculations` so that a note without a metabolic acidosis is unchanged;
    the pipeline adds them when the acidosis work-up runs.
    """
    urine = case.urine
    out: dict[str, Calculation] = {}
    if usable(urine.na) and usable(urine.k) and usable(urine.cl):
        assert urine.na is not None and urine.k is not None and urine.cl is not None
        out["urine_anion_gap"] = _calc(
            "urine_anion_gap",
            urine_anion_gap(urine.na, urine.k, urine.cl),
            "mmol/L",
            "urine Na + urine K - urine Cl",
            {
                "urine Na": format_value(urine.na, "mmol/L"),
                "urine K": format_value(urine.k, "mmol/L"),
                "urine Cl": format_value(urine.cl, "mmol/L"),
            },
            "Batlle et al., NEJM 1988;318:594",
            note="negative when ammonium is excreted; unreliable with ketonuria, other unmeasured anions "
            "or urine sodium below about 20 mmol/L",
        )
    if usable(urine.osm) and usable(urine.na) and usable(urine.k) and usable(urine.urea_nitrogen):
        assert urine.osm is not None and urine.na is not None and urine.k is not None
        assert urine.urea_nitrogen is not None
        out["urine_osmolal_gap"] = _calc(
            "urine_osmolal_gap",
            urine_osmolal_gap(urine.osm, urine.na, urine.k, urine.urea_nitrogen),
            "mOsm/kg",
            "measured urine osmolality - (2 x (urine Na + urine K) + urine urea nitrogen/2.8)",
            {
                "urine osmolality": format_value(urine.osm, "mOsm/kg"),
                "urine Na": format_value(urine.na, "mmol/L"),
                "urine K": format_value(urine.k, "mmol/L"),
                "urine urea nitrogen": format_value(urine.urea_nitrogen, "mg/dL"),
            },
            "review literature, e.g. Kraut & Madias, Nat Rev Nephrol 2010;6:274 (from memory)",
            note="about twice the urine ammonium; urine glucose is not counted, so glycosuria raises it",
        )
    return out


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
    s = settings or default_acid_base_settings()
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
