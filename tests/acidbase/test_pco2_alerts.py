"""PCO2 critical values: a high or low PCO2 stands out, a venous PCO2 is read with care, and an expected
compensation is not flagged as a danger of its own. Every gas here is invented.

Limits: a PaCO2 below about 20 or above about 70 mmHg is on common laboratory critical-value lists
(common practice; laboratories set their own). Hypercapnia with an acidemic pH is an acute or
acute-on-chronic respiratory acidosis (Rochwerg et al., Eur Respir J 2017; from memory), critical below
pH 7.25 (Davidson et al., Thorax 2016, BTS/ICS; from memory).
"""

from __future__ import annotations

import math

import pytest

from notegen.acidbase.model import AcidBaseReading
from notegen.acidbase.reading import read_acid_base
from notegen.case.model import Case, Gas
from notegen.case.validation import validate_case
from notegen.pipeline import Drafter


def _ph(pco2: float, hco3: float) -> float:
    # Henderson-Hasselbalch, pK' 6.1, S 0.0307 (CLSI C46-A 2001), rounded to two decimals as analysers print.
    return round(6.1 + math.log10(hco3 / (0.0307 * pco2)), 2)


def _read(pco2: float, hco3: float, sample: str = "arterial") -> AcidBaseReading:
    gas = Gas(sample=sample, ph=_ph(pco2, hco3), pco2=pco2, hco3=hco3)  # type: ignore[arg-type]
    return read_acid_base(Case(gas=gas))


def _pco2_alerts(reading: AcidBaseReading) -> dict[str, str]:
    codes = ("severe_hypercapnia", "severe_hypocapnia", "hypercapnic_acidemia")
    return {a.code: a.level for a in reading.alerts if a.code in codes}


@pytest.mark.parametrize(
    ("pco2", "hco3", "sample", "expected"),
    [
        # Before: an acute respiratory acidosis at pH 7.22 with a PaCO2 of 68 mmHg raised no flag.
        (68, 27, "arterial", {"hypercapnic_acidemia": "critical"}),
        (55, 26.5, "arterial", {"hypercapnic_acidemia": "warning"}),  # pH 7.30, acute
        (62, 32, "arterial", {}),  # pH 7.33, fits a chronic process: its usual pH, not an acute failure
        (74, 30, "arterial", {"severe_hypercapnia": "critical"}),  # one alert for the one value
        (70, 40, "arterial", {}),  # at the limit, not above it; pH 7.37
        (18, 22, "arterial", {"severe_hypocapnia": "critical"}),  # a primary respiratory alkalosis
        (19, 7, "arterial", {}),  # Winter's formula 18.5 +/- 2: the ketoacidosis's own compensation
        (14, 7, "arterial", {"severe_hypocapnia": "critical"}),  # below Winter's range: an added alkalosis
        # Venous: read against the limits moved up by the mean venous-arterial difference, 4.4 mmHg
        # (Bloom et al., Eur J Emerg Med 2014), never converted; no acidemia verdict from a venous PCO2.
        (72, 33, "venous", {"hypercapnic_acidemia": "warning"}),  # pH 7.27: flagged, never critical
        (80, 30, "venous", {"severe_hypercapnia": "critical"}),
        (60, 27, "venous", {"hypercapnic_acidemia": "warning"}),  # pH 7.27
        (48, 27, "venous", {}),  # pH 7.27, but 48 is within the venous range (up to 49.4 mmHg)
    ],
    ids=[
        "acute-7.22-68",
        "acute-7.30-55",
        "chronic-7.33-62",
        "above-70",
        "at-70",
        "resp-alkalosis-18",
        "winters-compensation-19",
        "below-winters-14",
        "venous-72",
        "venous-80",
        "venous-acidemic-60",
        "venous-48",
    ],  # fmt: skip
)
def test_pco2_critical_values(pco2: float, hco3: float, sample: str, expected: dict[str, str]) -> None:
    assert _pco2_alerts(_read(pco2, hco3, sample)) == expected


def test_a_venous_pco2_alert_says_it_is_venous_and_asks_for_an_arterial_gas() -> None:
    message = next(a.message for a in _read(80, 30, "venous").alerts if a.code == "severe_hypercapnia")
    assert message.startswith(
        "Venous PCO2 80 mmHg is above the arterial limit of 70 mmHg plus the mean venous-arterial "
        "difference of 4.4 mmHg: severe hypercapnia"
    )
    low = next(a.message for a in _read(22, 26, "venous").alerts if a.code == "severe_hypocapnia")
    assert low.startswith("Venous PCO2 22 mmHg is below the arterial limit of 20 mmHg plus the mean venous-arterial")
    assert "consider an arterial gas to confirm it" in message
    acidemic = next(a.message for a in _read(60, 27, "venous").alerts if a.code == "hypercapnic_acidemia")
    assert acidemic.startswith("Venous PCO2 60 mmHg with pH 7.27: hypercapnia with acidemia")
    assert "respiratory acidosis if an arterial gas confirms it; consider prompt review" in acidemic


def test_the_ph_reads_as_analysers_print_it() -> None:
    # pH 7.30 stays 7.30 (two decimals), as the paragraph prints it; before the fix it read "pH 7.3".
    message = next(a.message for a in _read(55, 26.5).alerts if a.code == "hypercapnic_acidemia")
    assert message.startswith("PaCO2 55 mmHg with pH 7.30: hypercapnia with acidemia")


def test_the_acute_hypercapnia_stands_at_the_top_of_the_note() -> None:
    case = validate_case(
        {
            "case": "invented: acute hypercapnia",
            "units": "conventional",
            "patient": {"age": 44, "sex": "male"},
            "gas": {"sample": "arterial", "ph": 7.22, "pco2": 68, "hco3": 27},
        }
    )
    note = Drafter().draft(case)
    assert note.index("Critical values") < note.index("PaCO2 68 mmHg with pH 7.22: hypercapnia with acidemia")
    assert note.index("PaCO2 68 mmHg with pH 7.22: hypercapnia") < note.index("The arterial gas")
