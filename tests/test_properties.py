"""Properties over generated valid cases (hypothesis): drafting never fails, is deterministic,
renders in every format, its JSON fits the published schema, and the chloride reading moves
the way a clinician expects.

Cases are case-file dicts as a user writes them: values inside the plausibility bounds of
rules/fields.yaml, in the file's unit system, in another accepted unit, or censored ("<10");
medications and findings drawn from rules/vocabulary/ (with unknown ones mixed in); blood
pressure, volume, serial results and whole sections optional. Runs are derandomized so CI
sees the same examples every time; 2,100 examples in all.
"""

from __future__ import annotations

import json
import math
import re
from datetime import datetime, timedelta
from functools import cache
from typing import Any

import jsonschema
import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st
from typer.testing import CliRunner

from notegen.assess.model import Assessment
from notegen.case import units as u
from notegen.case.validation import LAB_SECTIONS, pco2_fits_other_unit, validate_case
from notegen.cli.app import app
from notegen.knowledge import shipped_knowledge
from notegen.knowledge import vocabulary as vocab
from notegen.pipeline import Drafter, DraftOptions

FORMATS = ("markdown", "text", "html", "json")
DIURETIC_CLASSES = frozenset({"loop_diuretic", "thiazide_diuretic", "potassium_sparing_diuretic"})
DIURETICS_WITH_CHLORIDE_EFFECT = ("furosemide", "bumetanide", "torsemide", "hydrochlorothiazide", "chlorthalidone")
UNKNOWN_MEDS = ("mysterol", "herbal tea", "vitamin D 1000 units")
UNKNOWN_FINDINGS = ("itchy elbows", "fatigue")
START = datetime(2026, 3, 1, 6, 0)

# Two drafters: one case drafted by both must give the same text (no state kept between drafts).
DRAFTER = Drafter()
OTHER_DRAFTER = Drafter()


def _profile(examples: int) -> Any:
    return settings(
        max_examples=examples,
        derandomize=True,  # the same examples on every run and machine
        database=None,
        deadline=None,  # a 2-core CI box is slow on the first draft; time is not what these test
        suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large],
    )


# --- Vocabulary the strategies draw from ---------------------------------------------------------------


@cache
def _medication_names() -> tuple[tuple[str, tuple[str, ...]], ...]:
    """(name as a clinician may write it, classes), for every generic name and synonym."""
    names: dict[str, tuple[str, ...]] = {}
    data = vocab._load(vocab.rules_dir() / "vocabulary" / "medications.yaml")
    for generic, entry in data.items():
        for name in [generic, *entry.get("synonyms", [])]:
            names[name] = tuple(entry["classes"])
    return tuple(sorted(names.items()))


@cache
def _finding_names() -> tuple[str, ...]:
    return tuple(sorted(shipped_knowledge().findings))


# --- Values ------------------------------------------------------------------------------------------------

_DECIMALS = {"gas.ph": 2, "urine.ph": 1, "chem.k": 1, "chem.creatinine": 2, "chem.ionized_ca": 2}


@st.composite
def lab_value(draw: st.DrawFn, field: str, system: str, low: float | None = None, high: float | None = None) -> Any:
    """A value for `field` inside its plausibility bounds, written the way a case file may write it."""
    info = shipped_knowledge().fields[field]
    low = max(info.low, low if low is not None else info.low)
    high = min(info.high, high if high is not None else info.high)
    scale = 10 ** _DECIMALS.get(field, 1)
    canonical = draw(st.integers(math.ceil(low * scale), math.floor(high * scale))) / scale
    default = u.default_unit(field, system)
    unit = draw(st.sampled_from([default, *u.accepted_units(field)]))
    reported = float(f"{u.from_canonical(field, canonical, unit):.4g}")
    if not info.low <= u.to_canonical(field, reported, unit) <= info.high:
        reported, unit = canonical, u.FIELD_UNITS[field].canonical  # rounding left the bounds: say it plainly
    shown = int(reported) if reported.is_integer() else reported
    form = draw(st.sampled_from(["bare", "text", "mapping"]))
    if field.startswith("urine.") and unit and draw(st.integers(0, 9)) == 0:
        return f"<{shown} {unit}"  # a censored result, as laboratories report them
    if form == "bare" and unit == default:
        return shown
    if form == "mapping":
        return {"value": shown, "unit": unit} if unit else {"value": shown}
    return f"{shown} {unit}".strip()


def _plain_number(value: Any) -> float | None:
    """The number of a generated value in any of its forms (bare, "2.6 mmol/L", mapping), or None."""
    if isinstance(value, dict):
        value = value.get("value")
    if isinstance(value, str):
        match = re.match(r"\s*([-+]?[0-9.]+)", value)
        return float(match.group(1)) if match else None
    return float(value) if isinstance(value, int | float) else None


@st.composite
def section(draw: st.DrawFn, name: str, system: str) -> dict[str, Any]:
    fields = draw(st.lists(st.sampled_from(LAB_SECTIONS[name]), unique=True, max_size=len(LAB_SECTIONS[name])))
    if name == "gas" and draw(st.integers(0, 3)) > 0:
        fields = sorted({*fields, "ph", "pco2", "hco3"})  # most gases are complete, as most reports are
    values: dict[str, Any] = {key: draw(lab_value(f"{name}.{key}", system)) for key in sorted(fields)}
    if name == "gas" and "ph" in values and draw(st.booleans()):
        # half the complete gases agree with Henderson-Hasselbalch, as an analyser's report does
        pco2 = draw(st.integers(20, 90))
        hco3 = draw(st.integers(8, 50))
        ph = round(6.1 + math.log10(hco3 / (0.0307 * pco2)), 2)
        if 6.5 <= ph <= 8.0:
            values.update(ph=ph, pco2=pco2 if system == "conventional" else f"{pco2} mmHg", hco3=hco3)
    if name == "gas" and draw(st.booleans()):
        values["sample"] = draw(st.sampled_from(["arterial", "venous", "Arterial"]))
    if name == "gas" and isinstance(values.get("pco2"), int | float):
        # a bare PCO2 that fits its gas only in the other unit is refused by validation (it asks for
        # the unit), so such a gas is not a valid case
        ph, hco3 = _plain_number(values.get("ph")), _plain_number(values.get("hco3"))
        if ph is not None and hco3 is not None:
            assume(pco2_fits_other_unit(ph, float(values["pco2"]), hco3, system) is None)
    return values


@st.composite
def blood_pressure(draw: st.DrawFn) -> Any:
    systolic = draw(st.integers(60, 240))
    diastolic = draw(st.integers(30, min(systolic - 5, 150)))
    if draw(st.booleans()):
        return f"{systolic}/{diastolic}" + draw(st.sampled_from(["", " mmHg"]))
    return {"systolic": systolic, "diastolic": diastolic}


@st.composite
def medication(draw: st.DrawFn, allow_diuretics: bool = True) -> Any:
    choices = [n for n, classes in _medication_names() if allow_diuretics or not DIURETIC_CLASSES & set(classes)]
    name = draw(st.sampled_from([*choices, *UNKNOWN_MEDS]))
    if draw(st.booleans()):
        name = name + draw(st.sampled_from([" 40 mg", " once daily", " IV"]))
    if draw(st.booleans()):
        return {"name": name, "last_dose_hours": draw(st.integers(0, 24 * 30))}
    return name


# Any text a case file may hold, template syntax and markup included; not control characters or
# bidirectional overrides, which validation refuses (tests/bad_inputs covers those).
label_text = st.text(
    alphabet=st.characters(
        exclude_categories=("Cs", "Cc"), exclude_characters="\u202a\u202b\u202c\u202d\u202e\u2066\u2067\u2068\u2069"
    ),
    min_size=1,
    max_size=60,
)


@st.composite
def context(draw: st.DrawFn, allow_diuretics: bool = True) -> dict[str, Any]:
    out: dict[str, Any] = {}
    if draw(st.booleans()):
        out["bp"] = draw(blood_pressure())
    if draw(st.booleans()):
        out["volume"] = draw(st.sampled_from(["low", "normal", "high", "unknown", "hypovolemic", "Euvolemic"]))
    if draw(st.booleans()):
        out["meds"] = draw(st.lists(medication(allow_diuretics), max_size=6))
    if draw(st.booleans()):
        out["findings"] = draw(st.lists(st.sampled_from([*_finding_names(), *UNKNOWN_FINDINGS]), max_size=4))
    return out


@st.composite
def patient(draw: st.DrawFn) -> dict[str, Any]:
    out: dict[str, Any] = {}
    if draw(st.booleans()):
        out["age"] = draw(st.integers(18, 110))  # under 18 is refused (adults only)
    if draw(st.booleans()):
        out["sex"] = draw(st.sampled_from(["female", "male", "F", "m"]))
    if draw(st.booleans()):
        out["weight_kg"] = draw(st.integers(30, 200))
    if draw(st.booleans()):
        out["height_cm"] = draw(st.integers(120, 210))
    return out


@st.composite
def case_file(draw: st.DrawFn) -> dict[str, Any]:
    """Any valid case file with a measured value: every section optional, serial results sometimes."""
    system = draw(st.sampled_from(["conventional", "si"]))
    # the unit system is declared: without it a bare value of an analyte whose SI and conventional
    # numbers overlap is refused (test_unit_checks.py holds the undeclared properties)
    data: dict[str, Any] = {"units": system}
    if draw(st.booleans()):
        data["case"] = draw(label_text)
    for name in LAB_SECTIONS:
        if draw(st.integers(0, 3)) == 0:
            continue
        if draw(st.integers(0, 5)) == 0:
            # serial results: two to three entries a few hours apart, each with its time
            count = draw(st.integers(2, 3))
            entries = [draw(section(name, system)) for _ in range(count)]
            for index, entry in enumerate(entries):
                entry["taken_at"] = (START + timedelta(hours=3 * index)).isoformat(timespec="minutes")
            data[name] = entries
        else:
            data[name] = draw(section(name, system))
    if draw(st.booleans()):
        data["patient"] = draw(patient())
    if draw(st.integers(0, 2)) > 0:
        data["context"] = draw(context())
    # a case without a measured value is refused (nothing to assess): not a case to draft
    assume(any(key not in ("taken_at", "sample") for name in LAB_SECTIONS for entry in _entries(data.get(name))
               for key in entry))
    return data


def _entries(section: Any) -> list[dict[str, Any]]:
    return [] if section is None else section if isinstance(section, list) else [section]


@st.composite
def alkalosis_case_file(draw: st.DrawFn, allow_diuretics: bool = False) -> dict[str, Any]:
    """A case whose gas reads as a metabolic alkalosis: HCO3 28-45, PaCO2 near the 0.7 rule, pH from both."""
    hco3 = draw(st.integers(28, 45))
    pco2 = draw(st.integers(round(40 + 0.7 * (hco3 - 24)) - 3, round(40 + 0.7 * (hco3 - 24)) + 3))
    ph = round(6.1 + math.log10(hco3 / (0.0307 * pco2)), 2)
    assume(ph > 7.45)
    chem = draw(section("chem", "conventional"))
    chem.pop("tco2", None)
    data: dict[str, Any] = {
        "units": "conventional",
        "gas": {"sample": "arterial", "ph": ph, "pco2": pco2, "hco3": hco3},
        "chem": chem,
        "urine": {k: v for k, v in draw(section("urine", "conventional")).items() if k != "cl"},
        "context": draw(context(allow_diuretics=allow_diuretics)),
    }
    if draw(st.booleans()):
        data["patient"] = draw(patient())
    return data


# --- Shared checks -----------------------------------------------------------------------------------------


@pytest.fixture(scope="module")
def output_validator() -> jsonschema.protocols.Validator:
    result = CliRunner().invoke(app, ["schema", "output"])
    assert result.exit_code == 0, result.stderr
    schema = json.loads(result.stdout)
    validator_class = jsonschema.validators.validator_for(schema)
    validator_class.check_schema(schema)
    return validator_class(schema)


def _assess(data: dict[str, Any]) -> Assessment:
    return DRAFTER.assess(validate_case(data, filename="generated.yaml"))


# --- Properties ---------------------------------------------------------------------------------------------


@_profile(800)
@given(data=case_file())
def test_drafting_never_raises_and_every_value_is_kept(data: dict[str, Any]) -> None:
    case = validate_case(data, filename="generated.yaml")
    note = DRAFTER.draft(case, DraftOptions(output_format="markdown"))
    assert note.startswith("# ")
    # every value given is held as a measurement (converted, with what was reported)
    given_fields = {
        f"{name}.{'bun' if key == 'urea' else key}"
        for name in LAB_SECTIONS
        for entry in (data.get(name) if isinstance(data.get(name), list) else [data.get(name) or {}])
        for key in entry
        if key not in ("taken_at", "sample")
    }
    assert {m.field for m in case.measurements} == given_fields
    # every medication given is in the case, recognised or named as not reasoned with
    meds = (data.get("context") or {}).get("meds", [])
    assert len(case.context.meds) == len(meds)
    for med in case.context.meds:
        assert med.recognised or any(repr(med.name) in notice for notice in case.notices)


@_profile(150)
@given(data=case_file(), explain=st.booleans(), brief=st.booleans())
def test_every_format_renders_deterministically_and_json_fits_the_schema(
    data: dict[str, Any], explain: bool, brief: bool, output_validator: jsonschema.protocols.Validator
) -> None:
    case = validate_case(data, filename="generated.yaml")
    for output_format in FORMATS:
        options = DraftOptions(output_format=output_format, explain=explain, brief=brief)
        first = DRAFTER.draft(case, options)
        assert first.strip()
        assert OTHER_DRAFTER.draft(case, options) == first
        assert DRAFTER.draft(case, options) == first
        if output_format == "json":
            output_validator.validate(json.loads(first))
        if output_format == "html":
            assert first.lstrip().lower().startswith("<!doctype html>")


_RANK = {"responsive": 0, "indeterminate": 1, "resistant": 2}


def _chloride_class(data: dict[str, Any], urine_cl: float) -> str | None:
    changed = {**data, "urine": {**data["urine"], "cl": urine_cl}}
    return _assess(changed).chloride_class


def _on_dialysis(data: dict[str, Any]) -> bool:
    # On dialysis the urine chloride does not class the alkalosis (rules/alkalosis/trees.yaml, common practice).
    return "dialysis" in _assess(data).case.context.findings


@_profile(450)
@given(data=alkalosis_case_file(allow_diuretics=False))
def test_raising_urine_chloride_never_moves_the_class_toward_responsive(data: dict[str, Any]) -> None:
    # CLINICAL.md: urine chloride < 20 responsive, > 40 resistant (Luke & Galla, JASN 2012);
    # with no diuretic listed, 10 -> 60 mmol/L may only move responsive -> indeterminate -> resistant.
    low, high = _chloride_class(data, 10), _chloride_class(data, 60)
    if _on_dialysis(data):
        assert (low, high) == ("unknown", "unknown")
        return
    assert low in _RANK and high in _RANK, (low, high)
    assert low == "responsive"
    assert _RANK[high] >= _RANK[low]


@_profile(250)
@given(data=alkalosis_case_file(allow_diuretics=False), values=st.lists(st.integers(0, 200), min_size=2, max_size=6))
def test_urine_chloride_class_is_monotonic_over_any_values(data: dict[str, Any], values: list[int]) -> None:
    if _on_dialysis(data):
        assert {_chloride_class(data, value) for value in values} == {"unknown"}
        return
    ranks = [_RANK[str(_chloride_class(data, value))] for value in sorted(values)]
    assert ranks == sorted(ranks)


_TIER = {"unlikely": 0, "possible": 1, "likely": 2}


@_profile(450)
@given(
    data=alkalosis_case_file(allow_diuretics=True),
    diuretic=st.sampled_from(DIURETICS_WITH_CHLORIDE_EFFECT),
    hours=st.one_of(st.none(), st.integers(0, 24 * 14)),
)
def test_adding_a_diuretic_never_removes_diuretic_from_the_differential(
    data: dict[str, Any], diuretic: str, hours: int | None
) -> None:
    before = {c.cause: c for c in _assess(data).differential}
    meds = list(data["context"].get("meds", []))
    meds.append(diuretic if hours is None else {"name": diuretic, "last_dose_hours": hours})
    after = {c.cause: c for c in _assess({**data, "context": {**data["context"], "meds": meds}}).differential}
    assert "diuretic" in after
    if "diuretic" in before:
        assert _TIER[after["diuretic"].tier] >= _TIER[before["diuretic"].tier]
