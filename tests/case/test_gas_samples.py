"""Each gas keeps its own sample type: in the values table and in the trend. Invented cases."""

from __future__ import annotations

from notegen.case.trend import build_trend
from notegen.case.validation import validate_case
from notegen.pipeline import Drafter, DraftOptions

SERIAL = {
    "units": "conventional",
    "gas": [
        {"sample": "venous", "ph": 7.36, "pco2": 52, "hco3": 29, "po2": 38, "taken_at": "2026-03-14T02:00"},
        {"sample": "arterial", "ph": 7.48, "pco2": 45, "hco3": 33, "taken_at": "2026-03-14T06:00"},
        {"sample": "arterial", "ph": 7.50, "pco2": 46, "hco3": 35, "taken_at": "2026-03-14T09:00"},
    ],
}


def test_an_earlier_venous_gas_is_labelled_venous_beside_a_newer_arterial_one() -> None:
    # Before: every gas took the newest gas's sample: the venous PCO2 52 was shown as "PaCO2".
    note = Drafter().draft(validate_case(SERIAL), DraftOptions(worksheet=True))  # the values table
    assert "| PvCO2 | 52 mmHg |" in note
    assert "| PvO2 | 38 mmHg |" in note
    assert "| PaCO2 | 45 mmHg |" in note
    assert "| PaCO2 | 52 mmHg |" not in note


def test_the_trend_never_joins_venous_and_arterial_values() -> None:
    # Before: one "PCO2" series ran 52 (venous) -> 45 -> 46 (arterial).
    series = {s.label: [p.value for p in s.points] for s in build_trend(validate_case(SERIAL))}
    assert series["PCO2 (arterial)"] == [45, 46]
    assert "PCO2" not in series
    assert all(52 not in values for values in series.values())  # one venous value makes no series


def test_a_trend_of_one_sample_type_keeps_its_plain_label() -> None:
    data = {"units": "conventional", "gas": [dict(g, sample="arterial") for g in SERIAL["gas"]]}
    labels = {s.label for s in build_trend(validate_case(data))}
    assert {"pH", "PCO2", "HCO3"} <= labels


def test_each_value_carries_its_own_gas_sample() -> None:
    # An arterial and a venous gas drawn in the same minute with the same PCO2: before, the label was
    # found by matching time and value against every gas, which could not tell these two apart (and
    # cost a scan of every gas for every value: quadratic in serial gases).
    data = {
        "units": "conventional",
        "gas": [
            {"sample": "venous", "ph": 7.40, "pco2": 46, "hco3": 28, "taken_at": "2026-03-14T06:00"},
            {"sample": "arterial", "ph": 7.46, "pco2": 46, "hco3": 32, "taken_at": "2026-03-14T06:00"},
        ],
    }
    case = validate_case(data)
    samples = {(m.field, m.value, m.sample) for m in case.measurements if m.field.startswith("gas.")}
    assert ("gas.pco2", 46, "arterial") in samples
    assert ("gas.ph", 7.40, "venous") in samples
    assert {m.sample for m in case.measurements if m.field.startswith("chem.")} <= {None}
