"""Every conversion factor checked against pint, an independent units library.

pint knows mass, amount and pressure but not molar masses, so each check states the
molar mass (g/mol) from standard atomic weights (IUPAC) and lets pint do the rest.
Expected clinical factors (CLINICAL.md "Unit factors"): PaCO2 kPa x 7.50062; creatinine
umol/L / 88.4; urea mmol/L x 2.801 = BUN; glucose x 18.016; albumin g/L / 10; Mg x 2.431;
Ca x 4.008; phosphate x 3.097.
"""

from __future__ import annotations

import pint
import pytest

from notegen.case import units as u

ureg = pint.UnitRegistry()


def _mmol_per_l_to_mg_per_dl(g_per_mol: float) -> float:
    quantity = ureg.Quantity(1.0, "mmol/L") * ureg.Quantity(g_per_mol, "g/mol")
    return float(quantity.to("mg/dL").magnitude)


MOLAR = [
    # field, unit, molar mass g/mol, published factor to conventional (CLINICAL.md)
    ("chem.creatinine", "mmol/L", 113.12, 1000 / 88.4),
    ("chem.creatinine", "µmol/L", 113.12, 1 / 88.4),
    ("chem.bun", "mmol/L", 2 * 14.007, 2.801),
    ("chem.glucose", "mmol/L", 180.16, 18.016),
    ("chem.mg", "mmol/L", 24.305, 2.431),
    ("chem.ca", "mmol/L", 40.078, 4.008),
    ("chem.phos", "mmol/L", 30.974, 3.097),
    ("urine.creatinine", "µmol/L", 113.12, 1 / 88.4),
    ("urine.calcium", "mmol/L", 40.078, 4.008),
    # Salicylic acid C7H6O3 (IUPAC atomic weights); 1 mmol/L is about 13.8 mg/dL (from memory).
    ("chem.salicylate", "mmol/L", 138.12, 13.81),
    # Acetoacetic acid C4H6O3, the ketone a urine strip reads.
    ("urine.ketones", "mmol/L", 102.09, 10.21),
    ("urine.urea_nitrogen", "mmol/L", 2 * 14.007, 2.801),
]


@pytest.mark.parametrize(("field", "unit", "molar_mass", "published"), MOLAR, ids=lambda v: str(v))
def test_molar_factor_matches_pint_and_published_factor(
    field: str, unit: str, molar_mass: float, published: float
) -> None:
    expected = _mmol_per_l_to_mg_per_dl(molar_mass)
    if unit == "µmol/L":
        expected /= 1000
    assert u.FIELD_UNITS[field].to_canonical[unit] == pytest.approx(expected, rel=1e-9)
    assert u.FIELD_UNITS[field].to_canonical[unit] == pytest.approx(published, rel=2e-3)


def test_kpa_to_mmhg_matches_pint() -> None:
    expected = ureg.Quantity(1.0, "kPa").to("mmHg").magnitude
    assert u.to_canonical("gas.pco2", 1.0, "kPa") == pytest.approx(expected, rel=1e-5)
    assert u.to_canonical("gas.pco2", 1.0, "kPa") == pytest.approx(7.50062, rel=1e-5)


def test_albumin_g_per_l_to_g_per_dl_matches_pint() -> None:
    expected = ureg.Quantity(35.0, "g/L").to("g/dL").magnitude
    assert u.to_canonical("chem.albumin", 35.0, "g/L") == pytest.approx(expected)


def test_lactate_and_ionized_calcium_inverse_factors_match_pint() -> None:
    lactate = _mmol_per_l_to_mg_per_dl(90.08)
    assert u.to_canonical("chem.lactate", lactate, "mg/dL") == pytest.approx(1.0)
    calcium = _mmol_per_l_to_mg_per_dl(40.078)
    assert u.to_canonical("chem.ionized_ca", calcium, "mg/dL") == pytest.approx(1.0)


def test_beta_hydroxybutyrate_mass_to_moles_matches_pint() -> None:
    # C4H8O3, 104.10 g/mol: 10.41 mg/dL is 1 mmol/L.
    assert u.to_canonical("chem.bhb", _mmol_per_l_to_mg_per_dl(104.10), "mg/dL") == pytest.approx(1.0)


def test_divalent_mEq_is_half_a_millimole() -> None:
    # 1 mEq/L of a divalent ion is 0.5 mmol/L.
    assert u.to_canonical("chem.mg", 2.0, "mEq/L") == pytest.approx(u.to_canonical("chem.mg", 1.0, "mmol/L"))
    assert u.to_canonical("chem.ca", 2.0, "mEq/L") == pytest.approx(u.to_canonical("chem.ca", 1.0, "mmol/L"))


def test_urea_mass_to_urea_nitrogen() -> None:
    # urea CO(NH2)2 60.056 g/mol holds 2 N of 14.007 g/mol
    assert u.UREA_MG_DL_TO_BUN_MG_DL == pytest.approx(28.014 / 60.056)


@pytest.mark.parametrize(
    ("spelling", "canonical"),
    [
        ("mm[Hg]", "mmHg"),
        ("mmHg", "mmHg"),
        ("umol/L", "µmol/L"),
        ("µmol/L", "µmol/L"),
        ("μmol/L", "µmol/L"),
        ("meq/L", "mEq/L"),
        ("mEq/L", "mEq/L"),
        ("MG/DL", "mg/dL"),
        ("kPa", "kPa"),
        ("g/L", "g/L"),
        ("mosm/kg{H2O}", "mOsm/kg"),
        ("[pH]", ""),
    ],
)
def test_ucum_and_printed_spellings(spelling: str, canonical: str) -> None:
    assert u.normalise_unit(spelling) == canonical


def test_unknown_unit_is_none() -> None:
    assert u.normalise_unit("furlongs") is None


def test_every_field_has_its_canonical_unit_with_factor_one() -> None:
    from notegen.case.model import CANONICAL_UNITS

    assert set(CANONICAL_UNITS) == set(u.FIELD_UNITS)
    for field, canonical in CANONICAL_UNITS.items():
        assert u.FIELD_UNITS[field].canonical == canonical
        assert u.FIELD_UNITS[field].to_canonical[canonical] == 1.0
        assert u.FIELD_UNITS[field].si in u.FIELD_UNITS[field].to_canonical
