"""The published formulas of acid-base and kidney arithmetic: pure functions on plain numbers.

Inputs are in the canonical conventional units of `notegen.case.model` (mmHg, mmol/L, mg/dL for
creatinine, BUN, glucose and calcium, g/dL for albumin). Each docstring names its source; the
tests check each against that source's numbers.
"""

from __future__ import annotations

from typing import NamedTuple

from notegen._henderson import henderson_hasselbalch_hco3 as henderson_hasselbalch_hco3
from notegen._henderson import henderson_hasselbalch_ph as henderson_hasselbalch_ph
from notegen.case.model import Sex
from notegen.errors import CaseValueError

CREATININE_MOLAR_MASS = 113.12  # g/mol; converts urine creatinine mg/dL to mmol/L
EGFR_MIN_AGE = 18.0  # CKD-EPI 2021 was derived and validated in adults only



class Estimate(NamedTuple):
    """An expected value with the range its rule allows."""

    value: float
    low: float
    high: float


# --- Blood gas arithmetic ---------------------------------------------------------------------------


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


# --- Urine gaps (metabolic acidosis) ----------------------------------------------------------------

UREA_NITROGEN_MG_DL_PER_MMOL = 2.8  # BUN mg/dL per mmol/L of urea, as in the serum osmolality formula
GLUCOSE_MG_DL_PER_MMOL = 18.0


def urine_anion_gap(urine_na: float, urine_k: float, urine_cl: float) -> float:
    """Urine Na + K - Cl, mmol/L (Batlle et al., NEJM 1988;318:594).

    A surrogate for urine ammonium: negative when the kidney excretes ammonium (with its chloride),
    as after gut bicarbonate loss; positive when it cannot, as in distal renal tubular acidosis.
    Unreliable with ketonuria or other unmeasured urine anions, and with urine sodium below about 20.
    """
    return urine_na + urine_k - urine_cl


def urine_calculated_osmolality(
    urine_na: float, urine_k: float, urine_urea_nitrogen: float, urine_glucose: float = 0.0
) -> float:
    """2 x (Na + K) + urea nitrogen/2.8 + glucose/18, in mOsm/kg (review literature; from memory)."""
    return (
        2 * (urine_na + urine_k)
        + urine_urea_nitrogen / UREA_NITROGEN_MG_DL_PER_MMOL
        + urine_glucose / GLUCOSE_MG_DL_PER_MMOL
    )


def urine_osmolal_gap(
    measured_osm: float, urine_na: float, urine_k: float, urine_urea_nitrogen: float, urine_glucose: float = 0.0
) -> float:
    """Measured minus calculated urine osmolality, mOsm/kg; about twice the urine ammonium.

    Below about 150 points to impaired ammonium excretion (review literature, e.g. Kraut & Madias,
    Nat Rev Nephrol 2010;6:274; the figure is from memory). Read where the urine anion gap cannot be.
    """
    return measured_osm - urine_calculated_osmolality(urine_na, urine_k, urine_urea_nitrogen, urine_glucose)
