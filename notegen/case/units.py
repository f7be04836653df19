"""Units: spellings, conversion factors and the unit each field is held in.

Factors convert a reported unit to the field's canonical (conventional) unit. They
come from molar masses (creatinine 113.12 g/mol, urea nitrogen 2 x 14.007, glucose
180.16, Mg 24.305, Ca 40.078, P 30.974, lactate 90.08,
beta-hydroxybutyrate 104.10, salicylic acid 138.12, acetoacetic acid 102.09) and 1 mmHg = 133.322 Pa, and
every one is checked in tests/test_units.py against pint, an independent units library.
"""

from __future__ import annotations

import re
import unicodedata
from dataclasses import dataclass

# Canonical spelling of each unit we accept, keyed by a folded form of its spellings.
_SPELLINGS: dict[str, str] = {
    "mmol/l": "mmol/L",
    "meq/l": "mEq/L",
    "mmhg": "mmHg",
    "mm[hg]": "mmHg",
    "mm hg": "mmHg",
    "torr": "mmHg",
    "kpa": "kPa",
    "mg/dl": "mg/dL",
    "umol/l": "µmol/L",
    "µmol/l": "µmol/L",
    "g/dl": "g/dL",
    "g/l": "g/L",
    "mosm/kg": "mOsm/kg",
    "mosm/kg{h2o}": "mOsm/kg",
    "mosm/kg h2o": "mOsm/kg",
    "mmol/kg": "mOsm/kg",
    "mmol/kg{h2o}": "mOsm/kg",
    "[ph]": "",
    "ph": "",
    "": "",
}


def normalise_unit(text: str) -> str | None:
    """Return the canonical spelling of a unit, or None when it is not one we know.

    Accepts UCUM spellings (`mm[Hg]`, `umol/L`, `meq/L`) and the usual printed ones
    (`mmHg`, `µmol/L`, `mEq/L`); the Greek mu and the micro sign are the same here.
    """
    folded = unicodedata.normalize("NFKC", text).replace("μ", "µ").strip().lower()
    folded = re.sub(r"\s+", " ", folded)
    return _SPELLINGS.get(folded)


@dataclass(frozen=True)
class FieldUnits:
    """The units of one case field: canonical, the two system defaults, and factors to canonical."""

    canonical: str
    conventional: str
    si: str
    to_canonical: dict[str, float]  # reported unit -> factor that gives the canonical unit


# Molar masses (g/mol) behind the factors below.
CREATININE_G_PER_MOL = 113.12
UREA_NITROGEN_G_PER_MOL = 2 * 14.007
UREA_G_PER_MOL = 60.056
GLUCOSE_G_PER_MOL = 180.16
MAGNESIUM_G_PER_MOL = 24.305
CALCIUM_G_PER_MOL = 40.078
PHOSPHORUS_G_PER_MOL = 30.974
LACTATE_G_PER_MOL = 90.08
BETA_HYDROXYBUTYRATE_G_PER_MOL = 104.10  # C4H8O3
SALICYLATE_G_PER_MOL = 138.12  # salicylic acid, C7H6O3, as levels are reported
ACETOACETATE_G_PER_MOL = 102.09  # acetoacetic acid, C4H6O3
PASCAL_PER_MMHG = 133.322

_MMOL_TO_MG_DL = 0.1  # mmol/L x (g/mol) x 0.1 = mg/dL
_IDENTITY_ELECTROLYTE = {"mmol/L": 1.0, "mEq/L": 1.0}


def _mass(g_per_mol: float) -> dict[str, float]:
    """Factors to mg/dL for an analyte held in mg/dL."""
    return {
        "mg/dL": 1.0,
        "mmol/L": g_per_mol * _MMOL_TO_MG_DL,
        "µmol/L": g_per_mol * _MMOL_TO_MG_DL / 1000.0,
    }


_PRESSURE = FieldUnits("mmHg", "mmHg", "kPa", {"mmHg": 1.0, "kPa": 1000.0 / PASCAL_PER_MMHG})
_ELECTROLYTE = FieldUnits("mmol/L", "mmol/L", "mmol/L", dict(_IDENTITY_ELECTROLYTE))
_UNITLESS = FieldUnits("", "", "", {"": 1.0})
_OSMOLALITY = FieldUnits("mOsm/kg", "mOsm/kg", "mOsm/kg", {"mOsm/kg": 1.0})
_CREATININE = FieldUnits("mg/dL", "mg/dL", "µmol/L", _mass(CREATININE_G_PER_MOL))
_CALCIUM = FieldUnits(
    "mg/dL", "mg/dL", "mmol/L", {**_mass(CALCIUM_G_PER_MOL), "mEq/L": CALCIUM_G_PER_MOL * _MMOL_TO_MG_DL / 2}
)

FIELD_UNITS: dict[str, FieldUnits] = {
    "gas.ph": _UNITLESS,
    "gas.pco2": _PRESSURE,
    "gas.po2": _PRESSURE,
    "gas.hco3": _ELECTROLYTE,
    "chem.na": _ELECTROLYTE,
    "chem.k": _ELECTROLYTE,
    "chem.cl": _ELECTROLYTE,
    "chem.tco2": _ELECTROLYTE,
    # BUN is urea nitrogen: urea mmol/L x 28.014 g/mol x 0.1 = BUN mg/dL (2.801, not 0.714).
    "chem.bun": FieldUnits(
        "mg/dL", "mg/dL", "mmol/L", {"mg/dL": 1.0, "mmol/L": UREA_NITROGEN_G_PER_MOL * _MMOL_TO_MG_DL}
    ),
    "chem.creatinine": _CREATININE,
    "chem.glucose": FieldUnits("mg/dL", "mg/dL", "mmol/L", _mass(GLUCOSE_G_PER_MOL)),
    "chem.albumin": FieldUnits("g/dL", "g/dL", "g/L", {"g/dL": 1.0, "g/L": 0.1}),
    "chem.ca": _CALCIUM,
    "chem.ionized_ca": FieldUnits(
        "mmol/L", "mmol/L", "mmol/L", {"mmol/L": 1.0, "mg/dL": 1.0 / (CALCIUM_G_PER_MOL * _MMOL_TO_MG_DL)}
    ),
    "chem.mg": FieldUnits(
        "mg/dL",
        "mg/dL",
        "mmol/L",
        {**_mass(MAGNESIUM_G_PER_MOL), "mEq/L": MAGNESIUM_G_PER_MOL * _MMOL_TO_MG_DL / 2},
    ),
    "chem.phos": FieldUnits("mg/dL", "mg/dL", "mmol/L", _mass(PHOSPHORUS_G_PER_MOL)),
    "chem.lactate": FieldUnits(
        "mmol/L", "mmol/L", "mmol/L", {"mmol/L": 1.0, "mg/dL": 1.0 / (LACTATE_G_PER_MOL * _MMOL_TO_MG_DL)}
    ),
    "chem.osm": _OSMOLALITY,
    "chem.bhb": FieldUnits(
        "mmol/L",
        "mmol/L",
        "mmol/L",
        {"mmol/L": 1.0, "mg/dL": 1.0 / (BETA_HYDROXYBUTYRATE_G_PER_MOL * _MMOL_TO_MG_DL)},
    ),
    "chem.salicylate": FieldUnits("mg/dL", "mg/dL", "mmol/L", _mass(SALICYLATE_G_PER_MOL)),
    "urine.na": _ELECTROLYTE,
    "urine.k": _ELECTROLYTE,
    "urine.cl": _ELECTROLYTE,
    # Urine creatinine is reported in mmol/L where SI units are used, not µmol/L.
    "urine.creatinine": FieldUnits("mg/dL", "mg/dL", "mmol/L", _mass(CREATININE_G_PER_MOL)),
    "urine.ph": _UNITLESS,
    "urine.osm": _OSMOLALITY,
    "urine.calcium": _CALCIUM,
    "urine.ketones": FieldUnits("mg/dL", "mg/dL", "mmol/L", _mass(ACETOACETATE_G_PER_MOL)),
    "urine.urea_nitrogen": FieldUnits(
        "mg/dL", "mg/dL", "mmol/L", {"mg/dL": 1.0, "mmol/L": UREA_NITROGEN_G_PER_MOL * _MMOL_TO_MG_DL}
    ),
}

# A urea (not urea nitrogen) value in mg/dL, as some laboratories report it, to BUN mg/dL.
UREA_MG_DL_TO_BUN_MG_DL = UREA_NITROGEN_G_PER_MOL / UREA_G_PER_MOL


def default_unit(field: str, system: str) -> str:
    """The unit a bare number in `field` is read in, for the case's unit system."""
    units = FIELD_UNITS[field]
    return units.si if system == "si" else units.conventional


def accepted_units(field: str) -> list[str]:
    return list(FIELD_UNITS[field].to_canonical)


def to_canonical(field: str, value: float, unit: str) -> float:
    """Convert `value` in the canonical spelling `unit` to the field's canonical unit."""
    return value * FIELD_UNITS[field].to_canonical[unit]


def from_canonical(field: str, value: float, unit: str) -> float:
    return value / FIELD_UNITS[field].to_canonical[unit]
