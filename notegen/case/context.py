"""Validating the non-laboratory sections of a case: patient and clinical context.

Medications map to classes and findings to ids through the vocabularies under `rules/`;
an unrecognised name is kept and reported, never dropped.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from typing import Any

from notegen._format import join_words
from notegen.case.checks import (
    MAX_TEXT,
    _Collector,
    _did_you_mean,
    _finite,
    _fmt,
    _key,
    _shown,
    _unsafe_character,
)
from notegen.case.drug_names import near_miss
from notegen.case.model import BloodPressure, Context, Medication, Patient
from notegen.knowledge import shipped_knowledge
from notegen.knowledge import vocabulary as vocab

PATIENT_KEYS = ("age", "sex", "weight_kg", "height_cm")
CONTEXT_KEYS = (
    "bp",
    "volume",
    "meds",
    "findings",
    "renin",
    "aldosterone",
    "diuretic_screen",
    "cortisol_excess",
    "blood_product_units",
)
MAX_BLOOD_PRODUCT_UNITS = 500
LEVEL_WORDS = {
    "low": "low",
    "suppressed": "low",
    "normal": "normal",
    "high": "high",
    "raised": "high",
    "elevated": "high",
}
SCREEN_WORDS = {"positive": "positive", "detected": "positive", "negative": "negative", "not detected": "negative"}
YES_NO = {"yes": True, "true": True, "present": True, "no": False, "false": False, "absent": False}
MAX_MEDICATIONS = 200
ADULT_AGE = 18  # years; the published rules and ranges notegen uses were set in adults

SEX_WORDS = {"female": "female", "f": "female", "woman": "female", "male": "male", "m": "male", "man": "male"}
VOLUME_WORDS = {
    "low": "low",
    "hypovolemic": "low",
    "depleted": "low",
    "contracted": "low",
    "normal": "normal",
    "euvolemic": "normal",
    "high": "high",
    "hypervolemic": "high",
    "overloaded": "high",
    "unknown": "unknown",
}


# Context fields given as one word from a small table: (table, what the message says is expected).
WORD_FIELDS: dict[str, tuple[Mapping[str, Any], str]] = {
    "volume": (VOLUME_WORDS, "one of low, normal, high, unknown"),
    "renin": (LEVEL_WORDS, "low, normal or high (read against your laboratory's range)"),
    "aldosterone": (LEVEL_WORDS, "low, normal or high (read against your laboratory's range)"),
    "diuretic_screen": (SCREEN_WORDS, "positive or negative"),
    "cortisol_excess": (YES_NO, "yes or no"),
}


def validate_patient(raw: Any, col: _Collector) -> Patient:
    if raw is None:
        return Patient()
    if not isinstance(raw, Mapping):
        col.problem("patient", f"expected a mapping, got a {type(raw).__name__}")
        return Patient()
    values: dict[str, Any] = {}
    bounds = {"age": (0, 120, "years"), "weight_kg": (1, 400, "kg"), "height_cm": (30, 260, "cm")}
    for key, item in raw.items():
        path = f"patient.{_key(key)}"
        if key not in PATIENT_KEYS:
            col.problem(path, _did_you_mean(str(key), PATIENT_KEYS))
        elif item is None:
            continue
        elif key == "sex":
            sex = SEX_WORDS.get(str(item).strip().lower())
            if sex is None:
                col.problem(path, f"{_shown(item)} is not female or male")
            values["sex"] = sex
        elif isinstance(item, bool) or not isinstance(item, int | float):
            col.problem(path, f"expected a number, got {_shown(item)}")
        else:
            low, high, unit = bounds[key]
            number = _finite(item)
            if number is None:
                too_large = f"is too large to be in {unit}" if isinstance(item, int) else "is not a finite number"
                col.problem(path, f"{_shown(item)} {too_large}")
            elif not low <= number <= high:
                col.problem(path, f"{_fmt(number)} {unit} is not plausible (expected {low} to {high})")
            else:
                values[key] = number
    age = values.get("age")
    if age is not None and age < ADULT_AGE:
        # Compensation rules, reference ranges and CKD-EPI 2021 were set in adults; a child's note
        # drafted from them would read as settled when it is not, so the case is refused.
        col.problem(
            "patient.age",
            f"{_fmt(age)} years: notegen's compensation rules and reference ranges are for adults "
            f"({ADULT_AGE} and over) only; no note is drafted",
        )
        del values["age"]
    return Patient(**values)


def _blood_pressure(raw: Any, col: _Collector) -> BloodPressure | None:
    systolic = diastolic = None
    if isinstance(raw, str):
        match = re.fullmatch(r"\s*(\d{2,3})\s*/\s*(\d{2,3})\s*(mm ?hg)?\s*", raw, re.IGNORECASE)
        if match:
            systolic, diastolic = int(match[1]), int(match[2])
    elif isinstance(raw, Mapping) and set(raw) == {"systolic", "diastolic"}:
        pair = [raw["systolic"], raw["diastolic"]]
        if all(isinstance(v, int | float) and not isinstance(v, bool) and _finite(v) is not None for v in pair):
            if not all(float(v).is_integer() for v in pair):
                # 118.6 is not silently cut to 118
                col.problem("context.bp", f"{_fmt(pair[0])}/{_fmt(pair[1])}: give whole numbers of mmHg")
                return None
            systolic, diastolic = int(pair[0]), int(pair[1])
    if systolic is None or diastolic is None:
        col.problem(
            "context.bp", f'{str(raw)[:40]!r} is not a blood pressure such as "168/98" or {{systolic, diastolic}}'
        )
        return None
    if not (40 <= systolic <= 300 and 20 <= diastolic <= 200 and diastolic < systolic):
        col.problem("context.bp", f"{systolic}/{diastolic} mmHg is not a plausible blood pressure")
        return None
    return BloodPressure(systolic=systolic, diastolic=diastolic)


def _medication(raw: Any, path: str, col: _Collector) -> Medication | None:
    hours: float | None = None
    if isinstance(raw, Mapping):
        extra = set(raw) - {"name", "last_dose_hours"}
        if extra or not isinstance(raw.get("name"), str):
            col.problem(path, "a medication is a name, or a mapping {name, last_dose_hours}")
            return None
        name = raw["name"]
        hours_raw = raw.get("last_dose_hours")
        if hours_raw is not None:
            if isinstance(hours_raw, bool) or not isinstance(hours_raw, int | float) or not 0 <= hours_raw <= 24 * 365:
                col.problem(
                    f"{path}.last_dose_hours", f"{_shown(hours_raw)} is not a number of hours since the last dose"
                )
                return None
            hours = float(hours_raw)
    elif isinstance(raw, str):
        name = raw
    else:
        col.problem(path, f"expected a medication name, got {_shown(raw)}")
        return None
    name = name.strip()
    if not name or len(name) > MAX_TEXT:
        col.problem(path, "a medication name must be 1 to 500 characters")
        return None
    if (unsafe := _unsafe_character(name)) is not None:
        col.problem(path, unsafe)
        return None
    info = _lookup_drug(name)
    if info is None and (meant := near_miss(name)) is not None:
        col.problem(
            path,
            f"{_shown(name)} is not a medication notegen knows; did you mean {meant!r}? Correct the spelling "
            "(a misspelt diuretic would leave the reasoning)",
        )
        return None
    if info is None:  # named in one notice with the others (`_not_recognised`)
        return Medication(name=name, last_dose_hours=hours)
    return Medication(name=name, generic=info.generic, classes=info.classes, last_dose_hours=hours)


def _not_recognised(kind: str, names: list[str], col: _Collector) -> None:
    """One notice for every name of a kind not in the vocabulary: a line each would crowd the note."""
    if len(names) == 1:
        col.notices.append(f"{kind} {names[0]!r} is not recognised; it is listed but not reasoned with")
    elif names:
        quoted = join_words(repr(name) for name in dict.fromkeys(names))
        col.notices.append(f"{kind}s {quoted} are not recognised; they are listed but not reasoned with")


def _lookup_drug(name: str) -> vocab.DrugInfo | None:
    table = shipped_knowledge().medications
    words = vocab.fold(name).split(" ")
    # "furosemide 40 mg IV twice daily" -> the longest leading run of words that names a drug
    for end in range(min(len(words), 4), 0, -1):
        info = table.get(" ".join(words[:end]))
        if info is not None:
            return info
    return None


_CONTEXT_ALIASES = {
    "medications": "meds", "medication": "meds", "drugs": "meds", "med": "meds", "medicines": "meds",
    "blood pressure": "bp", "symptoms": "findings", "finding": "findings", "volume status": "volume",
}


def validate_context(raw: Any, col: _Collector) -> Context:
    if raw is None:
        return Context()
    if not isinstance(raw, Mapping):
        col.problem("context", f"expected a mapping, got a {type(raw).__name__}")
        return Context()
    values: dict[str, Any] = {}
    for key, item in raw.items():
        path = f"context.{_key(key)}"
        if key not in CONTEXT_KEYS:
            col.problem(path, _did_you_mean(str(key), CONTEXT_KEYS, _CONTEXT_ALIASES))
        elif item is None:
            continue
        elif key == "bp":
            values["bp"] = _blood_pressure(item, col)
        elif key == "blood_product_units":
            whole = isinstance(item, int) and not isinstance(item, bool)
            if not whole or not 0 <= item <= MAX_BLOOD_PRODUCT_UNITS:
                col.problem(
                    path, f"{_shown(item)} is not a whole number of units from 0 to {MAX_BLOOD_PRODUCT_UNITS}"
                )
            else:
                values["blood_product_units"] = item
        elif key in WORD_FIELDS:
            table, expected = WORD_FIELDS[key]
            word = item if isinstance(item, bool) and key == "cortisol_excess" else table.get(str(item).strip().lower())
            if word is None:
                col.problem(path, f"{_shown(item)} is not {expected}")
            else:
                values[key] = word
        elif key == "meds":
            items = [m.strip() for m in item.split(",")] if isinstance(item, str) else item
            if not isinstance(items, list):
                col.problem(path, "expected a list of medications")
                continue
            if len(items) > MAX_MEDICATIONS:
                col.problem(path, f"{len(items)} medications is more than the {MAX_MEDICATIONS} notegen reads")
                continue
            meds = [_medication(m, f"{path}[{i}]", col) for i, m in enumerate(items)]
            values["meds"] = tuple(m for m in meds if m is not None)
            _not_recognised("medication", [m.name for m in values["meds"] if m.generic is None], col)
        elif key == "findings":
            items = [f.strip() for f in item.split(",")] if isinstance(item, str) else item
            if not isinstance(items, list):
                col.problem(path, "expected a list of findings")
                continue
            found: list[str] = []
            unknown: list[str] = []
            table = shipped_knowledge().findings
            for i, text in enumerate(items):
                if not isinstance(text, str) or not text.strip() or len(text) > MAX_TEXT:
                    col.problem(f"{path}[{i}]", "a finding must be a short text such as vomiting")
                    continue
                if (unsafe := _unsafe_character(text)) is not None:
                    col.problem(f"{path}[{i}]", unsafe)
                    continue
                info = table.get(vocab.fold(text))
                if info is None:
                    unknown.append(text)
                elif info.id not in found:
                    found.append(info.id)
            values["findings"] = tuple(found)
            _not_recognised("finding", unknown, col)
    return Context(**values)
