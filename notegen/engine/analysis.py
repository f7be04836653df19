"""What a pack's conditions read and which answers they can give: worked out once, when a pack is compiled."""

from __future__ import annotations

import itertools
from collections.abc import Mapping, Sequence

from notegen.engine.conditions import (
    AllOf,
    AnyOf,
    Compare,
    Condition,
    Equals,
    Limits,
    Not,
    OneOf,
    Reached,
    compile_condition,
    facts_of,
    resolve,
    walk_tests,
)
from notegen.engine.facts import Value
from notegen.engine.pack import PackSpec

__all__ = ["all_conditions", "candidates", "negates_tree", "node_order", "reads_of"]


def reads_of(condition: Condition, trees: set[str]) -> tuple[tuple[str, ...], frozenset[str]]:
    """Facts read, and trees read (by outcome or by a reached node)."""
    read_trees: set[str] = set()
    for leaf in walk_tests(condition):
        if isinstance(leaf, Reached):
            read_trees.add(leaf.node)  # resolved to its tree by the caller
        elif leaf.fact in trees:
            read_trees.add(leaf.fact)
    return facts_of(condition), frozenset(read_trees)


def node_order(tree_nodes: Sequence[str], exits: Mapping[str, tuple[str, ...]], start: str) -> tuple[str, ...]:
    """Parents before children (depth-first post-order, reversed); checks ruled out loops."""
    seen: set[str] = set()
    post: list[str] = []

    def visit(name: str) -> None:
        seen.add(name)
        for nxt in exits[name]:
            if nxt not in seen:
                visit(nxt)
        post.append(name)

    visit(start)
    return tuple(reversed(post))


def _deciding_conditions(spec: PackSpec) -> list[Condition]:
    """Conditions of nodes and evidence: the ones that decide outcomes and tiers."""
    found: list[Condition] = [n.ask for t in spec.trees for n in t.nodes if n.ask is not None]
    for cause in spec.causes:
        found += [e.when for e in (*cause.evidence.supporting, *cause.evidence.opposing)]
    return found


def negates_tree(condition: Condition, trees: set[str], negated: bool = False) -> bool:
    if isinstance(condition, Not):
        return negates_tree(condition.item, trees, not negated)
    if isinstance(condition, AllOf | AnyOf):
        return any(negates_tree(item, trees, negated) for item in condition.items)
    if not negated:
        return False
    return isinstance(condition, Reached) or condition.fact in trees


def all_conditions(spec: PackSpec) -> list[Condition]:
    gates = [t.suggest_when for t in spec.tests if t.suggest_when is not None]
    return _deciding_conditions(spec) + [f.when for f in spec.factors] + gates


def candidates(
    spec: PackSpec, limits: Limits, conditions: Sequence[Condition] | None = None
) -> dict[str, tuple[Value, ...]]:
    """One value per distinct answer pattern of all tests on a fact (for "what if it were known").

    The tests are those of the nodes and evidence, or of `conditions` when given (a test's gate).
    """
    compares: dict[str, list[Compare]] = {}
    words: dict[str, set[str]] = {}
    for condition in _deciding_conditions(spec) if conditions is None else conditions:
        for leaf in walk_tests(condition):
            if isinstance(leaf, Compare):
                compares.setdefault(leaf.fact, []).append(leaf)
            elif isinstance(leaf, Equals) and isinstance(leaf.value, str):
                words.setdefault(leaf.fact, set()).add(leaf.value)
            elif isinstance(leaf, OneOf):
                words.setdefault(leaf.fact, set()).update(leaf.values)
    result: dict[str, tuple[Value, ...]] = {}
    for fact in spec.facts:
        if fact.kind == "boolean":
            result[fact.id] = (True, False)
        elif fact.kind == "enum":
            result[fact.id] = fact.values
        elif fact.kind == "text":
            # One word no condition names stands for "anything else".
            result[fact.id] = (*sorted(words.get(fact.id, ())), "\x00other")
        else:
            tests = compares.get(fact.id, [])
            points = sorted({resolve(t, limits) for test in tests for t in test.thresholds})
            if not points:
                result[fact.id] = (0.0,)
                continue
            trial = [points[0] - max(1.0, abs(points[0]) / 2)]
            for low, high in itertools.pairwise(points):
                trial += [low, (low + high) / 2]
            trial += [points[-1], points[-1] + max(1.0, abs(points[-1]) / 2)]
            kept: dict[tuple[int, ...], float] = {}
            for value in trial:
                env: dict[str, Value | int] = {fact.id: value}
                signature = tuple(compile_condition(t, limits)(env) for t in tests)
                kept.setdefault(signature, value)
            result[fact.id] = tuple(kept.values())
    return result
