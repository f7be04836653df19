"""Pastes as laboratory systems print them: what is read, and what is set aside and why.

Every printout here is invented. Each test names the misread or refusal it guards against.
"""

from __future__ import annotations

import pytest

from notegen.intake.paste import parse_paste


def _unused_reason(unused: list[str], line: int) -> str:
    (entry,) = [item for item in unused if item.startswith(f"line {line}:")]
    return entry


def test_a_calculated_osmolality_is_never_read_as_the_measured_one() -> None:
    # Before: "calc" and "calculated" were noise words, so a calculated osmolality filled the
    # measured one and the osmolal gap read 0: false reassurance about toxic alcohols.
    paste = (
        "CHEM 2026-03-14 06:10\n"
        "Sodium 140 mmol/L\n"
        "Osmolality, calculated 290\n"
        "Calc osm 291\n"
        "Osmolality (calc) 292\n"
        "Calcium calculated 9.0 mg/dL\n"
        "Calcium corrected 9.2 mg/dL\n"
        "Estimated osmolality 289\n"
    )
    parsed = parse_paste(paste)
    assert set(parsed.data["chem"]) == {"na", "taken_at"}
    assert _unused_reason(parsed.unused, 3) == (
        "line 3: 'Osmolality, calculated 290' is marked 'calculated': a calculated, estimated or corrected "
        "value is not the measured osmolality; only measured values are read"
    )
    for line in (4, 5, 6, 7, 8):
        assert "only measured values are read" in _unused_reason(parsed.unused, line)


def test_a_measured_osmolality_beside_a_calculated_one_is_read() -> None:
    parsed = parse_paste("CHEM 2026-03-14 06:10\nOsmolality calc 290\nOsmolality measured 310 mOsm/kg\n")
    assert parsed.data["chem"]["osm"] == {"value": 310, "unit": "mOsm/kg"}


def test_a_gas_hco3_marked_calculated_is_the_gas_bicarbonate() -> None:
    # the analyser calculates the gas HCO3: "HCO3 (calc)" is that value, not another quantity
    parsed = parse_paste("ABG 2026-03-14 06:20\npH 7.41\npCO2 40 mmHg\nHCO3 (calc) 24 mmol/L\n")
    assert parsed.data["gas"]["hco3"] == {"value": 24, "unit": "mmol/L"}


@pytest.mark.parametrize(
    ("name", "field"),
    [("cHCO3", "hco3"), ("cHCO3(P)", "hco3"), ("pH(T)", "ph"), ("pCO2(T)", "pco2")],
)
def test_analyser_names_are_read(name: str, field: str) -> None:
    values = {"hco3": "24 mmol/L", "ph": "7.41", "pco2": "40 mmHg"}
    parsed = parse_paste(f"ABG 2026-03-14 06:20\n{name} {values[field]}\n")
    assert field in parsed.data["gas"]


def test_a_standard_bicarbonate_is_not_read_as_the_actual_one() -> None:
    parsed = parse_paste("ABG 2026-03-14 06:20\npH 7.41\ncHCO3(P,st) 25 mmol/L\n")
    assert "hco3" not in parsed.data["gas"]
    assert any(item.startswith("line 3:") for item in parsed.unused)


def test_ck_is_creatine_kinase_not_potassium() -> None:
    parsed = parse_paste("CHEM 2026-03-14 06:10\nSodium 140 mmol/L\nCK 250\ncK+ 3.9 mmol/L\n")
    assert parsed.data["chem"]["k"] == {"value": 3.9, "unit": "mmol/L"}
    assert any(item.startswith("line 3:") for item in parsed.unused)
