"""The condition syntax and its three-valued (Kleene) evaluation."""

from __future__ import annotations

import itertools
from collections.abc import Mapping

import pytest

from notegen.engine.conditions import (
    FALSE,
    TRUE,
    UNKNOWN,
    AllOf,
    Compare,
    ConditionSyntaxError,
    Limits,
    compile_condition,
    parse_condition,
    render_condition,
)
from notegen.engine.facts import Bound, NumberFact, display_fact, fact_value, format_number
from notegen.engine.source import SourceDict

LIMITS = Limits({"low_cut": 20.0, "high_cut": 40.0}, {"grade": ("a", "b")})


def run(raw: Mapping[str, object], env: Mapping[str, object]) -> int:
    return compile_condition(parse_condition(dict(raw)), LIMITS)(dict(env))  # type: ignore[arg-type]


def test_parse_builds_nested_conditions() -> None:
    condition = parse_condition({"all": [{"fact": "x", "below": 3, "unit": "g"}, {"not": {"fact": "y", "is": True}}]})
    assert isinstance(condition, AllOf)
    first = condition.items[0]
    assert isinstance(first, Compare) and first.thresholds[0].number == 3.0 and first.thresholds[0].unit == "g"


@pytest.mark.parametrize(
    ("raw", "fragment"),
    [
        ({"fact": "x", "below": 3, "above": 4}, "exactly one of"),
        ({"fact": "x", "lower_than": 3}, "unknown word"),
        ({"all": []}, "non-empty list"),
        ({"all": [{"fact": "x", "is": True}], "any": []}, "stands alone"),
        ({"fact": "x", "between": [1]}, "two limits"),
        ({"fact": "x", "is": True, "unit": "g"}, "`unit` belongs to a number comparison"),
        ({"fact": "x", "below": True}, "a limit is a number or a setting id"),
        ({"fact": "x", "in": []}, "non-empty list of words"),
        ({"fact": "x", "known": "yes"}, "`known` takes true or false"),
        ({"below": 3}, "needs `fact:`"),
        ("x below 3", "a condition is a mapping"),
        ({"reached": "n", "fact": "x"}, "{reached: node_id}"),
    ],
    ids=lambda v: v if isinstance(v, str) else None,
)
def test_parse_rejects_mistakes_with_a_reason(raw: object, fragment: str) -> None:
    with pytest.raises(ConditionSyntaxError) as caught:
        parse_condition(raw)
    assert fragment in caught.value.message


def test_syntax_error_carries_the_line_of_the_mapping() -> None:
    raw = SourceDict({"fact": "x"}, where=("pack.yaml", 12))
    with pytest.raises(ConditionSyntaxError) as caught:
        parse_condition(raw)
    assert caught.value.where == ("pack.yaml", 12)


@pytest.mark.parametrize("operator", ["below", "at_most", "above", "at_least"])
def test_a_missing_value_is_unknown_never_false(operator: str) -> None:
    assert run({"fact": "x", operator: 5}, {}) == UNKNOWN
    assert run({"not": {"fact": "x", operator: 5}}, {}) == UNKNOWN


def test_comparisons_and_inclusive_between() -> None:
    assert run({"fact": "x", "below": 20}, {"x": 19.9}) == TRUE
    assert run({"fact": "x", "below": 20}, {"x": 20.0}) == FALSE
    assert run({"fact": "x", "at_most": 20}, {"x": 20.0}) == TRUE
    assert run({"fact": "x", "above": 40}, {"x": 40.0}) == FALSE
    assert run({"fact": "x", "at_least": 40}, {"x": 40.0}) == TRUE
    assert run({"fact": "x", "between": ["low_cut", "high_cut"]}, {"x": 20.0}) == TRUE
    assert run({"fact": "x", "between": ["low_cut", "high_cut"]}, {"x": 40.0}) == TRUE
    assert run({"fact": "x", "between": ["low_cut", "high_cut"]}, {"x": 40.1}) == FALSE
    assert run({"fact": "x", "below": "low_cut"}, {"x": 19.0}) == TRUE


@pytest.mark.parametrize(
    ("bound", "raw", "expected"),
    [
        (Bound(10, "<"), {"fact": "x", "below": 20}, TRUE),  # "<10" is below 20 whatever it is
        (Bound(10, "<"), {"fact": "x", "below": 5}, UNKNOWN),  # could be 4 or 9
        (Bound(10, "<"), {"fact": "x", "above": 40}, FALSE),
        (Bound(10, "<"), {"fact": "x", "between": [20, 40]}, FALSE),
        (Bound(10, "<"), {"fact": "x", "at_most": 10}, TRUE),
        (Bound(40, ">"), {"fact": "x", "above": 40}, TRUE),
        (Bound(40, ">"), {"fact": "x", "at_least": 50}, UNKNOWN),
        (Bound(40, ">"), {"fact": "x", "below": 20}, FALSE),
        (Bound(40, ">"), {"fact": "x", "between": [20, 40]}, FALSE),
        (Bound(30, ">"), {"fact": "x", "between": [20, 40]}, UNKNOWN),
    ],
)
def test_reported_bounds_decide_only_what_they_can(bound: Bound, raw: dict[str, object], expected: int) -> None:
    assert run(raw, {"x": bound}) == expected


# Kleene's strong three-valued logic, written out as tables rather than computed.
AND = {(TRUE, TRUE): TRUE, (TRUE, UNKNOWN): UNKNOWN, (TRUE, FALSE): FALSE, (UNKNOWN, UNKNOWN): UNKNOWN,
       (UNKNOWN, FALSE): FALSE, (FALSE, FALSE): FALSE}  # fmt: skip
OR = {(TRUE, TRUE): TRUE, (TRUE, UNKNOWN): TRUE, (TRUE, FALSE): TRUE, (UNKNOWN, UNKNOWN): UNKNOWN,
      (UNKNOWN, FALSE): UNKNOWN, (FALSE, FALSE): FALSE}  # fmt: skip
SETTINGS = {TRUE: True, FALSE: False, UNKNOWN: None}


def _table(table: dict[tuple[int, int], int], a: int, b: int) -> int:
    return table.get((a, b), table.get((b, a), -1))


@pytest.mark.parametrize(("a", "b"), list(itertools.product((TRUE, FALSE, UNKNOWN), repeat=2)))
def test_all_any_not_follow_kleene_tables(a: int, b: int) -> None:
    env = {k: v for k, v in (("p", SETTINGS[a]), ("q", SETTINGS[b])) if v is not None}
    p, q = {"fact": "p", "is": True}, {"fact": "q", "is": True}
    assert run({"all": [p, q]}, env) == _table(AND, a, b)
    assert run({"any": [p, q]}, env) == _table(OR, a, b)
    assert run({"not": p}, env) == {TRUE: FALSE, FALSE: TRUE, UNKNOWN: UNKNOWN}[a]


def test_membership_known_and_tree_outcomes() -> None:
    assert run({"fact": "v", "in": ["low", "high"]}, {"v": "low"}) == TRUE
    assert run({"fact": "v", "in": ["low", "high"]}, {"v": "normal"}) == FALSE
    assert run({"fact": "v", "in": ["low"]}, {}) == UNKNOWN
    assert run({"fact": "v", "known": True}, {}) == FALSE
    assert run({"fact": "v", "known": False}, {}) == TRUE
    env = {"@outcome:grade=a": UNKNOWN, "@outcome:grade=b": TRUE}
    assert run({"fact": "grade", "is": "b"}, env) == TRUE
    assert run({"fact": "grade", "is": "a"}, env) == UNKNOWN
    assert run({"reached": "n1"}, {"@node:n1": UNKNOWN}) == UNKNOWN


def test_render_reads_like_a_sentence() -> None:
    condition = parse_condition(
        {"all": [{"fact": "urine_chloride", "below": "low_cut"}, {"not": {"fact": "room", "is": "attic"}}]}
    )
    text = render_condition(condition, {"urine_chloride": "urine chloride"}, {"low_cut": (20.0, "mmol/L")})
    assert text == "urine chloride below 20 mmol/L (setting low_cut) and room is not attic"


def test_fact_display_and_values() -> None:
    assert format_number(12.0) == "12"
    assert format_number(2.456) == "2.46"
    assert format_number(71.4, 0) == "71"
    assert display_fact(NumberFact(10, "mmol/L", "<")) == "<10 mmol/L"
    assert fact_value(NumberFact(10, "mmol/L", "<")) == Bound(10.0, "<")
    assert fact_value(NumberFact(10, "mmol/L")) == 10.0
