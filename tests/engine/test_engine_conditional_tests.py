"""A test kept on an undecided `suggest_when` is conditional, naming the missing facts that leave it open."""

from __future__ import annotations

from pathlib import Path

import pytest

from notegen.engine import RulePack, check_pack, load_pack, walk
from notegen.engine.facts import BooleanFact, Fact, MissingFact, NumberFact

# A generic pack: a cause whose tier the test's fact would change; the gate reads a boolean and a
# number that nothing but the gate reads (so its trial values come from the gate's own threshold).
PACK = (
    "pack: {id: pending, title: pending}\n"
    "facts: [{id: level, kind: number, unit: u}, {id: worth_it, kind: boolean}, {id: score, kind: number, unit: u}]\n"
    "settings:\n"
    "  - {id: level_high_from, value: 5, unit: u, source: common practice}\n"
    "  - {id: score_high_from, value: 3, unit: u, source: common practice}\n"
    "causes:\n"
    "  - id: thing\n    label: thing\n    evidence:\n"
    "      for:\n"
    "        - {id: high, when: {fact: level, at_least: level_high_from}, strength: strong, says: high,"
    " source: common practice}\n"
    "      against:\n"
    "        - {id: low, when: {fact: level, below: level_high_from}, strength: strong, says: low,"
    " source: common practice}\n"
    "tests:\n"
    "  - id: level_test\n    label: level test\n    provides: [level]\n    source: common practice\n"
    "    conditional_says: {worth_it: it turns out worth it}\n"
    "    suggest_when: {any: [{fact: worth_it, is: true}, {fact: score, at_least: score_high_from}]}\n"
)
MISSING = MissingFact("not measured")


@pytest.fixture(scope="module")
def pending(tmp_path_factory: pytest.TempPathFactory) -> RulePack:
    folder = tmp_path_factory.mktemp("pending")
    (folder / "pack.yaml").write_text(PACK)
    return load_pack([folder])


@pytest.mark.parametrize(
    ("worth_it", "score", "open_on"),
    [
        (MISSING, MISSING, ("worth_it", "score")),  # either alone could decide the gate
        (MISSING, NumberFact(1.0, "u"), ("worth_it",)),  # the score is known and low
        (BooleanFact(False), MISSING, ("score",)),  # a score of 3 or more would make it due
        (BooleanFact(True), MISSING, ()),  # the gate holds: the test is due now, not conditional
        (MISSING, NumberFact(4.0, "u"), ()),
    ],
    ids=["both-missing", "score-low", "flag-false", "gate-true", "score-high"],
)
def test_a_test_is_conditional_on_exactly_the_facts_that_leave_its_gate_open(
    pending: RulePack, worth_it: Fact, score: Fact, open_on: tuple[str, ...]
) -> None:
    result = walk(pending, {"worth_it": worth_it, "score": score})
    (suggestion,) = result.suggestions
    assert suggestion.conditional_on == open_on
    assert suggestion.conditional is bool(open_on)
    # the pack words `worth_it`; `score` has no clause (the workup names it by its label)
    says = {"worth_it": "it turns out worth it", "score": ""}
    assert suggestion.conditional_says == tuple(says[name] for name in open_on)
    assert ("conditional_on" in suggestion.as_dict()) is bool(open_on)


def test_a_gate_that_is_false_still_hides_the_test(pending: RulePack) -> None:
    result = walk(pending, {"worth_it": BooleanFact(False), "score": NumberFact(1.0, "u")})
    assert result.suggestions == ()


@pytest.mark.parametrize("cut", ["no-gate", "fact-not-read"])
def test_wording_for_a_fact_the_gate_does_not_read_is_refused_at_load_time(tmp_path: Path, cut: str) -> None:
    text = PACK.split("    suggest_when")[0] if cut == "no-gate" else PACK.replace("{worth_it:", "{level:")
    (tmp_path / "pack.yaml").write_text(text)
    messages = [p[2] for p in check_pack([tmp_path])]
    fact = "worth_it" if cut == "no-gate" else "level"
    assert messages == [f"test `level_test`: `conditional_says` words `{fact}`, which its `suggest_when` does not read"]
