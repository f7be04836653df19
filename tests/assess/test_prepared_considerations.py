"""The shipped considerations checked ahead (as the wheel's build hook does) select exactly as from their YAML."""

from __future__ import annotations

import json
import pickle
import shutil
from collections.abc import Iterator
from pathlib import Path

import pytest

from notegen.assess import considerations
from notegen.assess.management_file import PREPARED_NAME, Checked, check_file, prepare_considerations
from notegen.engine import load_pack
from notegen.errors import RulePackError
from notegen.intake.read import read_case
from notegen.knowledge import Knowledge
from notegen.knowledge.prepared_pack import load_prepared
from notegen.pipeline import Drafter, DraftOptions
from notegen.resources import rules_dir

SAMPLES = sorted((Path(__file__).resolve().parents[2] / "samples").glob("*.yaml"))


@pytest.fixture
def rules_copy(tmp_path: Path) -> Path:
    copy = tmp_path / "rules"
    shutil.copytree(rules_dir(), copy)
    return copy


@pytest.fixture
def prepared(rules_copy: Path, tmp_path: Path) -> Path:
    target = tmp_path / "prepared"
    prepare_considerations(rules_copy, target)
    return target


@pytest.fixture
def fresh_cache() -> Iterator[None]:
    considerations._load.cache_clear()
    yield
    considerations._load.cache_clear()


def test_the_prepared_file_is_the_checked_yaml(rules_copy: Path, prepared: Path) -> None:
    kept = load_prepared(PREPARED_NAME, rules_copy, prepared)
    assert isinstance(kept, Checked)
    packs = load_pack([rules_copy / "alkalosis"]), load_pack([rules_copy / "acidosis"])
    checked, problems = check_file((rules_copy,), *packs)
    assert problems == [] and checked is not None
    assert kept.merged == checked.merged  # every item, with its file and line
    assert kept.groups == checked.groups
    assert dict(kept.catalogue) == dict(checked.catalogue)
    assert kept.acidosis_causes == checked.acidosis_causes
    assert len(kept.acidosis_causes) == len(packs[1].causes) > 0  # the acidosis pack's causes are carried


@pytest.mark.parametrize("output_format", ["markdown", "json"])
def test_every_sample_drafts_the_same_with_the_prepared_considerations(
    monkeypatch: pytest.MonkeyPatch, tmp_path: Path, fresh_cache: None, output_format: str
) -> None:
    options = DraftOptions(output_format=output_format, explain=True)
    cases = [read_case(str(path)) for path in SAMPLES]
    monkeypatch.setenv("NOTEGEN_PREPARED_PACK", "0")
    from_yaml = [Drafter().draft(case, options) for case in cases]
    monkeypatch.delenv("NOTEGEN_PREPARED_PACK")
    considerations._load.cache_clear()
    target = tmp_path / "shipped-prepared"
    prepare_considerations(rules_dir(), target)
    monkeypatch.setattr("notegen.resources.prepared_packs_dir", lambda: target)
    used: list[object] = []
    original = considerations._prepared
    monkeypatch.setattr(considerations, "_prepared", lambda: used.append(original()) or used[-1])
    from_prepared = [Drafter().draft(case, options) for case in cases]
    assert used and isinstance(used[0], Checked)  # the prepared file was there and used
    for path, expected, got in zip(SAMPLES, from_yaml, from_prepared, strict=True):
        assert got == expected, path.name


def test_an_edited_rule_file_anywhere_falls_back_to_the_yaml(rules_copy: Path, prepared: Path) -> None:
    assert load_prepared(PREPARED_NAME, rules_copy, prepared) is not None
    # the catalogue reads the vocabulary too, so a file outside management.yaml and the packs counts
    findings = rules_copy / "vocabulary" / "findings.yaml"
    findings.write_text(findings.read_text(encoding="utf-8") + "\n# edited after the build\n", encoding="utf-8")
    assert load_prepared(PREPARED_NAME, rules_copy, prepared) is None


def test_another_version_falls_back_to_the_yaml(rules_copy: Path, prepared: Path) -> None:
    key_file = prepared / f"{PREPARED_NAME}.json"
    key = json.loads(key_file.read_text(encoding="utf-8"))
    key["pydantic"] = "0.0.0"
    key_file.write_text(json.dumps(key), encoding="utf-8")
    assert load_prepared(PREPARED_NAME, rules_copy, prepared) is None


@pytest.mark.parametrize("damage", ["no key", "bad key", "no pickle", "cut pickle", "not a pickle"])
def test_a_damaged_preparation_is_not_used(damage: str, rules_copy: Path, prepared: Path) -> None:
    pickled, key = prepared / f"{PREPARED_NAME}.pickle", prepared / f"{PREPARED_NAME}.json"
    if damage == "no key":
        key.unlink()
    elif damage == "bad key":
        key.write_text("{", encoding="utf-8")
    elif damage == "no pickle":
        pickled.unlink()
    elif damage == "cut pickle":
        pickled.write_bytes(pickled.read_bytes()[:100])
    else:
        pickled.write_bytes(b"not a pickle")
    assert load_prepared(PREPARED_NAME, rules_copy, prepared) is None


def test_something_else_in_the_pickle_is_not_used(
    prepared: Path, monkeypatch: pytest.MonkeyPatch, fresh_cache: None
) -> None:
    (prepared / f"{PREPARED_NAME}.pickle").write_bytes(pickle.dumps({"considerations": []}))
    monkeypatch.setattr("notegen.resources.prepared_packs_dir", lambda: prepared)
    monkeypatch.setattr(considerations, "_shipped_folder", lambda: prepared.parent / "rules")
    assert considerations._prepared() is None


def test_a_broken_shipped_file_stops_the_build(rules_copy: Path, tmp_path: Path) -> None:
    management = rules_copy / "management.yaml"
    management.write_text(
        management.read_text(encoding="utf-8").replace("{fact: volume, is: low}", "{fact: no_such_fact, is: low}"),
        encoding="utf-8",
    )
    with pytest.raises(RulePackError, match="no_such_fact"):
        prepare_considerations(rules_copy, tmp_path / "prepared")
    assert not (tmp_path / "prepared" / f"{PREPARED_NAME}.pickle").exists()


def test_a_service_folder_is_always_read_from_its_yaml(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, fresh_cache: None
) -> None:
    target = tmp_path / "shipped-prepared"
    prepare_considerations(rules_dir(), target)
    monkeypatch.setattr("notegen.resources.prepared_packs_dir", lambda: target)
    asked: list[bool] = []
    monkeypatch.setattr(considerations, "_prepared", lambda: asked.append(True))
    service = tmp_path / "service"
    service.mkdir()
    (service / "management.yaml").write_text("considerations: []\n", encoding="utf-8")
    loaded = considerations.load_considerations([service])
    assert loaded.items  # the shipped ones, read from the YAML and laid under the service's (empty) file
    assert asked == []


def test_a_note_without_an_acidosis_loads_no_acidosis_pack(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, fresh_cache: None
) -> None:
    # The considerations name the acidosis causes; prepared, they carry the ids and need not load the pack.
    target = tmp_path / "shipped-prepared"
    prepare_considerations(rules_dir(), target)
    monkeypatch.setattr("notegen.resources.prepared_packs_dir", lambda: target)
    knowledge = Knowledge()
    monkeypatch.setattr("notegen.knowledge.shipped_knowledge", lambda: knowledge)
    case = read_case(str(SAMPLES[0].with_name("gastric_suction.yaml")))
    note = Drafter().draft(case, DraftOptions(output_format="markdown"))
    assert "alkalosis" in note
    assert "alkalosis_pack" in vars(knowledge)
    assert "acidosis_pack" not in vars(knowledge)
