"""The calculation core: pure functions, each naming its published source.

Inputs are in the canonical conventional units of `notegen.case.model` (mmHg, mmol/L, mg/dL for
creatinine, BUN, glucose and calcium, g/dL for albumin). `compute_calculations` applies them to
a case and returns every calculation whose inputs are present, each with its formula, inputs
and source, so a note can show its working.
"""

from __future__ import annotations

import functools
import math
from collections.abc import Mapping
from decimal import ROUND_HALF_UP, Decimal
from typing import NamedTuple

from pydantic import BaseModel, ConfigDict

from notegen.case.model import Case, Sex
from notegen.errors import CaseValueError
from notegen.knowledge.settings import AcidBaseSettings, Setting, default_acid_base_settings

CREATININE_MOLAR_MASS = 113.12  # g/mol; converts urine creatinine mg/dL to mmol/L
EGFR_MIN_AGE = 18.0  # CKD-EPI 2021 was derived and validated in adults only


class Estimate(NamedTuple):
    """An expected value with the range its rule allows."""

    value: float
    low: float
    high: float


# --- Blood gas arithmetic ---------------------------------------------------------------------------


def henderson_hasselbalch_ph(pco2: float, hco3: float, pk: float = 6.1, solubility: float = 0.0307) -> float:
    """pH = pK' + log10(HCO3 / (S x PaCO2)).

    Henderson-Hasselbalch; constants as in CLSI C46-A (2001), pK' 6.1 and S 0.0307 mmol/L per mmHg
    (DuBose, Harrison's, uses 0.03).
    """
    return pk + math.log10(hco3 / (solubility * pco2))


def henderson_hasselbalch_hco3(ph: float, pco2: float, pk: float = 6.1, solubility: float = 0.0307) -> float:
    """HCO3 = S x PaCO2 x 10^(pH - pK'): the analyser's calculated bicarbonate (CLSI C46-A, 2001)."""
    return solubility * pco2 * 10 ** (ph - pk)


def expected_total_co2(hco3: float, pco2: float, solubility: float = 0.0307) -> float:
    """Panel total CO2 expected from a gas: HCO3 + S x PaCO2 (dissolved CO2; CLSI C46-A, 2001)."""
    return hco3 + solubility * pco2


def expected_pco2_metabolic_acidosis(hco3: float, tolerance: float = 2.0) -> Estimate:
    """Winter's formula: PaCO2 = 1.5 x HCO3 + 8 +/- 2 (Albert, Dell & Winters, Ann Intern Med 1967)."""
    value = 1.5 * hco3 + 8.0
    return Estimate(value, value - tolerance, value + tolerance)


def expected_pco2_metabolic_alkalosis(
    hco3: float,
    slope: float = 0.7,
    tolerance: float = 2.0,
    normal_pco2: float = 40.0,
    normal_hco3: float = 24.0,
) -> Estimate:
    """PaCO2 = 40 + 0.7 x (HCO3 - 24) +/- 2 (Berend, de Vries & Gans, NEJM 2014, Table 1)."""
    value = normal_pco2 + slope * (hco3 - normal_hco3)
    return Estimate(value, value - tolerance, value + tolerance)


def _expected_hco3_respiratory(
    pco2: float, slope_per_10: float, tolerance: float, normal_pco2: float, normal_hco3: float
) -> Estimate:
    # One linear form serves all four rules: HCO3 moves `slope_per_10` per 10 mmHg of PaCO2 change,
    # upward when PaCO2 rises and downward when it falls.
    value = normal_hco3 + slope_per_10 * (pco2 - normal_pco2) / 10.0
    return Estimate(value, value - tolerance, value + tolerance)


def expected_hco3_acute_respiratory_acidosis(
    pco2: float,
    slope_per_10: float = 1.0,
    tolerance: float = 2.0,
    normal_pco2: float = 40.0,
    normal_hco3: float = 24.0,
) -> Estimate:
    """HCO3 rises 1 mmol/L per 10 mmHg PaCO2 (Narins & Emmett, Medicine 1980; Berend et al., NEJM 2014)."""
    return _expected_hco3_respiratory(pco2, slope_per_10, tolerance, normal_pco2, normal_hco3)


def expected_hco3_chronic_respiratory_acidosis(
    pco2: float,
    slope_per_10: float = 3.5,
    tolerance: float = 2.0,
    normal_pco2: float = 40.0,
    normal_hco3: float = 24.0,
) -> Estimate:
    """HCO3 rises 3.5 mmol/L per 10 mmHg PaCO2 (Narins & Emmett, Medicine 1980; Berend et al., NEJM 2014)."""
    return _expected_hco3_respiratory(pco2, slope_per_10, tolerance, normal_pco2, normal_hco3)


def expected_hco3_acute_respiratory_alkalosis(
    pco2: float,
    slope_per_10: float = 2.0,
    tolerance: float = 2.0,
    normal_pco2: float = 40.0,
    normal_hco3: float = 24.0,
) -> Estimate:
    """HCO3 falls 2 mmol/L per 10 mmHg PaCO2 (Narins & Emmett, Medicine 1980)."""
    return _expected_hco3_respiratory(pco2, slope_per_10, tolerance, normal_pco2, normal_hco3)


def expected_hco3_chronic_respiratory_alkalosis(
    pco2: float,
    slope_per_10: float = 4.0,
    tolerance: float = 2.0,
    normal_pco2: float = 40.0,
    normal_hco3: float = 24.0,
) -> Estimate:
    """HCO3 falls 4 mmol/L per 10 mmHg PaCO2 (Narins & Emmett 1980; Krapf et al., NEJM 1991: 0.41/mmHg)."""
    return _expected_hco3_respiratory(pco2, slope_per_10, tolerance, normal_pco2, normal_hco3)


# --- Gaps ------------------------------------------------------------------------------------------


def anion_gap(na: float, cl: float, hco3: float) -> float:
    """Na - (Cl + HCO3) (Winter et al., Arch Intern Med 1990; Kraut & Madias, CJASN 2007)."""
    return na - (cl + hco3)


def corrected_anion_gap(
    anion_gap: float, albumin: float, normal_albumin: float = 4.0, factor: float = 2.5
) -> float:
    """AG + 2.5 x (normal albumin - albumin), albumin in g/dL (Figge et al., Crit Care Med 1998)."""
    return anion_gap + factor * (normal_albumin - albumin)


def delta_gap(anion_gap: float, normal_gap: float = 12.0) -> float:
    """AG - normal AG: the gap's rise over normal (Rastegar, JASN 2007)."""
    return anion_gap - normal_gap


def delta_ratio(anion_gap: float, hco3: float, normal_gap: float = 12.0, normal_hco3: float = 24.0) -> float:
    """(AG - 12) / (24 - HCO3) (Rastegar, JASN 2007). Undefined unless the bicarbonate has fallen."""
    fall = normal_hco3 - hco3
    if fall <= 0:
        raise ValueError(f"delta ratio is undefined: bicarbonate {hco3:g} is not below {normal_hco3:g}")
    return (anion_gap - normal_gap) / fall


def calculated_osmolality(na: float, glucose: float, bun: float) -> float:
    """2 x Na + glucose/18 + BUN/2.8, in mg/dL (Hoffman et al., J Toxicol Clin Toxicol 1993)."""
    return 2 * na + glucose / 18.0 + bun / 2.8


def osmolal_gap(measured_osm: float, na: float, glucose: float, bun: float) -> float:
    """Measured - calculated osmolality; reference about -14 to +10 (Hoffman et al., 1993)."""
    return measured_osm - calculated_osmolality(na, glucose, bun)


# --- Kidney and urine ------------------------------------------------------------------------------


def egfr_ckd_epi_2021(creatinine: float, age: float, sex: Sex) -> float:
    """eGFR mL/min/1.73 m2, CKD-EPI 2021 creatinine equation without race (Inker et al., NEJM 2021).

    Creatinine in mg/dL. Assumes a steady state of creatinine; refused under age 18.
    """
    if age < EGFR_MIN_AGE:
        raise CaseValueError(
            [("patient.age", f"{age:g} years: CKD-EPI 2021 applies to adults (18 and over) only")]
        )
    if creatinine <= 0:
        raise CaseValueError([("chem.creatinine", f"{creatinine:g} mg/dL cannot be used for eGFR")])
    kappa, alpha, factor = (0.7, -0.241, 1.012) if sex == "female" else (0.9, -0.302, 1.0)
    ratio = creatinine / kappa
    egfr: float = 142.0 * min(ratio, 1.0) ** alpha * max(ratio, 1.0) ** -1.200 * 0.9938**age * factor
    return egfr


def urine_potassium_creatinine_ratio(urine_k: float, urine_creatinine: float) -> float:
    """Urine K (mmol/L) / urine creatinine (mmol/L); creatinine arrives in mg/dL (x 10 / 113.12).

    At or above about 1.5 mmol/mmol points to renal potassium loss (Assadi, Iran J Kidney Dis 2008;
    the unit of that cut-off is from memory).
    """
    creatinine_mmol = urine_creatinine * 10.0 / CREATININE_MOLAR_MASS
    return urine_k / creatinine_mmol


def fractional_excretion(
    urine_value: float, plasma_value: float, urine_creatinine: float, plasma_creatinine: float
) -> float:
    """Fractional excretion in percent: (U_x x P_Cr) / (P_x x U_Cr) x 100 (clearance ratio; common practice).

    Both creatinines in the same unit, so the unit cancels.
    """
    return 100.0 * (urine_value * plasma_creatinine) / (plasma_value * urine_creatinine)


def chloride_deficit(
    weight_kg: float, chloride: float, target: float = 100.0, distribution: float = 0.2
) -> float:
    """0.2 x weight (kg) x (target Cl - measured Cl), mmol (Miller's Anesthesia, 6th ed.)."""
    return distribution * weight_kg * (target - chloride)


def corrected_calcium(
    calcium: float, albumin: float, normal_albumin: float = 4.0, factor: float = 0.8
) -> float:
    """Ca + 0.8 x (4.0 - albumin), mg/dL and g/dL (Payne et al., BMJ 1973; from memory)."""
    return calcium + factor * (normal_albumin - albumin)


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


def round_half_up(value: float, digits: int) -> float:
    """`value` rounded half away from zero on its shortest decimal form: 8.25 -> 8.3, as the note prints it.

    Python's `round` works on the binary value (8.25 -> 8.2, 7.485 -> 7.48), so a figure rounded
    with it could read differently in the reading's sentences than in the note's tables.
    """
    text = repr(value)
    if type(value) is float and "e" not in text:
        point = text.find(".")
        if point >= 0 and len(text) - point - 1 <= digits:
            # Already at most `digits` decimals (most lab values): quantizing would be exact and
            # give back this same float, so the Decimal round trip is skipped.
            return value
    exact = Decimal(text).quantize(_quantum(digits), rounding=ROUND_HALF_UP)
    return float(exact)


@functools.cache
def _quantum(digits: int) -> Decimal:
    return Decimal(1).scaleb(-digits)


@functools.lru_cache(maxsize=4096, typed=True)  # a case formats the same few values again and again
def format_value(value: float, unit: str = "") -> str:
    """A number as a clinician reads it: at most 3 decimals (half away from zero), no trailing zeros, then the unit."""
    text = repr(value)
    point = text.find(".")
    if type(value) is not float or point < 0 or "e" in text or len(text) - point - 1 > 3 or not -1e12 < value < 1e12:
        text = f"{round_half_up(value, 3):.3f}"
    # else the shortest form has at most 3 decimals (most lab values) and the float's spacing is far
    # below 0.0005, so it is exactly what formatting to 3 decimals gives, less the trailing zeros
    text = text.rstrip("0").rstrip(".")
    if text == "-0":
        text = "0"
    return f"{text} {unit}".strip()


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
    """The bicarbonate used for the anion gap: the gas HCO3 if given, else the panel total CO2."""
    if usable(case.gas.hco3):
        assert case.gas.hco3 is not None
        return case.gas.hco3, "gas bicarbonate"
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
    if usable(gas.pco2) and usable(gas.hco3):
        assert gas.pco2 is not None and gas.hco3 is not None
        inputs = {"PaCO2": format_value(gas.pco2, "mmHg"), "HCO3 (gas)": format_value(gas.hco3, "mmol/L")}
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
        inputs = {"PaCO2": format_value(pco2, "mmHg")}
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
            note=f"{hco3_note}; reference {format_value(s.anion_gap_low.value)}-"
            f"{format_value(s.anion_gap_high.value, 'mmol/L')} (analyser-dependent)",
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
    inputs_h = {f"HCO3 ({hco3_label})": format_value(hco3, "mmol/L")}
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
    if usable(chem.osm) and usable(chem.na) and usable(chem.glucose) and usable(chem.bun):
        assert chem.osm is not None and chem.na is not None and chem.glucose is not None
        assert chem.bun is not None
        out["osmolal_gap"] = _calc(
            "osmolal_gap",
            osmolal_gap(chem.osm, chem.na, chem.glucose, chem.bun),
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
                note=f"target chloride {format_value(target, 'mmol/L')}",
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
    out: dict[str, Calculation] = {}
    _gas_calculations(case, s, out)
    _gap_calculations(case, s, out)
    _kidney_calculations(case, s, out)
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
