"""Every notegen error crosses to another process whole (`draft --jobs` returns refusals from workers)."""

from __future__ import annotations

import pickle

import pytest

from notegen.errors import (
    CaseFileError,
    CaseValueError,
    InputError,
    NotegenError,
    NothingToAssessError,
    PasteError,
    RulePackError,
    TemplateError,
    UsageError,
)

ERRORS = [
    NotegenError("something unforeseen"),
    InputError("bed01.yaml: no case"),
    CaseFileError("not valid YAML", filename="bed02.yaml", line=2, column=5),
    CaseValueError([("chem.k", "25 mmol/L is not a plausible potassium")], filename="cases.jsonl:3"),
    CaseValueError([("gas.ph", "too high"), ("chem.na", "missing unit")], origins={"gas.ph": "paste line 2"}),
    PasteError("unknown analyte", line=4, source="paste"),
    NothingToAssessError("ward/bed3.yaml"),
    UsageError("--jobs -1: give a number of processes"),
    RulePackError([("trees.yaml", 12, "unknown fact")]),
    TemplateError("undefined name", template="note.md.j2", line=3),
]


@pytest.mark.parametrize("error", ERRORS, ids=lambda error: type(error).__name__)
def test_an_error_keeps_its_class_message_and_fields(error: NotegenError) -> None:
    copy = pickle.loads(pickle.dumps(error))
    assert type(copy) is type(error)
    assert str(copy) == str(error) and copy.args == error.args
    assert vars(copy) == vars(error)  # problems, filename, line, ...: what a JSON Lines error object reads
    assert copy.exit_code == error.exit_code
