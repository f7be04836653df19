"""The bad-input corpus (tests/bad_inputs/): every file gives its exact message and exit status.

Refused input: exit 2, the exact message on stderr, nothing on stdout. Input with values
missing still drafts, and the note states the gap. No run shows a traceback.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pytest
import yaml
from typer.testing import CliRunner

from notegen.case.validation import validate_case
from notegen.cli.app import app
from notegen.errors import CaseValueError

CORPUS = Path(__file__).parent / "bad_inputs"
MANIFEST: list[dict[str, Any]] = yaml.safe_load((CORPUS / "manifest.yaml").read_text(encoding="utf-8"))
runner = CliRunner()


def _fill(text: str, file: Path | None) -> str:
    return text.replace("{file}", str(file)).replace("{folder}", str(CORPUS))


@pytest.mark.parametrize("entry", MANIFEST, ids=[entry["id"] for entry in MANIFEST])
def test_corpus_entry(entry: dict[str, Any]) -> None:
    file = CORPUS / entry["file"] if "file" in entry else None
    args = ["draft", *([str(file)] if file else []), *(_fill(arg, file) for arg in entry.get("args", []))]
    result = runner.invoke(app, args)
    # typer ends every command with SystemExit; anything else escaped the error handling
    assert result.exception is None or isinstance(result.exception, SystemExit), repr(result.exception)
    assert "Traceback" not in result.stdout + result.stderr
    assert result.exit_code == entry["exit"], result.stderr
    if entry["exit"] != 0:
        assert result.stderr == _fill(entry["stderr"], file)
        assert result.stdout == ""
    else:
        assert result.stderr == _fill(entry.get("stderr", ""), file)
        for text in entry.get("note", []):
            assert text in result.stdout
        for text in entry.get("absent", []):
            assert text not in result.stdout


def test_every_corpus_file_has_an_entry() -> None:
    named = {entry["file"] for entry in MANIFEST if "file" in entry}
    named |= {Path(arg).name for entry in MANIFEST for arg in entry.get("args", []) if "{folder}" in arg}
    on_disk = {path.name for path in CORPUS.iterdir()} - {"manifest.yaml"}
    assert on_disk - named == set()
    assert {name for name in named - on_disk if name != "does_not_exist.yaml"} == set()


def test_ids_are_unique() -> None:
    ids = [entry["id"] for entry in MANIFEST]
    assert len(ids) == len(set(ids))


# Values that a YAML or JSON file cannot deliver any more (the loader refuses them first) but
# a caller of the library can: each once escaped as a Python exception instead of a message.
LIBRARY_CASES = [
    ("integer-too-large-for-a-float", {"chem": {"na": 10**400}}, "field `chem.na`: is too large to be a lab value"),
    (
        "integer-too-large-in-a-value-mapping",
        {"chem": {"na": {"value": 10**400, "unit": "mmol/L"}}},
        "field `chem.na`: is too large to be a lab value",
    ),
    ("age-too-large", {"patient": {"age": 10**400}}, "is too large to be in years"),
    (
        "weight-infinite",
        {"patient": {"weight_kg": float("inf")}},
        "field `patient.weight_kg`: inf is not a finite number",
    ),
    (
        "blood-pressure-infinite",
        {"context": {"bp": {"systolic": float("inf"), "diastolic": 80}}},
        "field `context.bp`: \"{'systolic': inf, 'diastolic': 80}\" is not a blood pressure",
    ),
    (
        "serial-times-year-9999",
        {"chem": [{"taken_at": "2026-03-01T06:00", "na": 132}, {"taken_at": "9999-12-31T23:59", "na": 134}]},
        "field `chem[1].taken_at`: 9999-12-31T23:59:00 is not a plausible result time (year 9999)",
    ),
]


@pytest.mark.parametrize(("data", "expected"), [c[1:] for c in LIBRARY_CASES], ids=[c[0] for c in LIBRARY_CASES])
def test_library_refuses_with_a_message(data: dict[str, Any], expected: str) -> None:
    with pytest.raises(CaseValueError) as info:
        validate_case(data, filename="case.yaml")
    assert expected in str(info.value)


def test_two_results_at_one_time_with_different_fields_merge() -> None:
    # regression: two arterial gases at one time, each with `sample`, crashed when merged
    case = validate_case(
        {
            "gas": [
                {"taken_at": "2026-03-01T06:00", "sample": "arterial", "ph": 7.49},
                {"taken_at": "2026-03-01T06:00", "sample": "arterial", "pco2": 48, "hco3": 36},
            ]
        }
    )
    assert (case.gas.ph, case.gas.pco2, case.gas.hco3, case.gas.sample) == (7.49, 48, 36, "arterial")
    assert case.earlier_gas == ()


def test_serial_results_with_offsets_are_ordered_by_instant() -> None:
    # 05:30 at UTC+02:00 is 03:30 UTC, earlier than 04:00 UTC: the 04:00 result is the latest
    case = validate_case(
        {
            "chem": [
                {"taken_at": "2026-03-01T04:00+00:00", "na": 134},
                {"taken_at": "2026-03-01T05:30+02:00", "na": 138},
            ]
        }
    )
    assert case.chem.na == 134 and case.earlier_chem[0].na == 138
