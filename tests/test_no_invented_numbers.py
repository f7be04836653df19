"""No number in a drafted note is invented, and no value given is lost (checked on the Markdown).

Nothing lost: every value of the case, as reported, appears in the note with its worksheet (the values table), to
the decimals reported (three at most: the note prints no more).

Every number in the note must be one of these, at the precision the note shows it (a figure
shown with d decimals matches a value within half a unit of its last decimal):

1. MEASURED: the case as validated: each value as reported and as converted
   (`Case.measurements`), patient age, weight and height, blood pressure, hours since a
   dose, and the dates and times of results.
2. COMPUTED: every number the assessment holds: calculations (value and allowed range),
   the acid-base reading (values used, expected ranges, reference bounds, gaps) and the
   facts quoted as evidence; each comes from a named formula in notegen/calculations.py
   or from the reading, and is a number in the JSON output too.
3. WORKING: numbers in the text the calculation core writes beside each result: formula,
   inputs, note and unit (e.g. "mL/min/1.73 m2", "0.2 x weight x (100 - Cl)").
4. SETTINGS: the values of rules/acid_base.yaml and of the rule pack's settings, as loaded.
5. CITATIONS: numbers inside source citations (year, volume, page, table) of the settings,
   the rule pack files and the assessment's `source` fields.
6. LAYOUT: the numbers of a Markdown ordered list ("1. ").
7. QUOTED: published figures quoted in a fixed sentence beside their source, listed in
   `QUOTED_FIGURES` with where each comes from.
8. INPUT TEXT: numbers inside text the user wrote (the case label, medication names such as
   "furosemide 40 mg") and inside the case's notices, which name what was given but not used
   (a LOINC code of an unused FHIR result, the number of serial results, the window in hours), and
   in the input's resources outside the assessment (`Case.outside`, listed in the worksheet).

Numbers inside words (PaCO2, HCO3, CKD-EPI's "m2") are names, not numbers, and are skipped.
"""

from __future__ import annotations

import json
import re
from collections.abc import Iterator
from pathlib import Path
from typing import Any

import pytest
import yaml
from hypothesis import given
from test_properties import _profile, case_file

from notegen.assess.model import Assessment
from notegen.case.model import Case
from notegen.case.validation import validate_case
from notegen.intake.read import read_case
from notegen.knowledge.settings import SETTING_NAMES
from notegen.pipeline import Drafter, DraftOptions

ROOT = Path(__file__).parent.parent
SAMPLES = sorted((ROOT / "samples").glob("*.yaml"))
DRAFTER = Drafter()

# A number not glued to a word or to another number: "7.48", "-2", "45" in "45–49"; not "CO2".
_NUMBER = re.compile(r"(?<![\w.])-?\d+(?:\.\d+)?(?![\w]|\.\d)")
_LIST_NUMBER = re.compile(r"(?m)^\s*\d+\.\s")
_WORKING_TEXT = re.compile(r"\.(source|formula|unit|note|rule)$|\.inputs\.")

# 7. QUOTED: each figure, and the sentence and source it is quoted from.
QUOTED_FIGURES: dict[float, str] = {
    -0.03: "venous caution, notegen/acidbase.py: venous minus arterial pH (Bloom et al., Eur J Emerg Med 2014)",
    1.0: "venous caution, notegen/acidbase.py: venous minus arterial bicarbonate +1 mmol/L (Bloom et al., 2014)",
    -20.0: "venous caution, notegen/acidbase.py: PCO2 limits of agreement -20 to +26 mmHg (Kelly, Emerg Med J 2016)",
    26.0: "venous caution, notegen/acidbase.py: PCO2 limits of agreement -20 to +26 mmHg (Kelly, Emerg Med J 2016)",
}


def _numbers(text: str) -> list[float]:
    return [float(token) for token in _NUMBER.findall(text)]


def _leaves(value: Any, path: str = "") -> Iterator[tuple[str, Any]]:
    if isinstance(value, dict):
        for key, item in value.items():
            yield from _leaves(item, f"{path}.{key}")
    elif isinstance(value, list):
        for index, item in enumerate(value):
            yield from _leaves(item, f"{path}[{index}]")
    else:
        yield path, value


def _fixed_numbers(drafter: Drafter) -> set[float]:
    """4. SETTINGS and 5. CITATIONS of the shipped data, the same for every case."""
    allowed: set[float] = set(QUOTED_FIGURES)
    for name in SETTING_NAMES:  # the numeric settings (the date order is a word)
        setting = getattr(drafter.settings, name)
        allowed.add(float(setting.value))
        allowed |= {*_numbers(setting.source), *_numbers(setting.unit)}
    for pack in (drafter.alkalosis_pack, drafter.acidosis_pack):
        for value, unit in pack.settings.values():
            allowed |= {float(value), *_numbers(unit or "")}
        for folder in pack.dirs:
            for path in sorted(Path(folder).glob("*.yaml")):
                for where, text in _leaves(yaml.safe_load(path.read_text(encoding="utf-8"))):
                    if where.endswith(".source") and isinstance(text, str):
                        allowed |= set(_numbers(text))
    return allowed


FIXED = _fixed_numbers(DRAFTER)


def allowed_numbers(assessment: Assessment) -> set[float]:
    """Every number the note may show for this assessment (categories 1 to 5, 7 and 8)."""
    allowed = set(FIXED)
    for path, value in _leaves(json.loads(assessment.model_dump_json(by_alias=True))):
        if isinstance(value, int | float) and not isinstance(value, bool):
            allowed.add(float(value))  # 1. MEASURED and 2. COMPUTED
        elif isinstance(value, str) and _WORKING_TEXT.search(path):
            allowed |= set(_numbers(value))  # 3. WORKING and 5. CITATIONS
        elif isinstance(value, str) and path.endswith(".taken_at"):
            allowed |= {abs(n) for n in _numbers(value.replace("T", " "))}  # 1. MEASURED: dates and times of results
    case = assessment.case
    outside = (resource.text for resource in case.outside)
    for text in (case.label or "", *(med.name for med in case.context.meds), *case.notices, *outside):
        allowed |= {*_numbers(text), *(abs(n) for n in _numbers(text))}  # 8. INPUT TEXT
    return allowed


def invented_numbers(note: str, allowed: set[float]) -> list[str]:
    """The numbers of `note` that match no allowed value at their shown precision, with context."""
    text = _LIST_NUMBER.sub(" ", note)  # 6. LAYOUT
    found = []
    for match in _NUMBER.finditer(text):
        token = match.group()
        decimals = len(token.split(".")[1]) if "." in token else 0
        value, half_unit = float(token), 0.5 * 10**-decimals + 1e-9
        if not any(abs(candidate - value) <= half_unit for candidate in allowed):
            found.append(f"{token!r} in ...{text[max(0, match.start() - 50) : match.end() + 10]!r}")
    return found


def _decimals(value: float) -> int:
    text = repr(value)
    return 0 if text.endswith(".0") or "." not in text else len(text.split(".")[1])


def lost_values(note: str, case: Case) -> list[str]:
    """The case's values, as reported, that the note does not show to the decimals reported (three at most:
    the note prints no more)."""
    shown = {float(token) for token in _NUMBER.findall(note)}
    return [
        f"{m.field} {m.reported_value:g} {m.reported_unit}".strip()
        for m in case.measurements
        if not any(
            abs(value - m.reported_value) <= 0.5 * 10 ** -min(_decimals(m.reported_value), 3) + 1e-9 for value in shown
        )
    ]


def _check(case: Case, options: DraftOptions) -> list[str]:
    note = DRAFTER.draft(case, options)
    invented = invented_numbers(note, allowed_numbers(DRAFTER.assess(case, explain=options.explain)))
    return invented + [f"lost: {value}" for value in lost_values(note, case)]


@pytest.mark.parametrize("explain", [False, True], ids=["note", "explain"])
@pytest.mark.parametrize("sample", [*SAMPLES, ROOT / "tests/fixtures/inputs/bundle_full.json"], ids=lambda p: p.stem)
def test_sample_notes_hold_no_invented_number_and_lose_no_value(sample: Path, explain: bool) -> None:
    assert _check(read_case(str(sample)), DraftOptions(explain=explain, worksheet=True)) == []


@_profile(150)
@given(data=case_file())
def test_generated_notes_hold_no_invented_number_and_lose_no_value(data: dict[str, Any]) -> None:
    case = validate_case(data, filename="generated.yaml")
    assert _check(case, DraftOptions(explain=True, worksheet=True)) == []


def test_the_check_finds_a_number_that_was_not_given_or_computed() -> None:
    case = read_case(str(ROOT / "samples/gastric_suction.yaml"))
    note = DRAFTER.draft(case, DraftOptions(worksheet=True))
    allowed = allowed_numbers(DRAFTER.assess(case))
    assert invented_numbers(note, allowed) == []
    forged = note.replace("Anion gap", "Anion gap 97.3 mmol/L, earlier", 1)
    assert [found.split(" in ")[0] for found in invented_numbers(forged, allowed)] == ["'97.3'"]
    # a value shown one decimal off is caught too: the potassium 3.2 as 3.4
    assert invented_numbers(note.replace("3.2 mmol/L", "3.4 mmol/L"), allowed) != []
    # and a value dropped from the note is caught as lost
    assert lost_values(note, case) == []
    assert lost_values(note.replace("3.2", "three point two"), case) == ["chem.k 3.2 mmol/L"]


def test_a_value_is_rounded_the_same_way_in_the_reading_and_in_the_tables() -> None:
    # regression: 6 + 2.5 x (4.0 - 3.5) = 7.25 (the gap on the panel total CO2 35) must read "7.3" in
    # the calculations and in the reading's steps alike (Python's round works on the binary value,
    # and would give "7.2"); both round half up
    case = read_case(str(ROOT / "samples/alkali_kidney_disease.yaml"))
    assessment = DRAFTER.assess(case)
    assert assessment.calculations["anion_gap_corrected"].value == 7.25
    assert any("7.3 mmol/L corrected for albumin" in step for step in assessment.acid_base.findings)
    note = DRAFTER.draft(case, DraftOptions(explain=True, worksheet=True))
    assert "7.2 mmol/L" not in note and "7.3 mmol/L" in note
