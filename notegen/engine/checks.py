"""Load-time checks of a validated pack: every reference resolves, every threshold has its unit.

Each problem is `(file, line, message)`. The checks:
unknown fact, setting, node, cause or group names; duplicate ids (also across trees, and between
facts, settings and trees, which share the placeholder namespace); nodes no walk can reach and
loops; a number threshold written without a unit where the fact has one, or in another unit;
tests that do not suit the kind of fact (a number compared with a word, a word not in the list);
placeholders naming nothing; tiers whose cut-offs contradict each other.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping

from notegen.engine.conditions import (
    Compare,
    Condition,
    Equals,
    Known,
    OneOf,
    Reached,
    facts_of,
    walk_tests,
)
from notegen.engine.pack import FactSpec, PackInfo, PackModel, PackSpec, Problem, SettingSpec, Tree
from notegen.engine.source import Where
from notegen.engine.wording import parse_template


def _at(where: Where, message: str) -> Problem:
    return (where[0], where[1], message)


def _duplicates(items: Iterable[PackModel], kind: str, problems: list[Problem]) -> None:
    seen: dict[str, Where] = {}
    for item in items:
        item_id = str(getattr(item, "id", ""))
        if item_id in seen:
            first = seen[item_id]
            problems.append(_at(item.where, f"duplicate {kind} id `{item_id}` (first at {first[0]}:{first[1]})"))
        else:
            seen[item_id] = item.where


class _Checker:
    def __init__(self, spec: PackSpec) -> None:
        self.spec = spec
        self.problems: list[Problem] = []
        self.facts: dict[str, FactSpec] = {f.id: f for f in spec.facts}
        self.settings: dict[str, SettingSpec] = {s.id: s for s in spec.settings}
        self.trees: dict[str, Tree] = {t.id: t for t in spec.trees}
        self.node_tree: dict[str, str] = {n.id: t.id for t in spec.trees for n in t.nodes}
        self.causes = {c.id for c in spec.causes}
        self.groups = {g.id for g in spec.factor_groups}

    def run(self) -> list[Problem]:
        spec = self.spec
        for items, kind in (
            (spec.facts, "fact"),
            (spec.settings, "setting"),
            (spec.trees, "tree"),
            ([n for t in spec.trees for n in t.nodes], "node"),
            (spec.causes, "cause"),
            (spec.factor_groups, "factor group"),
            (spec.factors, "factor"),
            (spec.tests, "test"),
        ):
            _duplicates(items, kind, self.problems)
        for cause in spec.causes:
            _duplicates(
                (*cause.evidence.supporting, *cause.evidence.opposing), f"evidence (cause {cause.id})", self.problems
            )
        self._names_shared()
        for fact in spec.facts:
            self._fact(fact)
        self._scoring()
        for position, tree in enumerate(spec.trees):
            self._tree(tree, {t.id for t in spec.trees[:position]})
        everything_before = set(self.trees)
        for cause in spec.causes:
            if cause.form_of is not None and (cause.form_of not in self.causes or cause.form_of == cause.id):
                what = f"cause `{cause.id}`: form_of names no other cause `{cause.form_of}`"
                self.problems.append(_at(cause.where_of("form_of"), what))
            for item in (*cause.evidence.supporting, *cause.evidence.opposing):
                self._condition(item.when, everything_before, set(self.node_tree))
                self._template(item.says, item.where_of("says"))
        for factor in spec.factors:
            if factor.group not in self.groups:
                self.problems.append(
                    _at(factor.where_of("group"), f"factor `{factor.id}`: unknown factor group `{factor.group}`")
                )
            self._condition(factor.when, everything_before, set(self.node_tree))
            self._template(factor.says, factor.where_of("says"))
        for test in spec.tests:
            for name in test.provides:
                if name not in self.facts:
                    self.problems.append(
                        _at(test.where_of("provides"), f"test `{test.id}` provides unknown fact `{name}`")
                    )
            if test.suggest_when is not None:
                # Tests are chosen after every tree is walked, so the condition may read any tree or node.
                self._condition(test.suggest_when, everything_before, set(self.node_tree))
            read = facts_of(test.suggest_when) if test.suggest_when is not None else ()
            for name in test.conditional_says:
                if name not in read:
                    message = f"test `{test.id}`: `conditional_says` words `{name}`, which its `suggest_when`"
                    message += " does not read"
                    self.problems.append(_at(test.where_of("conditional_says"), message))
        return sorted(set(self.problems), key=lambda p: (p[0], p[1] or 0, p[2]))

    def _names_shared(self) -> None:
        owners: dict[str, str] = {}
        for kind, items in (("fact", self.spec.facts), ("setting", self.spec.settings), ("tree", self.spec.trees)):
            for item in items:
                if item.id in owners and owners[item.id] != kind:
                    self.problems.append(
                        _at(item.where, f"{kind} `{item.id}` has the name of a {owners[item.id]}; names must differ")
                    )
                owners.setdefault(item.id, kind)

    def _fact(self, fact: FactSpec) -> None:
        if fact.kind == "enum" and not fact.values:
            self.problems.append(_at(fact.where, f"fact `{fact.id}` is an enum without `values`"))
        if fact.kind != "enum" and fact.values:
            self.problems.append(_at(fact.where, f"fact `{fact.id}` lists `values` but is a {fact.kind}"))
        if fact.kind != "number" and (fact.unit is not None or fact.decimals is not None):
            self.problems.append(_at(fact.where, f"fact `{fact.id}`: only a number has a unit or decimals"))

    def _scoring(self) -> None:
        scoring = self.spec.scoring
        if scoring.possible_from > scoring.likely_from:
            self.problems.append(_at(scoring.where, "scoring: `possible_from` must not exceed `likely_from`"))

    def _tree(self, tree: Tree, earlier_trees: set[str]) -> None:
        nodes = {n.id: n for n in tree.nodes}
        earlier_nodes = {n for n, t in self.node_tree.items() if t in earlier_trees}
        for outcome in tree.outcome_labels:
            if outcome not in tree.outcomes:
                self.problems.append(
                    _at(tree.where_of("outcome_labels"), f"tree `{tree.id}`: label for unknown outcome `{outcome}`")
                )
        if tree.start not in nodes:
            self.problems.append(
                _at(tree.where_of("start"), f"tree `{tree.id}`: start node `{tree.start}` is not in the tree")
            )
        for node in tree.nodes:
            for key in ("if_true", "if_false", "if_unknown"):
                target = getattr(node, key)
                if target is not None and target not in nodes:
                    self.problems.append(_at(node.where_of(key), f"node `{node.id}` leads to unknown node `{target}`"))
            if node.outcome is not None and node.outcome not in tree.outcomes:
                self.problems.append(
                    _at(
                        node.where_of("outcome"),
                        f"node `{node.id}`: outcome `{node.outcome}` is not one of {list(tree.outcomes)}",
                    )
                )
            for cause in node.consider:
                if cause not in self.causes:
                    self.problems.append(
                        _at(node.where_of("consider"), f"node `{node.id}` names unknown cause `{cause}`")
                    )
            if node.ask is not None:
                self._condition(node.ask, earlier_trees, earlier_nodes)
            if node.says is not None:
                self._template(node.says, node.where_of("says"))
        if tree.start in nodes:
            self._reachability(tree, nodes)

    def _reachability(self, tree: Tree, nodes: Mapping[str, object]) -> None:
        exits = {n.id: [e for e in n.exits if e in nodes] for n in tree.nodes}
        seen: set[str] = set()
        stack = [tree.start]
        while stack:
            current = stack.pop()
            if current not in seen:
                seen.add(current)
                stack.extend(exits[current])
        for node in tree.nodes:
            if node.id not in seen:
                self.problems.append(_at(node.where, f"node `{node.id}` cannot be reached from `{tree.start}`"))
        # A loop would make a walk endless; report the node that closes it.
        state: dict[str, int] = {}

        def visit(name: str) -> None:
            state[name] = 1
            node = tree_nodes[name]
            for key in ("if_true", "if_false", "if_unknown"):
                nxt = getattr(node, key)
                if nxt not in exits:
                    continue
                if state.get(nxt) == 1:
                    self.problems.append(_at(node.where_of(key), f"node `{name}` loops back to `{nxt}`"))
                elif nxt not in state:
                    visit(nxt)
            state[name] = 2

        tree_nodes = {n.id: n for n in tree.nodes}
        visit(tree.start)

    def _condition(self, condition: Condition, trees: set[str], nodes: set[str]) -> None:
        for test in walk_tests(condition):
            if isinstance(test, Reached):
                if test.node not in nodes:
                    known = test.node in self.node_tree
                    why = "belongs to this or a later tree" if known else "is unknown"
                    self.problems.append(_at(test.where, f"`reached: {test.node}`: node {why}"))
                continue
            if test.fact in self.trees:
                self._outcome_test(test, trees)
                continue
            fact = self.facts.get(test.fact)
            if fact is None:
                self.problems.append(_at(test.where, f"unknown fact `{test.fact}`"))
                continue
            if isinstance(test, Compare):
                self._compare(test, fact)
            elif isinstance(test, Equals):
                self._equals(test, fact)
            elif isinstance(test, OneOf):
                if fact.kind not in ("enum", "text"):
                    self.problems.append(_at(test.where, f"`in` needs a word fact; `{fact.id}` is a {fact.kind}"))
                for value in test.values:
                    if fact.kind == "enum" and value not in fact.values:
                        self.problems.append(
                            _at(test.where, f"`{value}` is not a value of `{fact.id}` {list(fact.values)}")
                        )

    def _outcome_test(self, test: Compare | Equals | OneOf | Known, trees: set[str]) -> None:
        name = test.fact
        if name not in trees:
            self.problems.append(_at(test.where, f"tree `{name}` is read before it is walked (declare it earlier)"))
            return
        outcomes = self.trees[name].outcomes
        if isinstance(test, Known):
            return
        if isinstance(test, Compare):
            self.problems.append(_at(test.where, f"tree `{name}` ends in a word; compare it with `is` or `in`"))
            return
        values = [test.value] if isinstance(test, Equals) else list(test.values)
        for value in values:
            if value not in outcomes:
                self.problems.append(_at(test.where, f"`{value}` is not an outcome of tree `{name}` {list(outcomes)}"))

    def _compare(self, test: Compare, fact: FactSpec) -> None:
        if fact.kind != "number":
            self.problems.append(_at(test.where, f"`{test.operator}` needs a number; `{fact.id}` is a {fact.kind}"))
            return
        numbers: list[float] = []
        for threshold in test.thresholds:
            if threshold.setting is not None:
                setting = self.settings.get(threshold.setting)
                if setting is None:
                    self.problems.append(_at(test.where, f"unknown setting `{threshold.setting}`"))
                    continue
                numbers.append(setting.value)
                if threshold.unit is not None and threshold.unit != setting.unit:
                    self.problems.append(
                        _at(test.where, f"unit `{threshold.unit}` differs from setting `{setting.id}` ({setting.unit})")
                    )
                if setting.unit != fact.unit:
                    # The setting is what to fix (often a service's overlay), so point at its unit.
                    self.problems.append(
                        _at(
                            setting.where_of("unit"),
                            f"setting `{setting.id}` is in {setting.unit or 'no unit'}; "
                            f"fact `{fact.id}`, compared with it, is in {fact.unit or 'no unit'}",
                        )
                    )
                    continue
                unit = setting.unit
            else:
                assert threshold.number is not None
                numbers.append(threshold.number)
                unit = threshold.unit
            if fact.unit is not None and unit is None:
                self.problems.append(
                    _at(test.where, f"threshold on `{fact.id}` has no unit; the fact is in {fact.unit}")
                )
            elif unit != fact.unit:
                self.problems.append(
                    _at(test.where, f"threshold on `{fact.id}` is in {unit}; the fact is in {fact.unit or 'no unit'}")
                )
        if test.operator == "between" and len(numbers) == 2 and numbers[0] > numbers[1]:
            self.problems.append(_at(test.where, f"`between` on `{fact.id}`: low limit above high limit"))

    def _equals(self, test: Equals, fact: FactSpec) -> None:
        if fact.kind == "boolean" and not isinstance(test.value, bool):
            self.problems.append(_at(test.where, f"`{fact.id}` is yes/no; write `is: true` or `is: false`"))
        elif fact.kind == "enum" and test.value not in fact.values:
            self.problems.append(_at(test.where, f"`{test.value}` is not a value of `{fact.id}` {list(fact.values)}"))
        elif fact.kind == "number":
            self.problems.append(_at(test.where, f"`{fact.id}` is a number; compare it with below/above/between"))
        elif fact.kind == "text" and not isinstance(test.value, str):
            self.problems.append(_at(test.where, f"`{fact.id}` is text; `is` needs a word"))

    def _template(self, text: str, where: Where) -> None:
        for name in parse_template(text).names:
            if name not in self.facts and name not in self.settings and name not in self.trees:
                self.problems.append(_at(where, f"placeholder `{{{name}}}` names no fact, setting or tree"))


def check_spec(spec: PackSpec) -> list[Problem]:
    """All load-time problems of a validated pack, sorted by file and line."""
    return _Checker(spec).run()


def check_conditions(
    conditions: Iterable[Condition], facts: Iterable[FactSpec], settings: Iterable[SettingSpec] = ()
) -> list[Problem]:
    """Problems of conditions written outside a pack's trees, against a fact catalogue and settings.

    The same checks as inside a pack (unknown facts and settings, units, a word not in an enum's
    list), for a data file that reuses the condition syntax; `reached:` has no tree to name here.
    """
    spec = PackSpec(pack=PackInfo(id="conditions", title="conditions"), facts=tuple(facts), settings=tuple(settings))
    checker = _Checker(spec)
    for fact in spec.facts:
        checker._fact(fact)
    for condition in conditions:
        checker._condition(condition, set(), set())
    return sorted(set(checker.problems), key=lambda p: (p[0], p[1] or 0, p[2]))
