"""The shipped rule pack validated ahead (as the wheel's build hook does) drafts exactly as from its YAML."""

from __future__ import annotations

import json
import pickle
import shutil
from dataclasses import fields
from pathlib import Path

import pytest

from notegen.engine import RulePack, load_pack
from notegen.errors import RulePackError
from notegen.intake.read import read_case
from notegen.knowledge import Knowledge
from notegen.knowledge import packs as packs_module
from notegen.knowledge.prepared_pack import MANIFEST, SHIPPED_PACKS, load_prepared_pack, prepare_pack
from notegen.pipeline import Drafter, DraftOptions
from notegen.resources import rules_dir

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = sorted((ROOT / "samples").glob("*.yaml"))
CLOSURES = {"test", "gate"}  # compiled condition closures: equal in behaviour, never `==`


@pytest.fixture
def pack_copy(tmp_path: Path) -> Path:
    """A copy of every shipped pack; the alkalosis pack's folder."""
    for name in SHIPPED_PACKS:
        shutil.copytree(rules_dir() / name, tmp_path / "rules" / name)
    return tmp_path / "rules" / "alkalosis"


@pytest.fixture
def prepared(pack_copy: Path, tmp_path: Path) -> Path:
    target = tmp_path / "prepared"
    for name in SHIPPED_PACKS:
        prepare_pack(pack_copy.parent / name, target, name)
    return target


def test_every_shipped_pack_is_prepared() -> None:
    # a pack folder is one with a trees file; each is prepared at build time (hatch_build.py)
    shipped = {folder.name for folder in rules_dir().iterdir() if (folder / "trees.yaml").is_file()}
    assert shipped == set(SHIPPED_PACKS)


def _comparable(value: object) -> object:
    """A compiled record with its closures left out, recursively; anything else as it is."""
    if isinstance(value, tuple):
        return tuple(_comparable(item) for item in value)
    names = getattr(type(value), "__dataclass_fields__", None)
    if names is None:
        return value
    return {f.name: _comparable(getattr(value, f.name)) for f in fields(value) if f.name not in CLOSURES}  # type: ignore[arg-type]


@pytest.mark.parametrize("name", SHIPPED_PACKS)
def test_the_prepared_pack_is_the_yaml_pack(pack_copy: Path, prepared: Path, name: str) -> None:
    from_yaml = load_pack([pack_copy.parent / name])
    from_prepared = load_prepared_pack(name, pack_copy.parent / name, prepared)
    assert isinstance(from_prepared, RulePack)
    assert from_prepared.spec == from_yaml.spec  # fields, and the file and line of each item
    for item in fields(RulePack):
        if item.name != "spec":
            prepared_value, yaml_value = getattr(from_prepared, item.name), getattr(from_yaml, item.name)
            assert _comparable(prepared_value) == _comparable(yaml_value), item.name


@pytest.mark.parametrize("output_format", ["markdown", "json"])
def test_every_sample_drafts_the_same_from_the_prepared_pack(
    prepared: Path, monkeypatch: pytest.MonkeyPatch, output_format: str
) -> None:
    options = DraftOptions(output_format=output_format, explain=True)
    from_yaml = Drafter()
    from_yaml.knowledge = Knowledge()
    monkeypatch.setattr("notegen.resources.prepared_packs_dir", lambda: prepared)
    monkeypatch.setattr(packs_module, "pack_dirs", lambda name, dirs=(): [prepared.parent / "rules" / name, *dirs])
    from_prepared = Drafter()
    from_prepared.knowledge = Knowledge()
    assert from_prepared.knowledge.alkalosis_pack.dirs == (prepared.parent / "rules" / "alkalosis",)
    assert from_prepared.knowledge.acidosis_pack.dirs == (prepared.parent / "rules" / "acidosis",)
    for path in SAMPLES:
        case = read_case(str(path))
        assert from_prepared.draft(case, options) == from_yaml.draft(case, options), path.name


def _edit_manifest(prepared: Path, key: str, value: str) -> None:
    manifest = json.loads((prepared / MANIFEST).read_text(encoding="utf-8"))
    manifest["packs"]["alkalosis"][key] = value
    (prepared / MANIFEST).write_text(json.dumps(manifest), encoding="utf-8")


@pytest.mark.parametrize("key", ["notegen", "pydantic", "python", "format"])
def test_another_version_falls_back_to_the_yaml(key: str, pack_copy: Path, prepared: Path) -> None:
    assert load_prepared_pack("alkalosis", pack_copy, prepared) is not None
    _edit_manifest(prepared, key, "0.0.0")
    assert load_prepared_pack("alkalosis", pack_copy, prepared) is None


def test_an_edited_pack_file_falls_back_to_the_yaml(pack_copy: Path, prepared: Path) -> None:
    trees = pack_copy / "trees.yaml"
    trees.write_text(trees.read_text(encoding="utf-8") + "\n# edited after the build\n", encoding="utf-8")
    assert load_prepared_pack("alkalosis", pack_copy, prepared) is None


def test_a_file_added_to_the_pack_falls_back_to_the_yaml(pack_copy: Path, prepared: Path) -> None:
    (pack_copy / "more.yaml").write_text("facts: []\n", encoding="utf-8")
    assert load_prepared_pack("alkalosis", pack_copy, prepared) is None


@pytest.mark.parametrize("damage", ["no manifest", "bad manifest", "no pickle", "bad pickle", "not a spec"])
def test_a_damaged_preparation_falls_back_to_the_yaml(damage: str, pack_copy: Path, prepared: Path) -> None:
    if damage == "no manifest":
        (prepared / MANIFEST).unlink()
    elif damage == "bad manifest":
        (prepared / MANIFEST).write_text("{", encoding="utf-8")
    elif damage == "no pickle":
        (prepared / "alkalosis.pickle").unlink()
    elif damage == "bad pickle":
        (prepared / "alkalosis.pickle").write_bytes(b"not a pickle")
    else:
        (prepared / "alkalosis.pickle").write_bytes(pickle.dumps({"pack": "alkalosis"}))
    assert load_prepared_pack("alkalosis", pack_copy, prepared) is None


def test_it_can_be_turned_off(pack_copy: Path, prepared: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("NOTEGEN_PREPARED_PACK", "0")
    assert load_prepared_pack("alkalosis", pack_copy, prepared) is None


def test_no_preparation_in_a_source_checkout(pack_copy: Path) -> None:
    assert load_prepared_pack("alkalosis", pack_copy, None) is None


def test_a_service_overlay_is_always_read_from_the_yaml(
    prepared: Path, monkeypatch: pytest.MonkeyPatch, tmp_path: Path
) -> None:
    calls: list[str] = []

    def spy(name: str, folder: Path, where: Path | None) -> RulePack | None:
        calls.append(name)
        return load_prepared_pack(name, folder, where)

    monkeypatch.setattr("notegen.knowledge.prepared_pack.load_prepared_pack", spy)
    monkeypatch.setattr("notegen.resources.prepared_packs_dir", lambda: prepared)
    service = tmp_path / "service" / "alkalosis"
    service.mkdir(parents=True)
    (service / "extra.yaml").write_text(
        "settings:\n  - id: service_only_setting\n    value: 1\n    source: common practice\n", encoding="utf-8"
    )
    layered = packs_module.load_rule_pack("alkalosis", (tmp_path / "service",))
    assert calls == []
    assert "service_only_setting" in layered.settings
    packs_module.load_rule_pack("alkalosis")
    assert calls == ["alkalosis"]


def test_a_broken_pack_stops_the_build(pack_copy: Path, tmp_path: Path) -> None:
    trees = pack_copy / "trees.yaml"
    trees.write_text(trees.read_text(encoding="utf-8").replace("if_true:", "if_ture:", 1), encoding="utf-8")
    with pytest.raises(RulePackError):
        prepare_pack(pack_copy, tmp_path / "prepared", "alkalosis")
    assert not (tmp_path / "prepared" / "alkalosis.pickle").exists()


def test_the_pack_is_recorded_under_the_path_it_was_given(prepared: Path, pack_copy: Path) -> None:
    spec = pickle.loads((prepared / "alkalosis.pickle").read_bytes())
    assert spec.trees[0].where[0].startswith(str(pack_copy))
