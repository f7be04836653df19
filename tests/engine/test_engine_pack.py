"""Loading packs: line numbers, layering a service's folder, and every load-time check."""

from __future__ import annotations

from pathlib import Path

import pytest

from notegen.engine import check_pack, load_pack
from notegen.errors import RulePackError

PACKS = Path(__file__).resolve().parents[1] / "fixtures" / "packs"
PLANTS = PACKS / "plants"
SERVICE = PACKS / "plants_service"
BROKEN = PACKS / "broken"


def test_fixture_pack_loads_clean() -> None:
    assert check_pack([PLANTS]) == []
    pack = load_pack([PLANTS])
    assert pack.id == "houseplant"
    assert [c.id for c in pack.causes] == ["underwatering", "overwatering", "low_light", "pests"]
    # Items remember where they were written.
    setting = next(s for s in pack.spec.settings if s.id == "soil_dry_below")
    assert setting.where == (str(PLANTS / "pack.yaml"), 33)


# (folder, file the problem is in, line, words of the message): one per kind of error.
BROKEN_CASES = [
    ("unknown_fact", "overlay.yaml", 6, "unknown fact `soil_wetness`"),
    ("unknown_cause", "overlay.yaml", 5, "names unknown cause `root_rot`"),
    ("unknown_test", "overlay.yaml", 2, "unknown id `moisture_prob` in `tests`"),
    ("unknown_setting", "overlay.yaml", 3, "unknown setting `light_too_low`"),
    ("duplicate_id", "b.yaml", 3, "duplicate id `sniff_test`"),
    ("unreachable_node", "overlay.yaml", 4, "node `orphan` cannot be reached"),
    ("threshold_without_unit", "overlay.yaml", 6, "threshold on `soil_moisture` has no unit; the fact is in %"),
    ("unit_mismatch", "overlay.yaml", 6, "is in h; the fact is in h/day"),
    ("yaml_syntax", "overlay.yaml", 4, "YAML syntax"),
    ("duplicate_key", "overlay.yaml", 4, "duplicate key `value`"),
    ("unknown_field", "overlay.yaml", 3, "`settings[soil_wet_above].vaule`: Extra inputs are not permitted"),
    ("bad_condition", "overlay.yaml", 5, "needs exactly one of"),
    ("loop", "overlay.yaml", 5, "node `soil_wet` loops back to `soil_dry`"),
]


@pytest.mark.parametrize(("folder", "filename", "line", "words"), BROKEN_CASES, ids=[c[0] for c in BROKEN_CASES])
def test_broken_packs_are_rejected_with_file_and_line(folder: str, filename: str, line: int, words: str) -> None:
    problems = check_pack([PLANTS, BROKEN / folder])
    expected_file = str(BROKEN / folder / filename)
    assert any(p[0] == expected_file and p[1] == line and words in p[2] for p in problems), problems
    with pytest.raises(RulePackError) as caught:
        load_pack([PLANTS, BROKEN / folder])
    assert f"{expected_file}:{line}: " in str(caught.value)
    assert caught.value.exit_code == 2


def test_every_problem_is_reported_at_once(tmp_path: Path) -> None:
    (tmp_path / "a.yaml").write_text(
        "factors:\n"
        "  - id: dim_room\n"
        "    when: {fact: lux, below: 3}\n"
        "tests:\n"
        "  - id: light_meter\n"
        "    provides: [lux]\n"
    )
    problems = check_pack([PLANTS, tmp_path])
    assert [(p[1], p[2]) for p in problems] == [
        (3, "unknown fact `lux`"),
        (6, "test `light_meter` provides unknown fact `lux`"),
    ]


def test_python_tags_are_refused(tmp_path: Path) -> None:
    (tmp_path / "evil.yaml").write_text("settings: !!python/object/apply:os.system ['true']\n")
    problems = check_pack([tmp_path])
    assert problems and problems[0][1] == 1 and "YAML" in problems[0][2]


def test_missing_or_empty_folder(tmp_path: Path) -> None:
    assert check_pack([tmp_path / "nope"]) == [(str(tmp_path / "nope"), None, "no such pack folder")]
    assert check_pack([tmp_path]) == [(str(tmp_path), None, "the folder holds no .yaml files")]
    assert check_pack([]) == [("<pack>", None, "no pack folder given")]


def test_overlay_changes_a_setting_wording_a_label_and_drops_an_item() -> None:
    assert check_pack([PLANTS, SERVICE]) == []
    base, layered = load_pack([PLANTS]), load_pack([PLANTS, SERVICE])
    assert base.settings["soil_dry_below"] == (20.0, "%")
    assert layered.settings["soil_dry_below"] == (30.0, "%")
    setting = next(s for s in layered.spec.settings if s.id == "soil_dry_below")
    assert setting.source == "our greenhouse protocol"
    node = next(n for n in layered.spec.trees[0].nodes if n.id == "needs_water")
    assert node.says is not None and node.says.startswith("Water today")
    assert node.consider == ("underwatering",)  # untouched fields stay
    pests = next(c for c in layered.spec.causes if c.id == "pests")
    assert pests.label == "insect pests"
    assert [e.id for e in pests.evidence.opposing] == []
    # The shipped folder itself is not changed by loading an overlay.
    assert [e.id for e in next(c for c in base.spec.causes if c.id == "pests").evidence.opposing] == ["no_pests"]


def test_an_overlay_cannot_drop_what_does_not_exist(tmp_path: Path) -> None:
    (tmp_path / "x.yaml").write_text("causes:\n  - id: root_rot\n    drop: true\n")
    assert check_pack([PLANTS, tmp_path]) == [
        (str(tmp_path / "x.yaml"), 2, "cannot drop `root_rot` from `causes`: no such id in the packs below")
    ]


def test_facts_settings_and_trees_share_one_namespace(tmp_path: Path) -> None:
    (tmp_path / "x.yaml").write_text("settings:\n  - id: drooping\n    value: 1\n    source: common practice\n")
    problems = check_pack([PLANTS, tmp_path])
    assert problems == [(str(tmp_path / "x.yaml"), 2, "setting `drooping` has the name of a fact; names must differ")]


def test_kind_checks_on_conditions(tmp_path: Path) -> None:
    (tmp_path / "x.yaml").write_text(
        "factors:\n"
        "  - id: a\n    group: stressors\n    label: a\n    says: a\n    source: common practice\n"
        "    when: {fact: drooping, below: 3}\n"
        "  - id: b\n    group: stressors\n    label: b\n    says: b\n    source: common practice\n"
        "    when: {fact: leaf_colour, is: purple}\n"
        "  - id: c\n    group: nowhere\n    label: c\n    says: '{nothing}'\n    source: common practice\n"
        "    when: {fact: watering_need, is: flooded}\n"
    )
    messages = [p[2] for p in check_pack([PLANTS, tmp_path])]
    assert "`below` needs a number; `drooping` is a boolean" in messages
    assert "`purple` is not a value of `leaf_colour` ['green', 'yellow', 'brown']" in messages
    assert "factor `c`: unknown factor group `nowhere`" in messages
    assert "placeholder `{nothing}` names no fact, setting or tree" in messages
    assert any("`flooded` is not an outcome of tree `watering_need`" in m for m in messages)


def test_form_of_must_name_another_cause(tmp_path: Path) -> None:
    # A cause that is a specific form of another (the alkalosis pack's calcium-alkali syndrome of alkali load).
    (tmp_path / "x.yaml").write_text(
        "causes:\n"
        "  - id: pot_bound\n    label: pot-bound roots\n    form_of: underwatering\n"
        "  - id: rootless\n    label: no roots\n    form_of: root_rot_typo\n"
        "  - id: selfish\n    label: itself\n    form_of: selfish\n"
    )
    messages = [p[2] for p in check_pack([PLANTS, tmp_path])]
    assert "cause `rootless`: form_of names no other cause `root_rot_typo`" in messages
    assert "cause `selfish`: form_of names no other cause `selfish`" in messages
    assert not any("pot_bound" in message for message in messages)
