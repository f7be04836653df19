"""A statement that compares a value with a threshold holds as printed.

Before the fix, 2.4999 mmol/L printed as "Potassium 2.5 mmol/L is below 2.5 mmol/L", 1.1999 mg/dL
as "Magnesium 1.2 mg/dL is below 1.2 mg/dL", and pH 7.5999 as "pH 7.60 ... marked alkalemia" beside
a severe threshold of 7.60. Thresholds are those of rules/acid_base.yaml and rules/alkalosis/pack.yaml
(common practice, see their sources there).
"""

from __future__ import annotations

import re

from hypothesis import given
from hypothesis import strategies as st

from notegen import draft
from notegen._format import decimals_beside, format_value_beside
from notegen.acidbase.reading import read_acid_base
from notegen.case.model import Case, Chem, Gas
from notegen.engine.facts import NumberFact, display_fact


def _alert(case: Case, code: str) -> str:
    found = [a.message for a in read_acid_base(case).alerts if a.code == code]
    assert found, read_acid_base(case).alerts
    return found[0]


GAS = Gas(sample="arterial", ph=7.49, pco2=48, hco3=36)


def test_potassium_just_under_the_threshold_is_printed_under_it() -> None:
    message = _alert(Case(gas=GAS, chem=Chem(k=2.4999)), "severe_hypokalemia")
    assert message.startswith("Potassium 2.4999 mmol/L is below 2.5 mmol/L")


def test_magnesium_just_under_the_threshold_is_printed_under_it() -> None:
    message = _alert(Case(gas=GAS, chem=Chem(mg=1.1999)), "hypomagnesemia")
    assert message.startswith("Magnesium 1.1999 mg/dL is below 1.2 mg/dL")


def test_a_ph_just_under_the_severe_threshold_is_not_printed_on_it() -> None:
    gas = Gas(sample="arterial", ph=7.5999, pco2=30, hco3=29)
    message = _alert(Case(gas=gas), "severe_alkalemia")
    assert message.startswith("pH 7.5999 is at or above 7.55: marked alkalemia")


def test_ordinary_values_keep_their_short_form() -> None:
    assert _alert(Case(gas=GAS, chem=Chem(k=2.4)), "severe_hypokalemia").startswith("Potassium 2.4 mmol/L is below")
    assert format_value_beside(2.8, [2.5, 3.0], "mmol/L") == "2.8 mmol/L"
    assert decimals_beside(7.61, [7.60, 7.55], 2) == 2


def test_the_rule_walk_prints_a_fact_on_its_side_of_the_setting() -> None:
    assert display_fact(NumberFact(1.1999, "mg/dL"), None, [1.2]) == "1.1999 mg/dL"
    assert display_fact(NumberFact(1.1, "mg/dL"), None, [1.2]) == "1.1 mg/dL"
    assert display_fact(NumberFact(1.1999, "mg/dL"), None) == "1.2 mg/dL"  # no threshold in the sentence


def test_a_drafted_note_never_says_a_value_is_below_itself() -> None:
    case = {"case": "edge", "units": "conventional", "gas": {"sample": "arterial", "ph": 7.49, "pco2": 48, "hco3": 36},
            "chem": {"k": 2.4999, "mg": 1.1999, "na": 138, "cl": 90}}
    text = draft(case).markdown
    for match in re.finditer(r"([0-9.]+) (mmol/L|mg/dL) is below ([0-9.]+) \2", text):
        assert float(match.group(1)) < float(match.group(3)), match.group(0)
        assert match.group(1) != match.group(3), match.group(0)


@given(value=st.floats(min_value=0.5, max_value=9.5, allow_nan=False),
       threshold=st.sampled_from([2.0, 2.5, 3.0, 3.5, 1.2, 1.7]))
def test_the_printed_value_is_on_the_side_of_the_threshold_its_value_is(value: float, threshold: float) -> None:
    shown = float(format_value_beside(value, [threshold]))
    assert (shown < threshold) == (value < threshold)
    assert (shown > threshold) == (value > threshold)
