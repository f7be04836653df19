"""Suggested tests: for each test whose facts are missing, what its possible results would decide.

A test is suggested only when its missing facts left some condition open, and not where its
pack's `suggest_when` condition is false (true or undecided keeps it: a missing value never hides a
test); each value a missing fact could take (the pack's compiled candidates) is tried, and the
trees and cause tiers that would come out differently are the test's `decisions`, worded in its `why`.
A test kept on an undecided `suggest_when` is conditional: its suggestion names the missing facts that
leave the gate open (`conditional_on`), for the note to word it as "if ...", not as due now.
"""

from __future__ import annotations

import itertools

from notegen.engine.conditions import FALSE, TRUE, UNKNOWN, Env
from notegen.engine.core import TreeState, points_of, tier_of, walk_tree
from notegen.engine.facts import Value
from notegen.engine.program import CompiledTest, RulePack
from notegen.engine.results import TIERS, Decision, Suggestion, Tier, TreeOutcome

__all__ = ["suggest_tests"]


def suggest_tests(
    pack: RulePack,
    env: Env,
    states: tuple[TreeState, ...],
    truths: tuple[int, ...],
    tiers: list[Tier],
    outcomes: tuple[TreeOutcome, ...],
) -> tuple[Suggestion, ...]:
    found: list[tuple[tuple[int, int], Suggestion]] = []
    for test in pack.tests:
        missing = tuple(name for name in test.provides if name not in env)
        if not missing or not _left_open(pack, missing, states, truths):
            continue
        gate = test.gate(env) if test.gate is not None else TRUE
        if gate == FALSE:
            continue
        open_on = _gate_open_on(test, env) if gate == UNKNOWN else ()
        decisions = _what_if(pack, test, missing, env, states, truths, tiers, outcomes)
        if not decisions:
            continue
        first_tree = min((i for i, d in enumerate(decisions) if d.kind == "tree"), default=None)
        rank = (0 if first_tree is not None else 1, test.index)
        found.append(
            (
                rank,
                Suggestion(
                    test.id,
                    test.label,
                    missing,
                    decisions,
                    _why(pack, test, missing, decisions),
                    test.source,
                    open_on,
                    tuple(test.conditional_says.get(name, "") for name in open_on),
                ),
            )
        )
    found.sort(key=lambda pair: pair[0])
    return tuple(s for _, s in found)


def _gate_open_on(test: CompiledTest, env: Env) -> tuple[str, ...]:
    """The missing facts whose value alone could decide the test's undecided gate (all of them if none alone could)."""
    assert test.gate is not None
    missing = tuple(name for name in test.gate_candidates if name not in env)
    deciding = tuple(
        name
        for name in missing
        if any(test.gate({**env, name: value}) != UNKNOWN for value in test.gate_candidates[name])
    )
    return deciding or missing


def _left_open(
    pack: RulePack, missing: tuple[str, ...], states: tuple[TreeState, ...], truths: tuple[int, ...]
) -> bool:
    """Did the absence of these facts leave some condition unknown (or a `known` test relevant)?"""
    # A node off the walk's path (reached only "possibly") cannot move that tree's path, and, unless
    # evidence negates a tree test or a later tree reads this one, nothing else either.
    for name in missing:
        for tree_index, node_index in pack.node_readers.get(name, ()):
            lowest = UNKNOWN if pack.negates_trees or pack.feeds_trees[tree_index] else TRUE
            if states[tree_index].reach[node_index] >= lowest:
                return True
        known = pack.known_readers.get(name, frozenset())
        for index in pack.evidence_readers.get(name, ()):
            if truths[index] == UNKNOWN or index in known:
                return True
    return False


def _what_if(
    pack: RulePack,
    test: CompiledTest,
    missing: tuple[str, ...],
    env: Env,
    states: tuple[TreeState, ...],
    truths: tuple[int, ...],
    tiers: list[Tier],
    outcomes: tuple[TreeOutcome, ...],
) -> tuple[Decision, ...]:
    tree_alternatives: dict[int, set[str]] = {i: set() for i in test.trees}
    tier_alternatives: dict[int, set[str]] = {}
    options: list[tuple[Value, ...]] = [pack.candidates[name] for name in missing]
    for combination in itertools.product(*options):
        trial: Env = dict(env)
        for name, value in zip(missing, combination, strict=True):
            trial[name] = value
        # Only evidence reading the facts, or a tree whose walk came out differently, can change.
        recheck: set[int] = set(test.direct_evidence)
        for tree_index in test.trees:
            tree = pack.trees[tree_index]
            state = walk_tree(tree, trial)
            if state.reach != states[tree_index].reach:
                recheck.update(pack.tree_evidence[tree_index])
                outcome = tree.nodes[state.leaf].outcome or ""
                if outcome != outcomes[tree_index].outcome:
                    tree_alternatives[tree_index].add(outcome)
        if not recheck:
            continue
        trial_truths = list(truths)
        causes: set[int] = set()
        for index in recheck:
            answer = pack.evidence[index].test(trial)
            if answer != truths[index]:
                trial_truths[index] = answer
                causes.add(pack.evidence[index].cause)
        for cause_index in causes:
            tier = tier_of(*points_of(pack, trial_truths, cause_index), pack)
            if tier != tiers[cause_index]:
                tier_alternatives.setdefault(cause_index, set()).add(tier)
    decisions: list[Decision] = []
    for tree_index, alternatives in tree_alternatives.items():
        if alternatives:
            tree = pack.trees[tree_index]
            ordered = tuple(o for o in tree.outcomes if o in alternatives)
            decisions.append(Decision("tree", tree.id, tree.title, outcomes[tree_index].outcome, ordered))
    for cause_index, alternatives in tier_alternatives.items():
        if alternatives:
            cause = pack.causes[cause_index]
            ordered = tuple(t for t in TIERS if t in alternatives)
            decisions.append(Decision("cause", cause.id, cause.label, tiers[cause_index], ordered))
    return tuple(decisions)


def _or(words: tuple[str, ...]) -> str:
    return words[0] if len(words) == 1 else ", ".join(words[:-1]) + " or " + words[-1]


def _why(pack: RulePack, test: CompiledTest, missing: tuple[str, ...], decisions: tuple[Decision, ...]) -> str:
    names = ", ".join(pack.facts[name].display_label for name in missing)
    parts = []
    for decision in decisions:
        if decision.kind == "tree":
            words = next(t.outcome_labels for t in pack.trees if t.id == decision.id)
            now = words.get(decision.now, decision.now)
            could_be = tuple(words.get(o, o) for o in decision.could_be)
            parts.append(f"{decision.label} (now {now}; could be {_or(could_be)})")
        else:
            parts.append(f"{decision.label} (now {decision.now}; could become {_or(decision.could_be)})")
    text = f"{names[:1].upper()}{names[1:]} not given; the result would decide: {'; '.join(parts)}."
    return f"{test.purpose.strip()} {text}" if test.purpose.strip() else text
