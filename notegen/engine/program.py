"""A checked pack compiled for walking: closures for conditions, indices for references.

Everything a walk needs that does not depend on the case is worked out here, once per load:
condition closures, node order, which tests could change which trees and causes, and the
few values to try for each missing fact when asking "would this test change anything?".
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path

from notegen.engine.analysis import all_conditions, candidates, negates_tree, node_order, reads_of
from notegen.engine.checks import check_spec
from notegen.engine.conditions import (
    Compiled,
    Condition,
    Known,
    Limits,
    Reached,
    compile_condition,
    facts_of,
    node_key,
    outcome_key,
    render_condition,
    walk_tests,
)
from notegen.engine.facts import Value, format_number
from notegen.engine.pack import FactSpec, PackSpec, Problem, Scoring, Tree, read_pack
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
    gate: Compiled | None = None  # `suggest_when`: the test is held back where this is FALSE
    # Values to try for each fact the gate reads, to tell which missing facts leave it undecided.
    gate_candidates: Mapping[str, tuple[Value, ...]] = field(default_factory=dict)
    conditional_says: Mapping[str, str] = field(default_factory=dict)  # fact -> clause, from the pack


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


def compile_pack(spec: PackSpec, dirs: Sequence[Path] = ()) -> RulePack:
    """Compile a pack that passed `check_spec`."""
    return _PackCompiler(spec).compile(tuple(dirs))


class _PackCompiler:
    """Compiles one checked spec: its trees, evidence, factors and tests, and the indexes the walk uses."""

    def __init__(self, spec: PackSpec) -> None:
        self.spec = spec
        self.settings = {s.id: (s.value, s.unit) for s in spec.settings}
        self.limits = Limits({k: v for k, (v, _) in self.settings.items()}, {t.id: t.outcomes for t in spec.trees})
        self.labels = {f.id: f.display_label for f in spec.facts} | {t.id: t.title for t in spec.trees}
        self.tree_ids = {t.id for t in spec.trees}
        self.node_tree = {n.id: t.id for t in spec.trees for n in t.nodes}

    def text(self, condition: Condition) -> str:
        return render_condition(condition, self.labels, self.settings)

    def tree_reads(self, condition: Condition) -> tuple[tuple[str, ...], frozenset[str]]:
        read_facts, read = reads_of(condition, self.tree_ids)
        return read_facts, frozenset(self.node_tree.get(name, name) for name in read)

    def compile(self, dirs: tuple[Path, ...]) -> RulePack:
        spec = self.spec
        trees = self._trees()
        evidence, causes, evidence_trees = self._evidence()
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
        return RulePack(
            spec=spec,
            dirs=dirs,
            facts={f.id: f for f in spec.facts},
            settings=self.settings,
            setting_text={k: format_number(v) + (f" {u}" if u else "") for k, (v, u) in self.settings.items()},
            scoring=spec.scoring,
            trees=trees,
            causes=causes,
            evidence=evidence,
            factors=self._factors(),
            tests=self._tests(trees, evidence, node_readers),
            group_titles={g.id: g.title for g in spec.factor_groups},
            candidates=candidates(spec, self.limits),
            node_readers={k: tuple(v) for k, v in node_readers.items()},
            evidence_readers={k: tuple(v) for k, v in evidence_readers.items()},
            known_readers={k: frozenset(v) for k, v in known_readers.items()},
            negates_trees=any(negates_tree(e.condition, self.tree_ids) for e in evidence),
            feeds_trees=tuple(any(tree.id in later.reads_trees for later in trees) for tree in trees),
            tree_evidence=tuple(
                tuple(i for i, read in enumerate(evidence_trees) if tree.id in read) for tree in trees
            ),
        )

    def _trees(self) -> tuple[CompiledTree, ...]:
        read_nodes = {
            leaf.node
            for condition in all_conditions(self.spec)
            for leaf in walk_tests(condition)
            if isinstance(leaf, Reached)
        }
        return tuple(self._tree(tree, read_nodes) for tree in self.spec.trees)

    def _tree(self, tree: Tree, read_nodes: set[str]) -> CompiledTree:
        order_ids = node_order([n.id for n in tree.nodes], {n.id: n.exits for n in tree.nodes}, tree.start)
        position = {name: i for i, name in enumerate(n.id for n in tree.nodes)}
        nodes: list[CompiledNode] = []
        read_trees: set[str] = set()
        for node in tree.nodes:
            reads: tuple[str, ...] = ()
            if node.ask is not None:
                reads, more = self.tree_reads(node.ask)
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
                    test=compile_condition(node.ask, self.limits) if node.ask is not None else None,
                    exits=exits,
                    exit_ids=exit_ids,
                    outcome=node.outcome,
                    key=node_key(node.id),
                    outcome_key=outcome_key(tree.id, node.outcome) if node.outcome else None,
                    reads=reads,
                    condition=node.ask,
                    condition_text=self.text(node.ask) if node.ask is not None else "",
                    says=parse_template(node.says) if node.says else None,
                    consider=node.consider,
                    source=node.source,
                )
            )
        return CompiledTree(
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

    def _evidence(
        self,
    ) -> tuple[tuple[CompiledEvidence, ...], tuple[CompiledCause, ...], list[frozenset[str]]]:
        weights = self.spec.scoring.weights
        evidence: list[CompiledEvidence] = []
        causes: list[CompiledCause] = []
        evidence_trees: list[frozenset[str]] = []
        for cause_index, cause in enumerate(self.spec.causes):
            indices: list[int] = []
            for supporting, items in ((True, cause.evidence.supporting), (False, cause.evidence.opposing)):
                for item in items:
                    reads, read = self.tree_reads(item.when)
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
                            test=compile_condition(item.when, self.limits),
                            reads=reads,
                            condition=item.when,
                            condition_text=self.text(item.when),
                            says=parse_template(item.says),
                            source=item.source,
                        )
                    )
            causes.append(CompiledCause(cause_index, cause.id, cause.label, tuple(indices)))
        return tuple(evidence), tuple(causes), evidence_trees

    def _factors(self) -> tuple[CompiledFactor, ...]:
        return tuple(
            CompiledFactor(
                id=f.id,
                group=f.group,
                label=f.label,
                test=compile_condition(f.when, self.limits),
                reads=facts_of(f.when),
                condition=f.when,
                condition_text=self.text(f.when),
                says=parse_template(f.says),
                source=f.source,
            )
            for f in self.spec.factors
        )

    def _tests(
        self,
        trees: tuple[CompiledTree, ...],
        evidence: tuple[CompiledEvidence, ...],
        node_readers: Mapping[str, list[tuple[int, int]]],
    ) -> tuple[CompiledTest, ...]:
        tests: list[CompiledTest] = []
        for test_index, test in enumerate(self.spec.tests):
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
                    gate=None if test.suggest_when is None else compile_condition(test.suggest_when, self.limits),
                    gate_candidates=self._gate_candidates(test.suggest_when),
                    conditional_says=dict(test.conditional_says),
                )
            )
        return tuple(tests)

    def _gate_candidates(self, gate: Condition | None) -> dict[str, tuple[Value, ...]]:
        if gate is None:
            return {}
        found = candidates(self.spec, self.limits, [gate])
        return {name: found[name] for name in facts_of(gate) if name in found}


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
