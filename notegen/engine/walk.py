"""Walking a compiled pack over a case's facts.

1. Trees, in pack order. Each node gets a reach value: the start is reached (true); a branch whose
   condition is true/false/unknown sends its own reach value down `if_true`/`if_false`/`if_unknown`,
   and the exits not taken are "possibly reached" (unknown) when the condition was unknown.
   Exactly one leaf is reached for certain: its outcome is the tree's outcome.
2. Evidence items of every cause; an item counts only when its condition is true.
3. Tiers. Points per item: strong 3, moderate 2, weak 1 (`scoring.weights`); net = for - against.
   `likely` when net >= likely_from (3); `possible` when net >= possible_from (1), or when the points
   for reach keep_in_view_from (3) however much speaks against (strong support is not dropped);
   otherwise `unlikely` (also when nothing points either way).
   Order: tier, then net points, then points for, then the order of the causes in the pack.
4. Factors whose condition is true (present) or unknown (undetermined).
5. Next tests. A test is suggested when a fact it provides is missing, that absence left a condition
   unknown, and some value of the fact (one per distinct answer pattern of the pack's thresholds)
   would change a tree's outcome or a cause's tier. Tests that change a tree's outcome come first,
   then the pack's order. Its `why` names what it would decide.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass

from notegen.engine.conditions import FALSE, TRUE, UNKNOWN, Env, truth_of
from notegen.engine.core import TreeState, points_of, tier_of, walk_tree
from notegen.engine.facts import (
    BooleanFact,
    Bound,
    Fact,
    FactInput,
    MissingFact,
    NumberFact,
    TextFact,
    as_fact,
    display_fact,
    plain_value,
)
from notegen.engine.program import CompiledTree, RulePack
from notegen.engine.results import (
    TIERS,
    CauseResult,
    EvidenceResult,
    FactorResult,
    JsonValue,
    OpenEvidence,
    Suggestion,
    Tier,
    TraceStep,
    TreeOutcome,
)
from notegen.engine.suggest import suggest_tests
from notegen.engine.wording import Template
from notegen.errors import NotegenError

_MISSING = MissingFact()
_FACT_TYPES = (NumberFact, BooleanFact, TextFact, MissingFact)


@dataclass(frozen=True)
class WalkResult:
    """Everything one walk found; `trace()` explains it step by step."""

    pack: RulePack
    facts: Mapping[str, Fact]
    outcomes: tuple[TreeOutcome, ...]
    causes: tuple[CauseResult, ...]
    factors: tuple[FactorResult, ...]
    suggestions: tuple[Suggestion, ...]
    _states: tuple[TreeState, ...]
    _evidence: tuple[int, ...]
    _factors: tuple[int, ...]
    _env: Env

    def outcome(self, tree: str) -> TreeOutcome:
        for result in self.outcomes:
            if result.tree == tree:
                return result
        raise KeyError(tree)

    def cause(self, cause: str) -> CauseResult:
        for result in self.causes:
            if result.id == cause:
                return result
        raise KeyError(cause)

    def trace(self) -> tuple[TraceStep, ...]:
        """Each node on the walk's path, then every evidence item and factor, with values seen."""
        pack = self.pack
        steps: list[TraceStep] = []
        for tree, state in zip(pack.trees, self._states, strict=True):
            for index in tree.order:
                if state.reach[index] != TRUE:
                    continue
                node = tree.nodes[index]
                if node.test is None:
                    steps.append(TraceStep("leaf", node.id, "", (), node.outcome or "", None, node.source))
                    continue
                answer = state.answers[index]
                assert answer is not None and node.exit_ids is not None
                goes_to = node.exit_ids[(TRUE, FALSE, UNKNOWN).index(answer)]
                values = self._values(node.reads)
                steps.append(
                    TraceStep("node", node.id, node.condition_text, values, truth_of(answer), goes_to, node.source)
                )
        for item in pack.evidence:
            cause = pack.causes[item.cause].id
            steps.append(
                TraceStep(
                    "evidence",
                    f"{cause}.{item.id}",
                    item.condition_text,
                    self._values(item.reads),
                    truth_of(self._evidence[item.index]),
                    None,
                    item.source,
                )
            )
        for factor, answer in zip(pack.factors, self._factors, strict=True):
            steps.append(
                TraceStep(
                    "factor",
                    factor.id,
                    factor.condition_text,
                    self._values(factor.reads),
                    truth_of(answer),
                    None,
                    factor.source,
                )
            )
        return tuple(steps)

    def _values(self, names: tuple[str, ...]) -> tuple[tuple[str, str], ...]:
        shown: list[tuple[str, str]] = []
        for name in names:
            if name in self.pack.facts:
                spec = self.pack.facts[name]
                shown.append((name, display_fact(self.facts.get(name, _MISSING), spec.decimals)))
            else:
                shown.append((name, self.outcome(name).outcome))
        return tuple(shown)


def prepare_facts(pack: RulePack, raw: Mapping[str, FactInput]) -> tuple[dict[str, Fact], Env]:
    """Check facts against the catalogue (name, kind, unit, allowed word); never coerce silently."""
    facts: dict[str, Fact] = {}
    env: Env = {}
    catalogue = pack.facts
    for name, given in raw.items():
        spec = catalogue.get(name)
        if spec is None:
            raise NotegenError(f"fact `{name}` is not in the catalogue of pack `{pack.id}`")
        fact = given if type(given) in _FACT_TYPES else as_fact(given)
        facts[name] = fact  # type: ignore[assignment]
        kind = type(fact)
        if kind is MissingFact:
            continue
        if kind is NumberFact:
            assert isinstance(fact, NumberFact)
            if spec.kind != "number":
                raise NotegenError(f"fact `{name}` should be a {spec.kind}, not {fact!r}")
            if fact.unit != spec.unit:
                if fact.unit is None and isinstance(given, int | float):
                    raise NotegenError(f"fact `{name}`: a bare number; give it as NumberFact(value, {spec.unit!r})")
                raise NotegenError(f"fact `{name}` is in {fact.unit or 'no unit'}; the pack expects {spec.unit}")
            env[name] = float(fact.value) if fact.qualifier is None else Bound(float(fact.value), fact.qualifier)
        elif kind is TextFact:
            assert isinstance(fact, TextFact)
            if spec.kind not in ("enum", "text"):
                raise NotegenError(f"fact `{name}` should be a {spec.kind}, not {fact!r}")
            if spec.kind == "enum" and fact.value not in spec.values:
                raise NotegenError(f"fact `{name}`: `{fact.value}` is not one of {list(spec.values)}")
            env[name] = fact.value
        else:
            assert isinstance(fact, BooleanFact)
            if spec.kind != "boolean":
                raise NotegenError(f"fact `{name}` should be a {spec.kind}, not {fact!r}")
            env[name] = fact.value
    return facts, env


# long: the walk's passes (trees, evidence, tiers, factors, suggestions) share its local state
def walk(pack: RulePack, raw_facts: Mapping[str, FactInput]) -> WalkResult:
    """Walk the pack over the facts (name -> fact); facts not given are missing."""
    facts, env = prepare_facts(pack, raw_facts)
    states = tuple(walk_tree(tree, env) for tree in pack.trees)
    truths = tuple(item.test(env) for item in pack.evidence)
    tiers: list[Tier] = []
    causes: list[tuple[tuple[int, int, int, int], CauseResult]] = []
    for cause in pack.causes:
        points_for, points_against = points_of(pack, truths, cause.index)
        tier = tier_of(points_for, points_against, pack)
        tiers.append(tier)
        supporting: list[EvidenceResult] = []
        opposing: list[EvidenceResult] = []
        still_open: list[OpenEvidence] = []
        for index in cause.evidence:
            item = pack.evidence[index]
            if truths[index] == TRUE:
                found = EvidenceResult(
                    item.id,
                    item.strength,
                    _fill(pack, item.says.names, item.says, facts, states),
                    _used(pack, item.reads, facts, states),
                    item.source,
                )
                (supporting if item.supporting else opposing).append(found)
            elif truths[index] == UNKNOWN:
                missing = tuple(n for n in item.reads if n in pack.facts and n not in env) or tuple(
                    n for n in item.reads if n not in pack.facts
                )
                still_open.append(OpenEvidence(item.id, item.supporting, item.strength, item.condition_text, missing))
        rank = (TIERS.index(tier), points_against - points_for, -points_for, cause.index)
        causes.append(
            (
                rank,
                CauseResult(
                    cause.id,
                    cause.label,
                    tier,
                    points_for,
                    points_against,
                    tuple(supporting),
                    tuple(opposing),
                    tuple(still_open),
                ),
            )
        )
    causes.sort(key=lambda pair: pair[0])

    factor_answers = tuple(factor.test(env) for factor in pack.factors)
    factors: list[FactorResult] = []
    for factor, answer in zip(pack.factors, factor_answers, strict=True):
        if answer == FALSE:
            continue
        used = _used(pack, factor.reads, facts, states)
        if answer == TRUE:
            text = _fill(pack, factor.says.names, factor.says, facts, states)
            factors.append(
                FactorResult(factor.id, factor.group, factor.label, "present", text, used, (), factor.source)
            )
        else:
            missing = tuple(n for n in factor.reads if n in pack.facts and n not in env)
            names = ", ".join(pack.facts[n].display_label for n in missing) or "the data"
            text = f"{factor.label}: cannot tell; {names} not given."
            factors.append(
                FactorResult(factor.id, factor.group, factor.label, "undetermined", text, used, missing, factor.source)
            )

    outcomes = tuple(
        _outcome(pack, tree, state, facts, env, states) for tree, state in zip(pack.trees, states, strict=True)
    )
    suggestions = suggest_tests(pack, env, states, truths, tiers, outcomes)
    return WalkResult(
        pack=pack,
        facts=facts,
        outcomes=outcomes,
        causes=tuple(result for _, result in causes),
        factors=tuple(factors),
        suggestions=suggestions,
        _states=states,
        _evidence=truths,
        _factors=factor_answers,
        _env=env,
    )


def _tree_value(pack: RulePack, name: str, states: tuple[TreeState, ...]) -> str:
    for tree, state in zip(pack.trees, states, strict=True):
        if tree.id == name:
            return tree.nodes[state.leaf].outcome or ""
    raise KeyError(name)


def _fill(
    pack: RulePack,
    names: tuple[str, ...],
    template: Template,
    facts: Mapping[str, Fact],
    states: tuple[TreeState, ...],
) -> str:
    values: dict[str, str] = {}
    for name in names:
        if name in pack.facts:
            fact = facts.get(name, _MISSING)
            # a number is printed on the same side of the settings its sentence names as its value is
            beside = [pack.settings[other][0] for other in names if other in pack.settings
                      and isinstance(fact, NumberFact) and pack.settings[other][1] == fact.unit]
            values[name] = display_fact(fact, pack.facts[name].decimals, beside)
        elif name in pack.setting_text:
            values[name] = pack.setting_text[name]
        else:
            values[name] = _tree_value(pack, name, states)
    return template.fill(values)


def _used(
    pack: RulePack, names: tuple[str, ...], facts: Mapping[str, Fact], states: tuple[TreeState, ...]
) -> tuple[tuple[str, JsonValue], ...]:
    return tuple(
        (name, plain_value(facts.get(name, _MISSING)) if name in pack.facts else _tree_value(pack, name, states))
        for name in names
    )


def _outcome(
    pack: RulePack,
    tree: CompiledTree,
    state: TreeState,
    facts: Mapping[str, Fact],
    env: Env,
    states: tuple[TreeState, ...],
) -> TreeOutcome:
    path = [i for i in tree.order if state.reach[i] == TRUE]
    notes: list[str] = []
    consider: list[str] = []
    undecided: list[str] = []
    for index in path:
        node = tree.nodes[index]
        if node.says is not None:
            notes.append(_fill(pack, node.says.names, node.says, facts, states))
        consider.extend(c for c in node.consider if c not in consider)
        if state.answers[index] == UNKNOWN:
            undecided.extend(n for n in node.reads if n in pack.facts and n not in env and n not in undecided)
    leaf = tree.nodes[state.leaf]
    return TreeOutcome(
        tree.id,
        tree.title,
        leaf.outcome or "",
        leaf.id,
        tuple(tree.nodes[i].id for i in path),
        tuple(notes),
        tuple(consider),
        tuple(undecided),
    )


