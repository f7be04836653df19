"""A pack test's optional `suggest_when`: held back where it is false, kept where true or undecided."""

from __future__ import annotations

from pathlib import Path

import pytest

from notegen.engine import check_pack, load_pack, walk
from notegen.engine.facts import BooleanFact, MissingFact, NumberFact

# A generic pack: a cause whose tier a test's fact would change, and a gate fact `worth_it`.
PACK = (
    "pack: {id: gated, title: gated}\n"
    "facts: [{id: level, kind: number, unit: u}, {id: worth_it, kind: boolean}, {id: seen, kind: boolean}]\n"
    "settings: [{id: level_high_from, value: 5, unit: u, source: common practice}]\n"
    "causes:\n"
    "  - id: thing\n    label: thing\n    evidence:\n"
    "      for:\n"
    "        - {id: high, when: {fact: level, at_least: level_high_from}, strength: strong, says: high,"
    " source: common practice}\n"
    "        - {id: seen_it, when: {fact: seen, is: true}, strength: weak, says: seen, source: common practice}\n"
    "      against:\n"
    "        - {id: low, when: {fact: level, below: level_high_from}, strength: strong, says: low,"
    " source: common practice}\n"
    "tests:\n"
    "  - id: level_test\n    label: level test\n    provides: [level]\n    source: common practice\n"
    "    suggest_when: {any: [{fact: worth_it, is: true}, {fact: seen, is: true}]}\n"
)


@pytest.fixture(scope="module")
def gated(tmp_path_factory: pytest.TempPathFactory) -> object:
    folder = tmp_path_factory.mktemp("gated")
    (folder / "pack.yaml").write_text(PACK)
    return load_pack([folder])


@pytest.mark.parametrize(
    ("worth_it", "seen", "suggested"),
    [
        (BooleanFact(True), BooleanFact(False), True),
        (BooleanFact(False), BooleanFact(True), True),
        (BooleanFact(False), BooleanFact(False), False),
        # Undecided: a missing value never hides a test.
        (MissingFact("not measured"), BooleanFact(False), True),
    ],
    ids=["true", "other-branch-true", "false-held-back", "undecided-kept"],
)
def test_suggest_when_holds_back_only_where_false(
    gated: object, worth_it: object, seen: object, suggested: bool
) -> None:
    result = walk(gated, {"worth_it": worth_it, "seen": seen})  # type: ignore[arg-type]
    assert [s.test for s in result.suggestions] == (["level_test"] if suggested else [])


def test_without_suggest_when_the_test_follows_the_usual_rule(tmp_path: Path) -> None:
    (tmp_path / "pack.yaml").write_text(PACK.split("    suggest_when")[0])
    pack = load_pack([tmp_path])
    result = walk(pack, {"worth_it": BooleanFact(False), "seen": BooleanFact(False)})
    assert [s.test for s in result.suggestions] == ["level_test"]


def test_a_present_value_is_not_asked_for_even_where_the_gate_holds(gated: object) -> None:
    facts = {"worth_it": BooleanFact(True), "seen": BooleanFact(False), "level": NumberFact(7.0, "u")}
    result = walk(gated, facts)  # type: ignore[arg-type]
    assert result.suggestions == ()


def test_suggest_when_is_checked_at_load_time(tmp_path: Path) -> None:
    bad = PACK.replace("{fact: worth_it, is: true}", "{fact: worth_this, is: true}").replace(
        "{fact: seen, is: true}]}", "{fact: level, at_least: 5}]}"
    )
    (tmp_path / "pack.yaml").write_text(bad)
    messages = [p[2] for p in check_pack([tmp_path])]
    assert "unknown fact `worth_this`" in messages
    assert "threshold on `level` has no unit; the fact is in u" in messages
