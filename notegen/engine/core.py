"""The two steps every walk repeats, and every "what if" repeats again: walking one compiled tree over
an environment of facts, and scoring one cause's evidence into a tier."""

from __future__ import annotations

from dataclasses import dataclass

from notegen.engine.conditions import FALSE, TRUE, UNKNOWN, Env
from notegen.engine.program import CompiledTree, RulePack
from notegen.engine.results import Tier

__all__ = ["TreeState", "points_of", "tier_of", "walk_tree"]


@dataclass(frozen=True, slots=True)
class TreeState:
    reach: tuple[int, ...]
    answers: tuple[int | None, ...]
    leaf: int


def walk_tree(tree: CompiledTree, env: Env) -> TreeState:
    nodes = tree.nodes
    reach = [FALSE] * len(nodes)
    answers: list[int | None] = [None] * len(nodes)
    reach[tree.start] = TRUE
    for key in tree.outcome_keys:
        env[key] = FALSE
    leaf = tree.start
    for index in tree.order:
        status = reach[index]
        if status == FALSE:
            continue
        node = nodes[index]
        test = node.test
        if test is None:
            outcome_at: str = node.outcome_key  # type: ignore[assignment]
            if status > env[outcome_at]:  # type: ignore[operator]
                env[outcome_at] = status
            if status == TRUE:
                leaf = index
            continue
        answer = test(env)
        answers[index] = answer
        on_true, on_false, on_unknown = node.exits  # type: ignore[misc]
        taken = status if answer > status else answer
        if taken > reach[on_true]:
            reach[on_true] = taken
        taken = TRUE - answer
        if taken > status:
            taken = status
        if taken > reach[on_false]:
            reach[on_false] = taken
        if answer == UNKNOWN and status > reach[on_unknown]:
            reach[on_unknown] = status
    # Only nodes some `reached:` condition reads need their reach in the environment.
    for index, key in tree.reached_keys:
        env[key] = reach[index]
    return TreeState(tuple(reach), tuple(answers), leaf)


def tier_of(points_for: int, points_against: int, pack: RulePack) -> Tier:
    scoring = pack.scoring
    net = points_for - points_against
    if net >= scoring.likely_from:
        return "likely"
    if net >= scoring.possible_from or points_for >= scoring.keep_in_view_from:
        return "possible"
    return "unlikely"


def points_of(pack: RulePack, truths: list[int] | tuple[int, ...], cause: int) -> tuple[int, int]:
    points_for = points_against = 0
    for index in pack.causes[cause].evidence:
        if truths[index] == TRUE:
            item = pack.evidence[index]
            if item.supporting:
                points_for += item.weight
            else:
                points_against += item.weight
    return points_for, points_against
