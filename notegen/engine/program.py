"""A checked pack compiled for walking: closures for conditions, indices for references.

Everything a walk needs that does not depend on the case is worked out here, once per load:
condition closures, node order, which tests could change which trees and causes, and the
few values to try for each missing fact when asking "would this test change anything?".
"""

from __future__ import annotations

import itertools
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path

from notegen.engine.checks import check_spec
from notegen.engine.conditions import (
    AllOf,
    AnyOf,
    Compare,
    Compiled,
    Condition,
    Equals,
    Known,
    Limits,
    Not,
    OneOf,
    Reached,
    compile_condition,
    facts_of,
    node_key,
    outcome_key,
    render_condition,
    resolve,
    walk_tests,
)
from notegen.engine.facts import Value, format_number
from notegen.engine.pack import FactSpec, PackSpec, Problem, Scoring, read_pack
from notegen.engine.wording import Template, parse_template
from notegen.errors import RulePackError


@dataclass(frozen=True, slots=True)
class CompiledNode:
    id: str
    tree: str
    test: Compiled | None
    exits: tuple[int, int, int] | None  # if_true, if_false, if_unknown as indices in the tree
    exit_ids: tuple[str, str, str] | None
    outcome: str | None
    key: str
    outcome_key: str | None
    reads: tuple[str, ...]  # facts and trees the condition reads
    condition: Condition | None
    condition_text: str
    says: Template | None
    consider: tuple[str, ...]
    source: str


@dataclass(frozen=True, slots=True)
class CompiledTree:
    id: str
    title: str
    outcomes: tuple[str, ...]
    outcome_labels: Mapping[str, str]
    outcome_keys: tuple[str, ...]
    nodes: tuple[CompiledNode, ...]
    order: tuple[int, ...]  # parents before children
    start: int
    reads_trees: frozenset[str]
    reached_keys: tuple[tuple[int, str], ...]  # nodes some `reached:` condition reads


@dataclass(frozen=True, slots=True)
class CompiledEvidence:
    index: int
    cause: int
    id: str
    supporting: bool
    strength: str
    weight: int
    test: Compiled
    reads: tuple[str, ...]
    condition: Condition
    condition_text: str
    says: Template
    source: str


@dataclass(frozen=True, slots=True)
class CompiledCause:
    index: int
    id: str
    label: str
    evidence: tuple[int, ...]


@dataclass(frozen=True, slots=True)
class CompiledFactor:
    id: str
    group: str
    label: str
    test: Compiled
    reads: tuple[str, ...]
    condition: Condition
    condition_text: str
    says: Template
    source: str


@dataclass(frozen=True, slots=True)
class CompiledTest:
    index: int
    id: str
    label: str
    provides: tuple[str, ...]
    purpose: str
    source: str
    trees: tuple[int, ...]  # trees its facts can change, in walking order
    direct_evidence: tuple[int, ...]  # evidence items reading its facts


@dataclass(frozen=True)
class RulePack:
    """A loaded, checked and compiled pack, ready for `walk`."""

    spec: PackSpec
    dirs: tuple[Path, ...]
    facts: Mapping[str, FactSpec]
    settings: Mapping[str, tuple[float, str | None]]
    setting_text: Mapping[str, str]
    scoring: Scoring
    trees: tuple[CompiledTree, ...]
    causes: tuple[CompiledCause, ...]
    evidence: tuple[CompiledEvidence, ...]
    factors: tuple[CompiledFactor, ...]
    tests: tuple[CompiledTest, ...]
    group_titles: Mapping[str, str]
    candidates: Mapping[str, tuple[Value, ...]]  # values to try for a missing fact
    # fact -> (tree index, node index) of nodes reading it; evidence indices reading it.
    node_readers: Mapping[str, tuple[tuple[int, int], ...]] = field(default_factory=dict)
    evidence_readers: Mapping[str, tuple[int, ...]] = field(default_factory=dict)
    tree_evidence: tuple[tuple[int, ...], ...] = ()  # per tree: evidence items reading its outcome or nodes
    # True when some evidence negates a tree test: then even a node off the walk's path matters.
    negates_trees: bool = True
    # Per tree: does a later tree read its outcome or nodes? Then "possibly reached" nodes matter too.
    feeds_trees: tuple[bool, ...] = ()
    known_readers: Mapping[str, frozenset[int]] = field(default_factory=dict)

    @property
    def id(self) -> str:
        return self.spec.pack.id


def _reads(condition: Condition, trees: set[str]) -> tuple[tuple[str, ...], frozenset[str]]:
    """Facts read, and trees read (by outcome or by a reached node)."""
    read_trees: set[str] = set()
    for leaf in walk_tests(condition):
        if isinstance(leaf, Reached):
            read_trees.add(leaf.node)  # resolved to its tree by the caller
        elif leaf.fact in trees:
            read_trees.add(leaf.fact)
    return facts_of(condition), frozenset(read_trees)


def _order(tree_nodes: Sequence[str], exits: Mapping[str, tuple[str, ...]], start: str) -> tuple[str, ...]:
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


def compile_pack(spec: PackSpec, dirs: Sequence[Path] = ()) -> RulePack:
    """Compile a pack that passed `check_spec`."""
    settings = {s.id: (s.value, s.unit) for s in spec.settings}
    setting_text = {k: format_number(v) + (f" {u}" if u else "") for k, (v, u) in settings.items()}
    limits = Limits({k: v for k, (v, _) in settings.items()}, {t.id: t.outcomes for t in spec.trees})
    labels = {f.id: f.display_label for f in spec.facts} | {t.id: t.title for t in spec.trees}
    tree_ids = {t.id for t in spec.trees}
    node_tree = {n.id: t.id for t in spec.trees for n in t.nodes}

    def text(condition: Condition) -> str:
        return render_condition(condition, labels, settings)

    def tree_reads(condition: Condition) -> tuple[tuple[str, ...], frozenset[str]]:
        read_facts, read = _reads(condition, tree_ids)
        return read_facts, frozenset(node_tree.get(name, name) for name in read)

    read_nodes = {
        leaf.node for condition in _all_conditions(spec) for leaf in walk_tests(condition) if isinstance(leaf, Reached)
    }
    trees: list[CompiledTree] = []
    for tree in spec.trees:
        order_ids = _order([n.id for n in tree.nodes], {n.id: n.exits for n in tree.nodes}, tree.start)
        position = {name: i for i, name in enumerate(n.id for n in tree.nodes)}
        nodes: list[CompiledNode] = []
        read_trees: set[str] = set()
        for node in tree.nodes:
            reads: tuple[str, ...] = ()
            if node.ask is not None:
                reads, more = tree_reads(node.ask)
                read_trees |= more
            exit_ids: tuple[str, str, str] | None = None
            exits: tuple[int, int, int] | None = None
            if node.if_true is not None and node.if_false is not None and node.if_unknown is not None:
                exit_ids = (node.if_true, node.if_false, node.if_unknown)
                exits = (position[node.if_true], position[node.if_false], position[node.if_unknown])
            nodes.append(
                CompiledNode(
                    id=node.id,
                    tree=tree.id,
                    test=compile_condition(node.ask, limits) if node.ask is not None else None,
                    exits=exits,
                    exit_ids=exit_ids,
                    outcome=node.outcome,
                    key=node_key(node.id),
                    outcome_key=outcome_key(tree.id, node.outcome) if node.outcome else None,
                    reads=reads,
                    condition=node.ask,
                    condition_text=text(node.ask) if node.ask is not None else "",
                    says=parse_template(node.says) if node.says else None,
                    consider=node.consider,
                    source=node.source,
                )
            )
        trees.append(
            CompiledTree(
                id=tree.id,
                title=tree.title,
                outcomes=tree.outcomes,
                outcome_labels=dict(tree.outcome_labels),
                outcome_keys=tuple(outcome_key(tree.id, o) for o in tree.outcomes),
                nodes=tuple(nodes),
                order=tuple(position[name] for name in order_ids),
                start=position[tree.start],
                reads_trees=frozenset(read_trees),
                reached_keys=tuple((position[n.id], node_key(n.id)) for n in tree.nodes if n.id in read_nodes),
            )
        )

    weights = spec.scoring.weights
    evidence: list[CompiledEvidence] = []
    causes: list[CompiledCause] = []
    evidence_trees: list[frozenset[str]] = []
    for cause_index, cause in enumerate(spec.causes):
        indices: list[int] = []
        for supporting, items in ((True, cause.evidence.supporting), (False, cause.evidence.opposing)):
            for item in items:
                reads, read = tree_reads(item.when)
                indices.append(len(evidence))
                evidence_trees.append(read)
                evidence.append(
                    CompiledEvidence(
                        index=len(evidence),
                        cause=cause_index,
                        id=item.id,
                        supporting=supporting,
                        strength=item.strength,
                        weight=getattr(weights, item.strength),
                        test=compile_condition(item.when, limits),
                        reads=reads,
                        condition=item.when,
                        condition_text=text(item.when),
                        says=parse_template(item.says),
                        source=item.source,
                    )
                )
        causes.append(CompiledCause(cause_index, cause.id, cause.label, tuple(indices)))

    factors = tuple(
        CompiledFactor(
            id=f.id,
            group=f.group,
            label=f.label,
            test=compile_condition(f.when, limits),
            reads=facts_of(f.when),
            condition=f.when,
            condition_text=text(f.when),
            says=parse_template(f.says),
            source=f.source,
        )
        for f in spec.factors
    )

    node_readers: dict[str, list[tuple[int, int]]] = {}
    for t_index, built in enumerate(trees):
        for n_index, built_node in enumerate(built.nodes):
            for name in built_node.reads:
                node_readers.setdefault(name, []).append((t_index, n_index))
    evidence_readers: dict[str, list[int]] = {}
    known_readers: dict[str, set[int]] = {}
    for entry in evidence:
        for name in entry.reads:
            evidence_readers.setdefault(name, []).append(entry.index)
        for leaf in walk_tests(entry.condition):
            if isinstance(leaf, Known):
                known_readers.setdefault(leaf.fact, set()).add(entry.index)

    tests: list[CompiledTest] = []
    for test_index, test in enumerate(spec.tests):
        # Trees reading the facts, then every later tree reading those trees.
        changed: set[str] = {trees[t].id for name in test.provides for t, _ in node_readers.get(name, [])}
        for later in trees:
            if later.reads_trees & changed:
                changed.add(later.id)
        tree_indices = tuple(i for i, later in enumerate(trees) if later.id in changed)
        direct = tuple(item.index for item in evidence if set(item.reads) & set(test.provides))
        tests.append(
            CompiledTest(
                index=test_index,
                id=test.id,
                label=test.label,
                provides=test.provides,
                purpose=test.purpose,
                source=test.source,
                trees=tree_indices,
                direct_evidence=direct,
            )
        )

    return RulePack(
        spec=spec,
        dirs=tuple(dirs),
        facts={f.id: f for f in spec.facts},
        settings=settings,
        setting_text=setting_text,
        scoring=spec.scoring,
        trees=tuple(trees),
        causes=tuple(causes),
        evidence=tuple(evidence),
        factors=factors,
        tests=tuple(tests),
        group_titles={g.id: g.title for g in spec.factor_groups},
        candidates=_candidates(spec, limits),
        node_readers={k: tuple(v) for k, v in node_readers.items()},
        evidence_readers={k: tuple(v) for k, v in evidence_readers.items()},
        known_readers={k: frozenset(v) for k, v in known_readers.items()},
        negates_trees=any(_negates_tree(e.condition, tree_ids) for e in evidence),
        feeds_trees=tuple(any(tree.id in later.reads_trees for later in trees) for tree in trees),
        tree_evidence=tuple(tuple(i for i, read in enumerate(evidence_trees) if tree.id in read) for tree in trees),
    )


def _conditions(spec: PackSpec) -> list[Condition]:
    """Conditions of nodes and evidence: the ones that decide outcomes and tiers."""
    found: list[Condition] = [n.ask for t in spec.trees for n in t.nodes if n.ask is not None]
    for cause in spec.causes:
        found += [e.when for e in (*cause.evidence.supporting, *cause.evidence.opposing)]
    return found


def _negates_tree(condition: Condition, trees: set[str], negated: bool = False) -> bool:
    if isinstance(condition, Not):
        return _negates_tree(condition.item, trees, not negated)
    if isinstance(condition, AllOf | AnyOf):
        return any(_negates_tree(item, trees, negated) for item in condition.items)
    if not negated:
        return False
    return isinstance(condition, Reached) or condition.fact in trees


def _all_conditions(spec: PackSpec) -> list[Condition]:
    return _conditions(spec) + [f.when for f in spec.factors]


def _candidates(spec: PackSpec, limits: Limits) -> dict[str, tuple[Value, ...]]:
    """One value per distinct answer pattern of all tests on a fact (for "what if it were known")."""
    compares: dict[str, list[Compare]] = {}
    words: dict[str, set[str]] = {}
    for condition in _conditions(spec):
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


def load_pack(dirs: Sequence[Path]) -> RulePack:
    """Read, layer, validate, check and compile a pack; raise `RulePackError` with every problem."""
    spec, problems = read_pack(dirs)
    if spec is not None and not problems:
        problems = check_spec(spec)
    if problems or spec is None:
        raise RulePackError(problems or [("<pack>", None, "the pack could not be read")])
    return compile_pack(spec, dirs)


def check_pack(dirs: Sequence[Path]) -> list[Problem]:
    """Every problem of the layered pack, as (file, line, message); empty when it loads cleanly."""
    spec, problems = read_pack(dirs)
    if spec is None or problems:
        return problems
    return check_spec(spec)
