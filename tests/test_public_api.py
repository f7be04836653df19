"""The public API: one call drafts a note from a mapping, a path or case-file text."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

import notegen

SAMPLES = Path(__file__).resolve().parent.parent / "samples"
GAS = {"gas": {"sample": "arterial", "ph": 7.5, "pco2": 48, "hco3": 36}}


def test_all_is_sorted_and_importable() -> None:
    assert notegen.__all__ == sorted(notegen.__all__)
    for name in notegen.__all__:
        assert getattr(notegen, name) is not None


def test_draft_from_a_mapping_gives_every_format() -> None:
    note = notegen.draft(GAS)
    assert isinstance(note, notegen.Note)
    assert "metabolic alkalosis" in note.markdown
    assert note.html.lstrip().startswith("<!DOCTYPE html>")
    text = note.text(width=60)
    assert "**" not in text and max(len(line) for line in text.splitlines()) <= 60
    data = note.to_dict()
    assert data["acid_base"]["primary"] == note.assessment.acid_base.primary
    assert json.loads(json.dumps(data)) == data


def test_draft_from_a_path_and_from_text_agree() -> None:
    path = SAMPLES / "gastric_suction.yaml"
    from_path = notegen.draft(path)
    from_text = notegen.draft(path.read_text(encoding="utf-8"))
    assert from_path.assessment.paragraph == from_text.assessment.paragraph != ""


def test_brief_note_is_shorter() -> None:
    path = SAMPLES / "gastric_suction.yaml"
    assert len(notegen.draft(path, brief=True).markdown) < len(notegen.draft(path).markdown)


def test_a_drafter_drafts_many_cases_with_one_load(drafter: notegen.Drafter, samples_dir: Path) -> None:
    notes = [drafter.note(p) for p in sorted(samples_dir.glob("*.yaml"))[:3]]
    assert all(n.markdown for n in notes)


def test_bad_case_data_is_an_input_error() -> None:
    with pytest.raises(notegen.InputError):
        notegen.draft({"gas": {"ph": "high"}})
    with pytest.raises(notegen.InputError):
        notegen.draft([1, 2])  # type: ignore[arg-type]


def test_the_package_ships_type_information() -> None:
    assert (Path(notegen.__file__).parent / "py.typed").is_file()
