"""Serial results: the trend in the note, and a swinging urine chloride as evidence of an intermittent diuretic."""

from __future__ import annotations

from typing import Any

from notegen.case.trend import build_trend
from notegen.case.validation import validate_case
from notegen.pipeline import Drafter, DraftOptions

SERIAL: dict[str, Any] = {
    "gas": [
        {"taken_at": "2026-03-10T07:00", "ph": 7.45, "pco2": 44, "hco3": 30},
        {"taken_at": "2026-03-11T07:30", "ph": 7.49, "pco2": 47, "hco3": 35},
    ],
    "chem": [
        {"taken_at": "2026-03-10T07:00", "k": 3.6, "cl": 96},
        {"taken_at": "2026-03-11T07:30", "k": 3.2, "cl": 90, "na": 135},
    ],
    "urine": [
        {"taken_at": "2026-03-10T18:00", "cl": 12},
        {"taken_at": "2026-03-11T08:00", "cl": 74},
    ],
}


def test_trend_holds_each_analyte_measured_twice_oldest_first() -> None:
    trend = build_trend(validate_case(SERIAL))
    assert [(s.field, [p.value for p in s.points]) for s in trend] == [
        ("gas.ph", [7.45, 7.49]),
        ("gas.pco2", [44.0, 47.0]),
        ("gas.hco3", [30.0, 35.0]),
        ("chem.k", [3.6, 3.2]),
        ("chem.cl", [96.0, 90.0]),
        ("urine.cl", [12.0, 74.0]),
    ]


def test_a_single_result_makes_no_trend() -> None:
    assert build_trend(validate_case({"gas": {"ph": 7.5, "pco2": 47, "hco3": 36}})) == ()


def test_note_shows_the_trend_with_times() -> None:
    note = Drafter().draft(validate_case(SERIAL), DraftOptions(worksheet=True))
    assert "## Trend\n\n- **pH:** 7.45 (2026-03-10 07:00) \u2192 7.49 (2026-03-11 07:30)\n" in note
    assert "- **Urine chloride:** 12 (2026-03-10 18:00) \u2192 74 (2026-03-11 08:00) mmol/L\n" in note


def _diuretic(data: dict[str, Any]) -> Any:
    assessment = Drafter().assess(validate_case(data))
    return next(c for c in assessment.differential if c.cause == "diuretic")


def test_urine_chloride_swinging_across_the_thresholds_counts_for_a_diuretic() -> None:
    # Below 20 between doses and above 40 while the drug acts (Luke & Galla, JASN 2012): the pattern of an
    # intermittent diuretic effect, even with no diuretic listed (covert use).
    cause = _diuretic(SERIAL)
    assert "urine_cl_swings" in [e.id for e in cause.supporting]
    assert cause.tier in ("likely", "possible")


def test_a_steady_urine_chloride_is_no_swing() -> None:
    steady = {
        **SERIAL,
        "urine": [{"taken_at": "2026-03-10T18:00", "cl": 52}, {"taken_at": "2026-03-11T08:00", "cl": 74}],
    }
    assert "urine_cl_swings" not in [e.id for e in _diuretic(steady).supporting]
