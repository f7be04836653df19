"""Units are never guessed: a bare value readable in two unit systems is refused with both readings.

Every case here is invented. Each test names the misread it guards against; before the fix the
value was read silently in conventional units.
"""

from __future__ import annotations

from typing import Any

import pytest
from hypothesis import HealthCheck, assume, event, given, settings
from hypothesis import strategies as st

from notegen._format import format_value
from notegen.acidbase.calculations import compute_calculations, missing_calculations
from notegen.case import units as u
from notegen.case.unit_checks import AMBIGUOUS_FIELDS
from notegen.case.validation import LAB_SECTIONS, validate_case
from notegen.errors import CaseValueError
from notegen.intake.paste import parse_paste
from notegen.intake.read import read_case
from notegen.knowledge import shipped_knowledge
from notegen.pipeline import Drafter, DraftOptions


def _problem(data: Any) -> str:
    with pytest.raises(CaseValueError) as info:
        validate_case(data, filename="case.yaml")
    return str(info.value)


def test_a_bare_si_magnesium_is_refused_with_both_readings() -> None:
    # Before: 0.7 was read as 0.7 mg/dL and raised an alert for marked hypomagnesemia.
    assert _problem({"chem": {"mg": 0.7}}) == (
        "case.yaml: field `chem.mg`: magnesium 0.7 has no unit: 0.7 mmol/L (1.701 mg/dL) or 0.7 mg/dL? "
        'Give the unit (e.g. "0.7 mmol/L"), or declare the case\'s units (`units: si` or `units: conventional` '
        "in the case file, or --set units=si)"
    )


def test_a_declared_unit_system_reads_the_same_bare_value() -> None:
    assert validate_case({"units": "si", "chem": {"mg": 0.7}}).chem.mg == pytest.approx(1.701, abs=0.001)
    assert validate_case({"units": "conventional", "chem": {"mg": 0.7}}).chem.mg == pytest.approx(0.7)


def test_a_bare_si_calcium_is_refused_not_read_as_mg_per_dl() -> None:
    # Before: calcium 2.35 was read as 2.35 mg/dL (the bound was 2), and its corrected value raised no flag.
    message = _problem({"chem": {"ca": 2.35}})
    assert "2.35 mg/dL is not a plausible calcium (expected 3 to 20 mg/dL)" in message
    assert "did you mean 2.35 mmol/L (9.418 mg/dL)" in message


def test_an_si_urine_creatinine_without_a_unit_is_refused() -> None:
    # Before: urine creatinine 8 (mmol/L) was read as 8 mg/dL, and the K/creatinine ratio read as renal wasting.
    message = _problem({"urine": {"creatinine": 8, "k": 30}})
    assert "urine creatinine 8 has no unit: 8 mmol/L (90.5 mg/dL) or 8 mg/dL?" in message


def test_a_conventional_glucose_in_an_si_case_is_refused() -> None:
    # Before: glucose 110 in an SI case was read as 110 mmol/L, 1982 mg/dL, within the old 3000 bound.
    message = _problem({"units": "si", "chem": {"glucose": 110}})
    assert "110 mmol/L is not a plausible glucose (expected 10 to 1500 mg/dL); did you mean 110 mg/dL?" in message


def test_a_bare_urea_is_refused_but_bun_is_urea_nitrogen_in_mg_per_dl() -> None:
    assert "urea 7 has no unit: 7 mmol/L (19.61 mg/dL urea nitrogen) or 7 mg/dL" in _problem({"chem": {"urea": 7}})
    assert validate_case({"chem": {"bun": 20}}).chem.bun == 20


def test_a_value_only_one_system_allows_is_read_in_it() -> None:
    # creatinine 1.2 µmol/L is not a creatinine anyone has: only 1.2 mg/dL is possible
    case = validate_case({"chem": {"creatinine": 1.2, "albumin": 3.5, "glucose": 100}})
    assert (case.chem.creatinine, case.chem.albumin, case.chem.glucose) == (1.2, 3.5, 100)


def test_a_bare_low_pco2_reads_in_mmhg_only_when_its_gas_fits() -> None:
    fits = validate_case({"gas": {"ph": 7.20, "pco2": 20, "hco3": 7.5}})
    assert fits.gas.pco2 == 20
    # pH without bicarbonate: nothing tells 20 mmHg from 20 kPa
    assert "PCO2 20 has no unit: 20 kPa (150 mmHg) or 20 mmHg?" in _problem({"gas": {"ph": 7.2, "pco2": 20}})


def test_a_bare_kpa_pco2_beside_a_ph_is_refused() -> None:
    # Before: pH 7.45 and pCO2 5.3 with no HCO3 read as 5.3 mmHg: "a primary respiratory alkalosis".
    paste = "ABG 2026-03-14 06:20\npH 7.45\npCO2 5.3\n"
    with pytest.raises(CaseValueError) as info:
        read_case(None, paste="-", stdin=paste.encode())
    assert "5.3 mmHg is not a plausible PCO2 (expected 10 to 200 mmHg); did you mean 5.3 kPa" in str(info.value)


def test_a_paste_whose_other_units_are_si_reads_a_bare_value_in_si() -> None:
    paste = (
        "BMP 2026-03-14 06:10\nSodium 138 mmol/L\nCreatinine 88 umol/L\nGlucose 5.5 mmol/L\nMagnesium 0.7\n"
    )
    parsed = parse_paste(paste)
    assert parsed.data["chem"]["mg"] == {"value": 0.7, "unit": "mmol/L"}
    assert "read in mmol/L, as the paste's other SI units" in parsed.provenance["chem.mg"]
    case = read_case(None, paste="-", stdin=paste.encode())
    assert case.chem.mg == pytest.approx(1.701, abs=0.001)


def test_a_paste_with_mixed_systems_settles_nothing() -> None:
    paste = "BMP 2026-03-14 06:10\nCreatinine 88 umol/L\nGlucose 100 mg/dL\nMagnesium 0.7\n"
    assert "unit" not in parse_paste(paste).data["chem"]["mg"]
    with pytest.raises(CaseValueError, match="magnesium 0.7 has no unit"):
        read_case(None, paste="-", stdin=paste.encode())


def test_a_paste_gas_in_mmhg_says_nothing_about_its_chemistry() -> None:
    paste = "ABG 2026-03-14 06:20\npCO2 40 mmHg\nBMP 2026-03-14 06:10\nMagnesium 0.7\n"
    assert "unit" not in parse_paste(paste).data["chem"]["mg"]


def test_an_impossible_osmolal_gap_is_named_as_a_likely_unit_error_not_given() -> None:
    # Before: glucose and BUN in SI read as mg/dL gave an osmolal gap of -97, printed as a finding.
    case = validate_case(
        {"units": "si", "chem": {"na": 140, "glucose": 80, "urea": 5, "osm": 290}}
    )
    assert "osmolal_gap" not in compute_calculations(case)
    text = missing_calculations(case)["osmolal_gap"]
    assert text.startswith("not given: the measured osmolality is more than 20 mOsm/kg below the one calculated")
    assert "wrong unit" in text


def test_an_ordinary_osmolal_gap_is_still_given() -> None:
    case = validate_case({"chem": {"na": 140, "glucose": 90, "bun": 14, "osm": 300}})
    assert compute_calculations(case)["osmolal_gap"].value == pytest.approx(300 - (280 + 5 + 5), abs=0.01)


# --- Property: a value is only ever changed by a named unit conversion --------------------------------


_FIELDS = [f"{section}.{key}" for section, keys in LAB_SECTIONS.items() for key in keys]


@st.composite
def _bare_case(draw: st.DrawFn) -> tuple[dict[str, Any], str, float]:
    field = draw(st.sampled_from(_FIELDS))
    number = draw(st.floats(0.05, 3000, allow_nan=False).map(lambda x: float(f"{x:.3g}")))
    declared = draw(st.sampled_from([None, "si", "conventional"]))
    section, key = field.split(".")
    data: dict[str, Any] = {section: {key: number}}
    if declared is not None:
        data["units"] = declared
    return data, field, number


@settings(max_examples=400, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(_bare_case())
def test_a_bare_value_is_read_only_as_given_or_by_a_named_conversion(drawn: tuple[dict[str, Any], str, float]) -> None:
    data, field, number = drawn
    try:
        case = validate_case(data)
    except CaseValueError:
        return  # refused: nothing was read
    (measurement,) = case.measurements
    assert measurement.reported_value == number  # shown as given
    # the held value is the reported one through the conversion of the unit shown beside it
    assert measurement.value == pytest.approx(u.to_canonical(field, number, measurement.reported_unit))
    system = data.get("units")
    if system is None and field in AMBIGUOUS_FIELDS:
        # undeclared: read at all only when the other system's reading is impossible
        info = shipped_knowledge().fields[field]
        other = u.to_canonical(field, number, u.FIELD_UNITS[field].si)
        assert not info.low <= other <= info.high
    if system is not None:
        assert measurement.reported_unit == u.default_unit(field, system)


# --- Property: every value in the note's table is its input, or its input through a named conversion ------

_NOTE_FIELDS = [f for f in _FIELDS if f not in ("gas.ph", "urine.ph")]


@st.composite
def _one_value_case(draw: st.DrawFn) -> tuple[dict[str, Any], str, float, str | None]:
    field = draw(st.sampled_from(_NOTE_FIELDS))
    info = shipped_knowledge().fields[field]
    unit = draw(st.sampled_from([None, *u.accepted_units(field)]))
    declared = draw(st.sampled_from([None, "si", "conventional"]))
    as_unit = unit if unit is not None else u.default_unit(field, declared or "conventional")
    # mostly plausible values (drawn in the canonical unit, then written in the reported one), some not
    drawn = draw(st.floats(info.low * 0.5, info.high * 1.5, allow_nan=False))
    number = float(f"{u.from_canonical(field, drawn, as_unit):.3g}")
    assume(number > 0)
    canonical = u.to_canonical(field, number, as_unit)
    assume_ok = info.low <= canonical <= info.high
    section, key = field.split(".")
    value: Any = number if unit is None else {"value": number, "unit": unit}
    data: dict[str, Any] = {section: {key: value}}
    if declared is not None:
        data["units"] = declared
    return data, field, number, unit if assume_ok else "implausible"


@settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(_one_value_case())
def test_every_value_in_the_note_is_its_input_or_a_named_conversion(
    drawn: tuple[dict[str, Any], str, float, str | None],
) -> None:
    data, field, number, unit = drawn
    try:
        case = validate_case(data)
    except CaseValueError:
        event("refused")
        return  # refused: nothing reaches a note
    event("drafted")
    assert unit != "implausible"  # an implausible value is never drafted
    (measurement,) = case.measurements
    note = Drafter().draft(case, DraftOptions(worksheet=True))  # the values table is in the worksheet
    rows = [line for line in note.splitlines() if line.startswith("| ") and "|" in line[2:]]
    # the value as written (up to 6 decimals), or rounded by the one writer of numbers when written longer
    as_shown = {format_value(number), repr(number)}
    (row,) = [r for r in rows if r.split("|")[2].strip().split(" ")[0] in as_shown]
    reported, converted = (cell.strip() for cell in row.split("|")[2:4])
    # as reported: the number given, in the unit given (or the declared system's), nothing else
    shown_number, _, shown_unit = reported.partition(" ")
    assert shown_number in as_shown and shown_unit == (measurement.reported_unit or "")
    if unit is not None:
        assert u.normalise_unit(unit) == measurement.reported_unit
    # converted: unchanged, or the named factor of rules-independent unit arithmetic (units.py)
    expected = u.to_canonical(field, number, measurement.reported_unit)
    if converted != "unchanged":
        shown, shown_unit = converted.rsplit(" ", 1)
        assert shown_unit == u.FIELD_UNITS[field].canonical
        assert float(shown) == pytest.approx(expected, rel=0.006)
    else:
        assert measurement.reported_unit == u.FIELD_UNITS[field].canonical or expected == pytest.approx(number)
