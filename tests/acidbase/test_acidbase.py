"""The acid-base reading on invented cases; each expected range is computed from the rule named beside it.

Gases are built so that they are internally consistent: the pH is computed here from PaCO2 and HCO3 by
Henderson-Hasselbalch with the analyser constants of CLSI C46-A (2001) and rounded as a report would be.
"""

from __future__ import annotations

import json
import math

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from notegen.acidbase.model import AcidBaseReading
from notegen.acidbase.reading import read_acid_base
from notegen.case.model import Case, Chem, Gas


def _ph(pco2: float, hco3: float) -> float:
    # Henderson-Hasselbalch, pK' 6.1, S 0.0307 (CLSI C46-A 2001), rounded to two decimals as analysers print.
    return round(6.1 + math.log10(hco3 / (0.0307 * pco2)), 2)


def _gas(pco2: float, hco3: float, sample: str = "arterial") -> Gas:
    return Gas(sample=sample, ph=_ph(pco2, hco3), pco2=pco2, hco3=hco3)  # type: ignore[arg-type]


def _codes(reading: AcidBaseReading) -> dict[str, str]:
    return {a.code: a.level for a in reading.alerts}


# --- Each primary disorder, with appropriate compensation -------------------------------------------------


def test_metabolic_alkalosis_appropriately_compensated() -> None:
    # Berend, de Vries & Gans, NEJM 2014: 40 + 0.7 x (36 - 24) = 48.4, range 46.4-50.4.
    r = read_acid_base(Case(gas=_gas(48, 36), chem=Chem(na=140, cl=92, albumin=4.0)))
    assert r.ph_status == "alkalemia"
    assert r.primary == "metabolic_alkalosis"
    assert r.disorders == ("metabolic_alkalosis",)
    assert r.compensation == "appropriate"
    assert r.expected is not None
    assert (r.expected.quantity, r.expected.low, r.expected.high) == ("pco2", 46.4, 50.4)
    assert r.expected.rule == "0.7 rule" and "Berend" in r.expected.source
    assert r.consistency == "consistent"
    assert r.anion_gap_status == "normal"  # 140 - 92 - 36 = 12
    assert r.chronicity is None


def test_metabolic_acidosis_winters_appropriate_high_gap() -> None:
    # Albert, Dell & Winters 1967: 1.5 x 12 + 8 = 26, range 24-28. AG 140 - 104 - 12 = 24;
    # Rastegar 2007: delta ratio (24 - 12) / (24 - 12) = 1.0, a high-gap acidosis alone.
    r = read_acid_base(Case(gas=_gas(26, 12), chem=Chem(na=140, cl=104, albumin=4.0)))
    assert r.ph_status == "acidemia"
    assert r.primary == "metabolic_acidosis"
    assert r.compensation == "appropriate"
    assert r.expected is not None and (r.expected.low, r.expected.high) == (24, 28)
    assert r.expected.rule == "Winter's formula"
    assert r.anion_gap == 24 and r.anion_gap_status == "high"
    assert r.delta_ratio == pytest.approx(1.0)
    assert r.disorders == ("metabolic_acidosis",)
    assert r.metabolic_acidosis_kind == "high_gap"


def test_acute_respiratory_acidosis() -> None:
    # Narins & Emmett 1980: acute 24 + 1 x 2 = 26 (24-28); chronic 24 + 3.5 x 2 = 31 (29-33).
    r = read_acid_base(Case(gas=_gas(60, 26), chem=Chem(na=140, cl=102)))
    assert r.primary == "respiratory_acidosis"
    assert r.chronicity == "acute"
    assert r.compensation == "appropriate"
    assert r.expected is not None and (r.expected.low, r.expected.high) == (24, 28)
    assert [(e.low, e.high) for e in r.expected_alternatives] == [(24, 28), (29, 33)]
    assert r.disorders == ("respiratory_acidosis",)


def test_chronic_respiratory_acidosis_not_called_metabolic_alkalosis() -> None:
    # Narins & Emmett 1980 / Berend 2014: chronic 24 + 3.5 x 2 = 31 (29-33); HCO3 31 and 33 both fit.
    for hco3 in (31, 33):
        r = read_acid_base(Case(gas=_gas(60, hco3), chem=Chem(na=140, cl=98)))
        assert r.primary == "respiratory_acidosis", hco3
        assert r.chronicity == "chronic", hco3
        assert r.compensation == "appropriate", hco3
        assert "metabolic_alkalosis" not in r.disorders + r.possible_disorders, hco3


def test_respiratory_acidosis_between_acute_and_chronic() -> None:
    # Acute range 24-28, chronic 29-33 at PaCO2 60 (Narins & Emmett 1980): 28.5 lies between.
    r = read_acid_base(Case(gas=_gas(60, 28.5)))
    assert r.primary == "respiratory_acidosis"
    assert r.chronicity == "between"
    assert r.compensation == "appropriate"
    assert r.disorders == ("respiratory_acidosis",)


def test_acute_respiratory_alkalosis_not_called_metabolic_acidosis() -> None:
    # Narins & Emmett 1980: acute 24 - 2 x 1.5 = 21 (19-23); chronic 24 - 4 x 1.5 = 18 (16-20).
    r = read_acid_base(Case(gas=_gas(25, 22), chem=Chem(na=140, cl=106)))
    assert r.primary == "respiratory_alkalosis"
    assert r.chronicity == "acute"
    assert r.compensation == "appropriate"
    assert r.expected is not None and (r.expected.low, r.expected.high) == (19, 23)
    assert "metabolic_acidosis" not in r.disorders + r.possible_disorders
    assert r.disorders == ("respiratory_alkalosis",)


def test_chronic_respiratory_alkalosis() -> None:
    # Narins & Emmett 1980; Krapf 1991: chronic 24 - 4 x 1.5 = 18 (16-20); HCO3 17 fits only chronic.
    r = read_acid_base(Case(gas=_gas(25, 17), chem=Chem(na=140, cl=111)))
    assert r.primary == "respiratory_alkalosis"
    assert r.chronicity == "chronic"
    assert r.expected is not None and (r.expected.low, r.expected.high) == (16, 20)
    assert r.disorders == ("respiratory_alkalosis",)


def test_respiratory_alkalosis_chronicity_indeterminate_where_ranges_overlap() -> None:
    # PaCO2 30: acute 22 (20-24), chronic 20 (18-22) (Narins & Emmett 1980); 21 lies in both.
    r = read_acid_base(Case(gas=_gas(30, 21)))
    assert r.primary == "respiratory_alkalosis"
    assert r.chronicity == "indeterminate"
    assert r.compensation == "appropriate"


# --- Mixed disorders ----------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "pco2,hco3,expected",
    [
        # Berend 2014: HCO3 36 -> PaCO2 46.4-50.4; 56 is above: an added respiratory acidosis.
        (56, 36, ("metabolic_alkalosis", "respiratory_acidosis")),
        # Berend 2014: HCO3 34 -> 45-49; 38 is below: an added respiratory alkalosis.
        (38, 34, ("metabolic_alkalosis", "respiratory_alkalosis")),
        # Winter's (Albert 1967): HCO3 12 -> 24-28; 40 is above: an added respiratory acidosis.
        (40, 12, ("metabolic_acidosis", "respiratory_acidosis")),
        # Winter's: HCO3 12 -> 24-28; 20 is below: an added respiratory alkalosis.
        (20, 12, ("metabolic_acidosis", "respiratory_alkalosis")),
        # Narins & Emmett 1980: PaCO2 70 -> chronic 34.5 (32.5-36.5); 40 is above: added metabolic alkalosis.
        (70, 40, ("respiratory_acidosis", "metabolic_alkalosis")),
        # PaCO2 60 -> acute 26 (24-28); 20 is below both ranges: added metabolic acidosis.
        (60, 20, ("respiratory_acidosis", "metabolic_acidosis")),
        # PaCO2 30 -> acute 22 (20-24); 30 is above both: added metabolic alkalosis.
        (30, 30, ("respiratory_alkalosis", "metabolic_alkalosis")),
        # PaCO2 18 -> chronic 15.2 (13.2-17.2); 12 is below both: added metabolic acidosis.
        (18, 12, ("respiratory_alkalosis", "metabolic_acidosis")),
    ],
    ids=[
        "met-alk+resp-acid", "met-alk+resp-alk", "met-acid+resp-acid", "met-acid+resp-alk",
        "resp-acid+met-alk", "resp-acid+met-acid", "resp-alk+met-alk", "resp-alk+met-acid",
    ],
)  # fmt: skip
def test_double_disorders_from_compensation(pco2: float, hco3: float, expected: tuple[str, ...]) -> None:
    r = read_acid_base(Case(gas=_gas(pco2, hco3)))
    assert r.primary == expected[0]
    assert r.compensation == "inappropriate"
    assert r.disorders == expected
    assert r.consistency == "consistent"


def test_triple_disorder_acidemic() -> None:
    # AG 140 - 90 - 14 = 36; delta ratio (36 - 12) / (24 - 14) = 2.4 > 2 (Rastegar 2007): metabolic alkalosis.
    # Winter's (Albert 1967): 1.5 x 14 + 8 = 29 (27-31); PaCO2 40 is above: respiratory acidosis.
    r = read_acid_base(Case(gas=_gas(40, 14), chem=Chem(na=140, cl=90, albumin=4.0)))
    assert r.primary == "metabolic_acidosis"
    assert r.disorders == ("metabolic_acidosis", "respiratory_acidosis", "metabolic_alkalosis")
    assert r.delta_ratio == pytest.approx(2.4)
    assert "metabolic alkalosis" in (r.delta_ratio_interpretation or "")
    assert _codes(r)["severe_acidemia"] == "warning"  # pH 7.16 is below 7.20 (common practice)


def test_triple_disorder_alkalemic() -> None:
    # Respiratory alkalosis, PaCO2 28: acute 21.6 (19.6-23.6) (Narins & Emmett 1980) fits HCO3 20.5;
    # AG 140 - 90 - 20.5 = 29.5 high; delta ratio 17.5 / 3.5 = 5 > 2 (Rastegar 2007).
    r = read_acid_base(Case(gas=_gas(28, 20.5), chem=Chem(na=140, cl=90, albumin=4.0)))
    assert r.ph_status == "alkalemia"
    assert r.primary == "respiratory_alkalosis"
    assert r.disorders == ("respiratory_alkalosis", "metabolic_acidosis", "metabolic_alkalosis")
    assert r.delta_ratio == pytest.approx(5.0)


def test_high_gap_with_normal_ph_and_bicarbonate() -> None:
    # AG 140 - 92 - 24.5 = 23.5 > 16 (Kraut & Madias 2007 range): metabolic acidosis although pH and HCO3
    # look normal; bicarbonate not fallen: a concurrent metabolic alkalosis (Rastegar 2007).
    r = read_acid_base(Case(gas=_gas(40, 24.5), chem=Chem(na=140, cl=92, albumin=4.0)))
    assert r.ph_status == "normal"
    assert r.primary == "metabolic_acidosis"
    assert r.disorders == ("metabolic_acidosis", "metabolic_alkalosis")
    assert r.compensation == "not_applicable"
    assert r.delta_ratio is None


def test_high_gap_hidden_in_metabolic_alkalosis() -> None:
    # Berend 2014: HCO3 32 -> 45.6 (43.6-47.6), PaCO2 46 fits. AG 142 - 88 - 32 = 22 > 16: an added
    # metabolic acidosis although the bicarbonate is high.
    r = read_acid_base(Case(gas=_gas(46, 32), chem=Chem(na=142, cl=88, albumin=4.0)))
    assert r.primary == "metabolic_alkalosis"
    assert r.compensation == "appropriate"
    assert r.disorders == ("metabolic_alkalosis", "metabolic_acidosis")
    assert r.metabolic_acidosis_kind == "high_gap"


def test_low_delta_ratio_adds_normal_gap_acidosis() -> None:
    # AG 140 - 113 - 10 = 17; delta ratio 5 / 14 = 0.36 < 0.4 (Rastegar 2007). Winter's: 23 (21-25).
    r = read_acid_base(Case(gas=_gas(23, 10), chem=Chem(na=140, cl=113, albumin=4.0)))
    assert r.delta_ratio == pytest.approx(0.36, abs=0.005)
    assert r.metabolic_acidosis_kind == "high_and_normal_gap"
    assert r.disorders == ("metabolic_acidosis",)


def test_normal_gap_acidosis() -> None:
    # AG 140 - 116 - 12 = 12, within 8-16; Winter's range 24-28 misses PaCO2 40 (respiratory acidosis too).
    r = read_acid_base(Case(gas=_gas(40, 12), chem=Chem(na=140, cl=116, albumin=4.0)))
    assert r.anion_gap_status == "normal"
    assert r.metabolic_acidosis_kind == "normal_gap"
    assert _codes(r)["severe_acidemia"] == "critical"  # pH 7.09 <= 7.10 (common practice)


def test_albumin_correction_reveals_a_high_gap() -> None:
    # AG 140 - 106 - 20 = 14 (normal); Figge 1998: 14 + 2.5 x (4.0 - 2.0) = 19 (high).
    r = read_acid_base(Case(gas=_gas(36, 20), chem=Chem(na=140, cl=106, albumin=2.0)))
    assert r.anion_gap == 14 and r.anion_gap_corrected == 19
    assert r.anion_gap_status == "high"
    assert "metabolic_acidosis" in r.disorders
    no_albumin = read_acid_base(Case(gas=_gas(36, 20), chem=Chem(na=140, cl=106)))
    assert no_albumin.anion_gap_status == "normal"
    assert any("Albumin" in m for m in no_albumin.missing)


def test_high_delta_ratio_with_respiratory_acidosis_only_possible_alkalosis() -> None:
    # Rastegar 2007: a ratio above 2 also follows a compensated respiratory acidosis. PaCO2 60, HCO3 23:
    # acute 26 (24-28) is missed (added metabolic acidosis); AG 140 - 95 - 23 = 22, ratio 10 / 1 = 10.
    r = read_acid_base(Case(gas=_gas(60, 23), chem=Chem(na=140, cl=95, albumin=4.0)))
    assert r.primary == "respiratory_acidosis"
    assert "metabolic_acidosis" in r.disorders
    assert "metabolic_alkalosis" in r.possible_disorders
    assert "metabolic_alkalosis" not in r.disorders


# --- Normal, inconsistent and venous gases ----------------------------------------------------------------


def test_normal_gas() -> None:
    r = read_acid_base(Case(gas=_gas(40, 24.5), chem=Chem(na=140, cl=104, k=4.2, albumin=4.0)))
    assert r.ph_status == "normal"
    assert r.primary == "none"
    assert r.disorders == () and r.possible_disorders == ()
    assert r.compensation == "not_applicable"
    assert r.alerts == ()
    assert r.findings[0].startswith("The gas is internally consistent")


def test_inconsistent_gas_is_flagged_and_still_read() -> None:
    # Henderson-Hasselbalch (CLSI C46-A): PaCO2 48, HCO3 36 give 7.49; 7.45 reported is 0.04 off (> 0.03).
    r = read_acid_base(Case(gas=Gas(sample="arterial", ph=7.45, pco2=48, hco3=36)))
    assert r.consistency == "inconsistent"
    assert _codes(r)["inconsistent_gas"] == "warning"
    assert r.calculated_ph == pytest.approx(7.488, abs=0.001)
    assert r.primary == "metabolic_alkalosis"
    assert any("recheck" in a.message.lower() for a in r.alerts)


def test_impossible_gas_leaves_primary_undetermined() -> None:
    r = read_acid_base(Case(gas=Gas(sample="arterial", ph=7.25, pco2=40, hco3=24)))
    assert r.consistency == "inconsistent"
    assert r.primary == "undetermined"
    assert "check" in r.primary_reason


def test_gas_within_tolerance_is_consistent() -> None:
    # 7.47 reported against 7.488 computed: 0.018, inside the 0.03 tolerance (Story 2001 plus rounding).
    r = read_acid_base(Case(gas=Gas(sample="arterial", ph=7.47, pco2=48, hco3=36)))
    assert r.consistency == "consistent"
    assert "inconsistent_gas" not in _codes(r)


def test_gas_panel_mismatch() -> None:
    # Expected total CO2 24 + 0.0307 x 40 = 25.2 (CLSI C46-A); panel 30 is 4.8 away, beyond 3 (Story 2001).
    r = read_acid_base(Case(gas=_gas(40, 24), chem=Chem(tco2=30)))
    assert _codes(r)["gas_panel_mismatch"] == "warning"
    assert "gas_panel_mismatch" not in _codes(read_acid_base(Case(gas=_gas(40, 24), chem=Chem(tco2=26))))


def test_venous_pco2_is_never_set_against_the_arterial_prediction() -> None:
    # Berend 2014: HCO3 37 -> 49.1 (47.1-51.1) for arterial blood. A venous PCO2 runs a few mmHg above the
    # arterial value with limits of agreement -20 to +26 mmHg (Bloom et al., Eur J Emerg Med 2014; Kelly,
    # Emerg Med J 2016), so a PvCO2 of 52 neither establishes nor suggests an added respiratory acidosis:
    # compensation is "not assessable on a venous sample".
    r = read_acid_base(Case(gas=_gas(52, 37, sample="venous"), chem=Chem(na=138, cl=90)))
    assert r.sample == "venous"
    assert r.primary == "metabolic_alkalosis"
    assert r.compensation == "uncertain"
    assert r.disorders == ("metabolic_alkalosis",)
    assert r.possible_disorders == ()
    text = " ".join(r.findings)
    assert "Bloom 2014" in text and "no adjustment" in text
    assert "not assessable on a venous sample" in text and "PvCO2 52 mmHg" in text
    # The respiratory rules take an arterial PaCO2 too: neither compensation nor chronicity is read.
    resp = read_acid_base(Case(gas=_gas(70, 27, sample="venous")))
    assert resp.primary == "respiratory_acidosis"
    assert (resp.compensation, resp.chronicity, resp.possible_disorders) == ("uncertain", "indeterminate", ())


def test_a_normal_venous_gas_is_not_read_as_a_respiratory_acidosis() -> None:
    # Bloom et al., Eur J Emerg Med 2014: venous PCO2 runs a mean 4.4 mmHg above the arterial value, so the
    # venous reference range is the arterial 35-45 mmHg moved up: 39.4-49.4 mmHg. A venous pH 7.36 with a
    # PvCO2 of 47 and a bicarbonate of 25.8 is an ordinary venous gas; it was read as a primary respiratory
    # acidosis because the PvCO2 was set against the arterial upper limit of 45.
    r = read_acid_base(Case(gas=Gas(sample="venous", ph=7.36, pco2=47, hco3=25.8)))
    assert r.primary == "none"
    assert r.disorders == ()
    assert any("moved up" in f and "4.4 mmHg" in f and "Bloom 2014" in f for f in r.findings)
    # The same values from an arterial sample still read as a respiratory acidosis.
    arterial = read_acid_base(Case(gas=Gas(sample="arterial", ph=7.36, pco2=47, hco3=25.8)))
    assert arterial.primary == "respiratory_acidosis"
    # A venous PCO2 well above the moved range still reads as one, and a low one as a respiratory alkalosis
    # (38 mmHg venous is about 33.6 arterial, below 35).
    assert read_acid_base(Case(gas=Gas(sample="venous", ph=7.30, pco2=58, hco3=27.5))).primary == (
        "respiratory_acidosis"
    )
    low = read_acid_base(Case(gas=Gas(sample="venous", ph=7.44, pco2=38, hco3=25)))
    assert low.primary == "respiratory_alkalosis"
    assert "PvCO2" in low.primary_reason and "PaCO2" not in low.primary_reason


def test_venous_gas_low_pco2_screen() -> None:
    # Kelly 2016: a venous PCO2 below 45 mmHg makes arterial hypercapnia very unlikely.
    r = read_acid_base(Case(gas=_gas(30, 15, sample="venous")))
    assert r.compensation == "uncertain"
    assert any("very unlikely" in f for f in r.findings)
    assert r.possible_disorders == ()


def test_unstated_sample_read_as_arterial_with_notice() -> None:
    r = read_acid_base(Case(gas=Gas(ph=_ph(48, 36), pco2=48, hco3=36)))
    assert r.sample == "unstated"
    assert _codes(r)["sample_unstated"] == "info"
    assert r.compensation == "appropriate"


# --- Partial data ----------------------------------------------------------------------------------------


def test_panel_only_cannot_name_a_primary() -> None:
    r = read_acid_base(Case(chem=Chem(na=140, cl=95, tco2=34)))
    assert r.sample is None
    assert r.primary == "undetermined"
    assert "metabolic alkalosis" in r.primary_reason
    assert any(m.startswith("Primary disorder") for m in r.missing)
    assert r.anion_gap == 11 and r.anion_gap_bicarbonate == "panel total CO2"


def test_bicarbonate_calculated_when_the_gas_omits_it() -> None:
    r = read_acid_base(Case(gas=Gas(sample="arterial", ph=7.49, pco2=48)))
    assert r.hco3_source == "calculated"
    assert r.hco3 == pytest.approx(0.0307 * 48 * 10 ** (7.49 - 6.1), abs=0.01)
    assert r.consistency == "not_checked"
    assert r.primary == "metabolic_alkalosis"


def test_empty_case() -> None:
    r = read_acid_base(Case())
    assert r.primary == "undetermined"
    assert r.alerts == ()
    assert len(r.missing) >= 3


# --- Severity alerts -------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "pco2,hco3,level",
    [(38, 34, "warning"), (30, 30, "critical")],
    ids=["ph-7.56-warning", "ph-7.61-critical-Anderson-Henrich-1987"],
)
def test_severe_alkalemia(pco2: float, hco3: float, level: str) -> None:
    assert _codes(read_acid_base(Case(gas=_gas(pco2, hco3))))["severe_alkalemia"] == level


@pytest.mark.parametrize(
    "chem,code,level",
    [
        (Chem(k=2.4), "severe_hypokalemia", "critical"),
        (Chem(k=2.8), "hypokalemia", "warning"),
        (Chem(k=6.2), "hyperkalemia", "warning"),
        (Chem(k=6.8), "severe_hyperkalemia", "critical"),
        (Chem(mg=1.1), "hypomagnesemia", "warning"),
        (Chem(mg=1.5), "hypomagnesemia", "info"),
        (Chem(ionized_ca=1.0), "low_ionized_calcium", "warning"),
        (Chem(ionized_ca=0.7), "low_ionized_calcium", "critical"),
    ],
    ids=["k-2.4", "k-2.8", "k-6.2", "k-6.8", "mg-1.1", "mg-1.5", "ica-1.0", "ica-0.7"],
)  # all common practice thresholds
def test_electrolyte_alerts(chem: Chem, code: str, level: str) -> None:
    assert _codes(read_acid_base(Case(gas=_gas(48, 36), chem=chem)))[code] == level


def test_low_ionized_calcium_mentions_alkalemia() -> None:
    r = read_acid_base(Case(gas=_gas(48, 36), chem=Chem(ionized_ca=1.0)))
    assert any(a.code == "low_ionized_calcium" and "Alkalemia" in a.message for a in r.alerts)


def test_very_high_bicarbonate_with_hypoventilation() -> None:
    # Berend 2014: HCO3 50 -> 58.2 (56.2-60.2); PaCO2 58 fits but exceeds the usual ceiling of about
    # 55 mmHg (Galla 2000).
    r = read_acid_base(Case(gas=_gas(58, 50)))
    assert r.primary == "metabolic_alkalosis"
    assert r.compensation == "uncertain"
    assert r.possible_disorders == ("respiratory_acidosis",)
    assert _codes(r)["high_bicarbonate_hypoventilation"] == "warning"
    assert _codes(r)["severe_alkalemia"] == "warning"


def test_no_dose_in_any_message() -> None:
    r = read_acid_base(Case(gas=_gas(30, 30), chem=Chem(k=2.2, mg=1.0, ionized_ca=0.7)))
    for alert in r.alerts:
        assert "mEq" not in alert.message and " mg " not in alert.message


# --- Output shape and properties -------------------------------------------------------------------------


def test_reading_serialises_to_json() -> None:
    r = read_acid_base(Case(gas=_gas(40, 14), chem=Chem(na=140, cl=90, k=2.9)))
    data = json.loads(json.dumps(r.model_dump(mode="json")))
    assert data["primary"] == "metabolic_acidosis"
    assert data["expected"]["rule"] == "Winter's formula"
    assert data["alerts"][0].keys() == {"code", "level", "message"}


_maybe = st.none() | st.floats(allow_nan=False, allow_infinity=False)


def _opt(low: float, high: float) -> st.SearchStrategy[float | None]:
    return st.none() | st.floats(min_value=low, max_value=high, allow_nan=False)


_cases = st.builds(
    Case,
    gas=st.builds(
        Gas,
        sample=st.sampled_from([None, "arterial", "venous"]),
        ph=_opt(6.5, 8.0),
        pco2=_opt(5, 150),
        hco3=_opt(1, 70),
    ),
    chem=st.builds(
        Chem,
        na=_opt(90, 190),
        cl=_opt(50, 150),
        tco2=_opt(1, 70),
        k=_opt(1, 10),
        albumin=_opt(0.5, 7),
        ionized_ca=_opt(0.3, 2.5),
        mg=_opt(0.2, 8),
    ),
)


@settings(max_examples=400, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(_cases)
def test_reading_never_raises_and_is_deterministic(case: Case) -> None:
    first = read_acid_base(case)
    second = read_acid_base(case)
    assert first == second
    assert first.model_dump_json() == second.model_dump_json()
    if first.primary not in ("none", "undetermined"):
        assert first.disorders[0] == first.primary
    assert len(set(first.disorders)) == len(first.disorders)
    assert not set(first.disorders) & set(first.possible_disorders)


@settings(max_examples=200, deadline=None)
@given(
    st.builds(Gas, sample=st.sampled_from([None, "arterial", "venous"]), ph=_maybe, pco2=_maybe, hco3=_maybe)
)
def test_reading_survives_values_outside_validation(gas: Gas) -> None:
    # Zero, negative and huge values never reach the reading after validation; it still must not crash.
    read_acid_base(Case(gas=gas))


def test_pco2_near_the_ceiling_of_compensation_is_not_called_an_added_respiratory_alkalosis() -> None:
    # HCO3 52: the 0.7 rule (Berend 2014) predicts 59.6 +/- 2, beyond the usual ceiling of about 55 mmHg
    # (Galla, JASN 2000); PaCO2 55 is read as possibly maximal compensation, not a second disorder.
    reading = read_acid_base(Case(gas=Gas(sample="arterial", ph=7.61, pco2=55, hco3=52)))
    assert reading.primary == "metabolic_alkalosis"
    assert reading.compensation == "uncertain"
    assert "respiratory_alkalosis" not in reading.disorders
    assert "respiratory_alkalosis" in reading.possible_disorders
    # Well below the ceiling it stays an added respiratory alkalosis.
    low = read_acid_base(Case(gas=Gas(sample="arterial", ph=7.70, pco2=45, hco3=52)))
    assert "respiratory_alkalosis" in low.disorders


def test_the_reading_reads_the_calculations_it_is_given() -> None:
    # One computation per value: the reading takes the gap, delta ratio and expected PaCO2 from
    # compute_calculations rather than working them out again (a doctored gap shows it is read).
    from notegen.acidbase.calculations import compute_calculations

    case = Case(gas=_gas(24, 14), chem=Chem(na=140, cl=100, tco2=15))
    calcs = compute_calculations(case)
    assert read_acid_base(case).anion_gap == calcs["anion_gap"].value == 25  # old signature still works
    doctored = {**calcs, "anion_gap": calcs["anion_gap"].model_copy(update={"value": 30.0})}
    assert read_acid_base(case, None, doctored).anion_gap == 30
    expected = read_acid_base(case, None, calcs).expected
    assert expected is not None
    assert (expected.low, expected.high) == (calcs["expected_pco2"].low, calcs["expected_pco2"].high)


@pytest.mark.parametrize(
    ("pco2", "hco3", "added", "established"),
    [
        # Winter's formula (Albert, Dell & Winters 1967): HCO3 12 -> 24-28 mmHg.
        (29.5, 12, "respiratory_acidosis", False),  # 1.5 above the range: within the 2 mmHg edge margin
        (31, 12, "respiratory_acidosis", True),  # 3 above: an added respiratory acidosis
        (22.5, 12, "respiratory_alkalosis", False),
        # 0.7 rule (Berend 2014): HCO3 34 -> 45-49; another published form, 0.7 x HCO3 + 20 +/- 5
        # (Kidney360 2022;3:1458, Table 3), gives 38.8-48.8.
        (41, 34, "respiratory_alkalosis", False),  # outside the first, inside the second
        (37, 34, "respiratory_alkalosis", True),  # outside both and beyond the margin
    ],
    ids=["winters-1.5-above", "winters-3-above", "winters-1.5-below", "alkalosis-other-form", "alkalosis-outside-both"],
)
def test_compensation_at_the_edge_of_the_rule_is_only_possible(
    pco2: float, hco3: float, added: str, established: bool
) -> None:
    # Published forms of each rule differ by a few mmHg (shared/CLINICAL.md); the 2 mmHg margin is common practice.
    r = read_acid_base(Case(gas=_gas(pco2, hco3)))
    assert (added in r.disorders) is established
    assert (added in r.possible_disorders) is (not established)
    assert r.compensation == ("inappropriate" if established else "uncertain")
