"""Kidney and urine calculations applied to a case: eGFR, osmolal and urine gaps, urine ratios,
fractional excretions, chloride deficit and corrected calcium. Each formula is in `formulas.py`
with its published source."""

from __future__ import annotations

from notegen._format import format_value
from notegen.acidbase.calculation import Calculation, make_calculation, usable
from notegen.acidbase.formulas import (
    CREATININE_MOLAR_MASS,
    EGFR_MIN_AGE,
    chloride_deficit,
    corrected_calcium,
    egfr_ckd_epi_2021,
    fractional_excretion,
    osmolal_gap,
    urine_anion_gap,
    urine_osmolal_gap,
    urine_potassium_creatinine_ratio,
)
from notegen.case.model import Case
from notegen.knowledge.settings import AcidBaseSettings

__all__ = ["kidney_calculations", "urine_gap_calculations"]


def kidney_calculations(case: Case, s: AcidBaseSettings, out: dict[str, Calculation]) -> None:
    """eGFR, osmolal gap, urine potassium-to-creatinine ratio, fractional excretions, chloride deficit
    and corrected calcium, each when the case holds its inputs."""
    _egfr(case, out)
    _osmolal_gap(case, s, out)
    _urine_ratios(case, out)
    _chloride_and_calcium(case, s, out)


def _egfr(case: Case, out: dict[str, Calculation]) -> None:
    chem, patient = case.chem, case.patient
    if usable(chem.creatinine) and patient.age is not None and patient.sex is not None:
        assert chem.creatinine is not None
        if patient.age >= EGFR_MIN_AGE:
            out["egfr"] = make_calculation(
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


def _osmolal_gap(case: Case, s: AcidBaseSettings, out: dict[str, Calculation]) -> None:
    chem = case.chem
    gap: float | None = None
    if usable(chem.osm) and usable(chem.na) and usable(chem.glucose) and usable(chem.bun):
        assert chem.osm is not None and chem.na is not None and chem.glucose is not None
        assert chem.bun is not None
        gap = osmolal_gap(chem.osm, chem.na, chem.glucose, chem.bun)
    if gap is not None and gap >= s.osmolal_gap_floor.value:  # below: named by `impossible_osmolal_gap`
        assert chem.osm is not None and chem.na is not None and chem.glucose is not None
        assert chem.bun is not None
        out["osmolal_gap"] = make_calculation(
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


def _urine_ratios(case: Case, out: dict[str, Calculation]) -> None:
    chem, urine = case.chem, case.urine
    if usable(urine.k) and usable(urine.creatinine):
        assert urine.k is not None and urine.creatinine is not None
        out["urine_k_creatinine"] = make_calculation(
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
                out[name] = make_calculation(
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


def _chloride_and_calcium(case: Case, s: AcidBaseSettings, out: dict[str, Calculation]) -> None:
    chem, patient = case.chem, case.patient
    target, dist = s.chloride_target.value, s.chloride_distribution.value
    if usable(patient.weight_kg) and usable(chem.cl):
        assert patient.weight_kg is not None and chem.cl is not None
        if chem.cl < target:
            out["chloride_deficit"] = make_calculation(
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
        out["corrected_calcium"] = make_calculation(
            "corrected_calcium",
            corrected_calcium(chem.ca, chem.albumin, n_alb, factor),
            "mg/dL",
            f"Ca + {factor:g} x ({n_alb:g} - albumin)",
            {"calcium": format_value(chem.ca, "mg/dL"), "albumin": format_value(chem.albumin, "g/dL")},
            s.calcium_albumin_factor.source,
            note="an estimate; ionized calcium is the better measure, especially in alkalemia",
        )


def urine_gap_calculations(case: Case) -> dict[str, Calculation]:
    """The urine anion and osmolal gaps, for the metabolic-acidosis work-up only.

    Kept out of `compute_calculations` so that a note without a metabolic acidosis is unchanged;
    the pipeline adds them when the acidosis work-up runs.
    """
    urine = case.urine
    out: dict[str, Calculation] = {}
    if usable(urine.na) and usable(urine.k) and usable(urine.cl):
        assert urine.na is not None and urine.k is not None and urine.cl is not None
        out["urine_anion_gap"] = make_calculation(
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
        out["urine_osmolal_gap"] = make_calculation(
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
