"""The condition syntax of a pack, and its three-valued (Kleene) evaluation.

A condition is a small YAML mapping a clinician can read:

    {fact: urine_cl, below: 20, unit: mmol/L}          # below, at_most, above, at_least
    {fact: urine_cl, between: [urine_cl_low, 40], unit: mmol/L}   # inclusive; a word names a setting
    {fact: volume, is: low}          {fact: vomiting, is: true}
    {fact: volume, in: [low, normal]}
    {fact: urine_cl, known: true}    # given or not: never unknown
    {reached: node_id}               # the walk went through that node of a tree
    {all: [...]}  {any: [...]}  {not: {...}}

A tree's id is also a fact whose values are its outcomes: {fact: chloride_class, is: resistant}.

Evaluation is Kleene logic over false < unknown < true: a test on a missing value is unknown,
`all` is the minimum, `any` the maximum, `not` swaps true and false and keeps unknown.
Truth values are ints (FALSE 0, UNKNOWN 1, TRUE 2) so that min/max do the logic cheaply.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator, Mapping
from dataclasses import dataclass
from enum import StrEnum
from typing import Any

from notegen.engine.facts import Bound, Value, format_number
from notegen.engine.source import Where

FALSE, UNKNOWN, TRUE = 0, 1, 2


class Truth(StrEnum):
    """Outcome of a condition, as shown to the user."""

    TRUE = "true"
    FALSE = "false"
    UNKNOWN = "unknown"


TRUTHS = (Truth.FALSE, Truth.UNKNOWN, Truth.TRUE)

COMPARISONS = {"below": "below", "at_most": "at most", "above": "above", "at_least": "at least", "between": "between"}
_OPERATORS = (*COMPARISONS, "is", "in", "known")

Env = dict[str, Value | int]
Compiled = Callable[[Env], int]


class ConditionSyntaxError(ValueError):
    """A condition written wrongly; `where` is the file and line of the offending mapping."""

    def __init__(self, where: Where, message: str) -> None:
        super().__init__(message)
        self.where = where
        self.message = message


@dataclass(frozen=True, slots=True)
class Threshold:
    """A number with an optional unit, or the id of a pack setting."""

    number: float | None
    setting: str | None
    unit: str | None


@dataclass(frozen=True, slots=True)
class Compare:
    fact: str
    operator: str
    thresholds: tuple[Threshold, ...]
    where: Where


@dataclass(frozen=True, slots=True)
class Equals:
    fact: str
    value: bool | str
    where: Where


@dataclass(frozen=True, slots=True)
class OneOf:
    fact: str
    values: tuple[str, ...]
    where: Where


@dataclass(frozen=True, slots=True)
class Known:
    fact: str
    known: bool
    where: Where


@dataclass(frozen=True, slots=True)
class Reached:
    node: str
    where: Where


@dataclass(frozen=True, slots=True)
class AllOf:
    items: tuple[Condition, ...]
    where: Where


@dataclass(frozen=True, slots=True)
class AnyOf:
    items: tuple[Condition, ...]
    where: Where


@dataclass(frozen=True, slots=True)
class Not:
    item: Condition
    where: Where


Condition = Compare | Equals | OneOf | Known | Reached | AllOf | AnyOf | Not
FactTest = Compare | Equals | OneOf | Known


def parse_condition(raw: Any) -> Condition:
    """Build a condition from raw YAML; a mistake raises `ConditionSyntaxError` with its line."""
    if isinstance(raw, Compare | Equals | OneOf | Known | Reached | AllOf | AnyOf | Not):
        return raw
    where: Where = getattr(raw, "where", ("<pack>", None))
    if not isinstance(raw, dict):
        raise ConditionSyntaxError(where, f"a condition is a mapping such as {{fact: ..., below: ...}}, not {raw!r}")
    keys = set(raw)
    for joiner in ("all", "any"):
        if joiner in keys:
            if keys != {joiner}:
                raise ConditionSyntaxError(where, f"`{joiner}` stands alone in its mapping; found {sorted(keys)}")
            items = raw[joiner]
            if not isinstance(items, list) or not items:
                raise ConditionSyntaxError(where, f"`{joiner}` takes a non-empty list of conditions")
            parsed = tuple(parse_condition(item) for item in items)
            return AllOf(parsed, where) if joiner == "all" else AnyOf(parsed, where)
    if "not" in keys:
        if keys != {"not"}:
            raise ConditionSyntaxError(where, f"`not` stands alone in its mapping; found {sorted(keys)}")
        return Not(parse_condition(raw["not"]), where)
    if "reached" in keys:
        if keys != {"reached"} or not isinstance(raw["reached"], str):
            raise ConditionSyntaxError(where, "write `{reached: node_id}` and nothing else in that mapping")
        return Reached(raw["reached"], where)
    if "fact" not in keys:
        raise ConditionSyntaxError(
            where, f"a condition needs `fact:` (or all/any/not/reached); found {sorted(keys) or 'nothing'}"
        )
    fact = raw["fact"]
    if not isinstance(fact, str):
        raise ConditionSyntaxError(where, f"`fact` names a fact, not {fact!r}")
    operators = [key for key in keys if key in _OPERATORS]
    unexpected = keys - {"fact", "unit", *_OPERATORS}
    if unexpected:
        raise ConditionSyntaxError(
            where, f"unknown word(s) {sorted(unexpected)}; a test uses one of {list(_OPERATORS)}"
        )
    if len(operators) != 1:
        raise ConditionSyntaxError(where, f"a test on `{fact}` needs exactly one of {list(_OPERATORS)}")
    operator = operators[0]
    argument = raw[operator]
    unit = raw.get("unit")
    if unit is not None and not isinstance(unit, str):
        raise ConditionSyntaxError(where, f"`unit` is text such as mmol/L, not {unit!r}")
    if operator in COMPARISONS:
        if operator == "between":
            if not isinstance(argument, list) or len(argument) != 2:
                raise ConditionSyntaxError(where, "`between` takes two limits: [low, high] (both included)")
            limits = tuple(_threshold(item, unit, where) for item in argument)
        else:
            limits = (_threshold(argument, unit, where),)
        return Compare(fact, operator, limits, where)
    if unit is not None:
        raise ConditionSyntaxError(where, f"`unit` belongs to a number comparison, not to `{operator}`")
    if operator == "is":
        if not isinstance(argument, bool | str):
            raise ConditionSyntaxError(where, f"`is` takes true, false or a word, not {argument!r}")
        return Equals(fact, argument, where)
    if operator == "in":
        if not isinstance(argument, list) or not argument or not all(isinstance(v, str) for v in argument):
            raise ConditionSyntaxError(where, "`in` takes a non-empty list of words")
        return OneOf(fact, tuple(argument), where)
    if not isinstance(argument, bool):
        raise ConditionSyntaxError(where, "`known` takes true or false")
    return Known(fact, argument, where)


def _threshold(item: Any, unit: str | None, where: Where) -> Threshold:
    if isinstance(item, bool):
        raise ConditionSyntaxError(where, f"a limit is a number or a setting id, not {item!r}")
    if isinstance(item, int | float):
        return Threshold(float(item), None, unit)
    if isinstance(item, str):
        return Threshold(None, item, unit)
    raise ConditionSyntaxError(where, f"a limit is a number or a setting id, not {item!r}")


def walk_tests(condition: Condition) -> Iterator[FactTest | Reached]:
    """Every leaf test (fact tests and `reached`) inside a condition."""
    if isinstance(condition, AllOf | AnyOf):
        for item in condition.items:
            yield from walk_tests(item)
    elif isinstance(condition, Not):
        yield from walk_tests(condition.item)
    else:
        yield condition


def facts_of(condition: Condition) -> tuple[str, ...]:
    """The fact names a condition reads, in order of first use."""
    seen: dict[str, None] = {}
    for test in walk_tests(condition):
        if not isinstance(test, Reached):
            seen.setdefault(test.fact, None)
    return tuple(seen)


# --- compiling -------------------------------------------------------------------------


@dataclass(frozen=True, slots=True)
class Limits:
    """What the compiler needs from a checked pack: setting values and tree outcomes."""

    settings: Mapping[str, float]
    tree_outcomes: Mapping[str, tuple[str, ...]]


def resolve(threshold: Threshold, limits: Limits) -> float:
    if threshold.setting is not None:
        return limits.settings[threshold.setting]
    assert threshold.number is not None
    return threshold.number


def node_key(node: str) -> str:
    return "@node:" + node


def outcome_key(tree: str, outcome: str) -> str:
    return f"@outcome:{tree}={outcome}"


def compile_condition(condition: Condition, limits: Limits) -> Compiled:
    """Turn a checked condition into a closure over the walk's environment."""
    if isinstance(condition, AllOf):
        parts = tuple(compile_condition(item, limits) for item in condition.items)

        def all_of(env: Env) -> int:
            result = TRUE
            for part in parts:
                value = part(env)
                if value == FALSE:
                    return FALSE
                if value < result:
                    result = value
            return result

        return all_of
    if isinstance(condition, AnyOf):
        parts = tuple(compile_condition(item, limits) for item in condition.items)

        def any_of(env: Env) -> int:
            result = FALSE
            for part in parts:
                value = part(env)
                if value == TRUE:
                    return TRUE
                if value > result:
                    result = value
            return result

        return any_of
    if isinstance(condition, Not):
        inner_compiled = compile_condition(condition.item, limits)
        return lambda env: TRUE - inner_compiled(env)
    if isinstance(condition, Reached):
        key = node_key(condition.node)
        return lambda env: env[key]  # type: ignore[return-value]
    if condition.fact in limits.tree_outcomes:
        return _compile_outcome_test(condition, limits.tree_outcomes[condition.fact])
    if isinstance(condition, Compare):
        return _compile_compare(condition, tuple(resolve(t, limits) for t in condition.thresholds))
    name = condition.fact
    if isinstance(condition, Known):
        yes, no = (TRUE, FALSE) if condition.known else (FALSE, TRUE)
        return lambda env: no if env.get(name) is None else yes
    wanted = frozenset([condition.value] if isinstance(condition, Equals) else condition.values)

    def member(env: Env) -> int:
        value = env.get(name)
        if value is None:
            return UNKNOWN
        return TRUE if value in wanted else FALSE

    return member


def _compile_outcome_test(condition: FactTest, outcomes: tuple[str, ...]) -> Compiled:
    if isinstance(condition, Known):
        constant = TRUE if condition.known else FALSE  # a tree always ends somewhere
        return lambda env: constant
    if isinstance(condition, Equals):
        wanted: tuple[str, ...] = (str(condition.value),)
    elif isinstance(condition, OneOf):
        wanted = condition.values
    else:
        raise AssertionError("checked packs compare tree outcomes only with is/in/known")
    keys = tuple(outcome_key(condition.fact, outcome) for outcome in wanted if outcome in outcomes)
    if len(keys) == 1:
        key = keys[0]
        return lambda env: env[key]  # type: ignore[return-value]

    def outcome_in(env: Env) -> int:
        result = FALSE
        for key in keys:
            value: int = env[key]  # type: ignore[assignment]
            if value == TRUE:
                return TRUE
            if value > result:
                result = value
        return result

    return outcome_in


def _compile_compare(condition: Compare, values: tuple[float, ...]) -> Compiled:
    name, operator = condition.fact, condition.operator
    if operator == "between":
        low, high = values

        def between(env: Env) -> int:
            value = env.get(name)
            if value is None:
                return UNKNOWN
            if isinstance(value, Bound):
                return _bound_between(value, low, high)
            return TRUE if low <= value <= high else FALSE  # type: ignore[operator]

        return between
    limit = values[0]
    exact = _EXACT[operator]
    bounded = _BOUNDED[operator]

    def compare(env: Env) -> int:
        value = env.get(name)
        if value is None:
            return UNKNOWN
        if isinstance(value, Bound):
            return bounded(value, limit)
        return TRUE if exact(value, limit) else FALSE  # type: ignore[arg-type]

    return compare


_EXACT: dict[str, Callable[[float, float], bool]] = {
    "below": lambda v, t: v < t,
    "at_most": lambda v, t: v <= t,
    "above": lambda v, t: v > t,
    "at_least": lambda v, t: v >= t,
}


def _below(bound: Bound, limit: float) -> int:
    # "<L" lies wholly below t when L <= t; ">L" can never be below t when L >= t.
    if bound.qualifier == "<":
        return TRUE if bound.limit <= limit else UNKNOWN
    return FALSE if bound.limit >= limit else UNKNOWN


def _above(bound: Bound, limit: float) -> int:
    if bound.qualifier == ">":
        return TRUE if bound.limit >= limit else UNKNOWN
    return FALSE if bound.limit <= limit else UNKNOWN


_BOUNDED: dict[str, Callable[[Bound, float], int]] = {
    "below": _below,
    "at_most": _below,  # open bounds: "<L" with L <= t is also at most t
    "above": _above,
    "at_least": _above,
}


def _bound_between(bound: Bound, low: float, high: float) -> int:
    if bound.qualifier == "<":
        return FALSE if bound.limit <= low else UNKNOWN
    return FALSE if bound.limit >= high else UNKNOWN


# --- rendering -------------------------------------------------------------------------


def render_condition(
    condition: Condition,
    labels: Mapping[str, str],
    settings: Mapping[str, tuple[float, str | None]],
    *,
    top: bool = True,
) -> str:
    """A readable sentence fragment: "urine chloride below 20 mmol/L (setting urine_cl_low)"."""
    if isinstance(condition, AllOf | AnyOf):
        joiner = " and " if isinstance(condition, AllOf) else " or "
        text = joiner.join(render_condition(item, labels, settings, top=False) for item in condition.items)
        return text if top else f"({text})"
    if isinstance(condition, Not):
        inner = condition.item
        if isinstance(inner, Known):
            return render_condition(Known(inner.fact, not inner.known, inner.where), labels, settings, top=False)
        if isinstance(inner, Equals | OneOf):
            # "room is not greenhouse" reads better than "not room is greenhouse".
            return render_condition(inner, labels, settings, top=False).replace(" is ", " is not ", 1)
        return f"not ({render_condition(inner, labels, settings)})"
    if isinstance(condition, Reached):
        return f"the walk reached `{condition.node}`"
    label = labels.get(condition.fact, condition.fact.replace("_", " "))
    if isinstance(condition, Known):
        return f"{label} {'is given' if condition.known else 'is not given'}"
    if isinstance(condition, Equals):
        value = condition.value
        word = ("yes" if value else "no") if isinstance(value, bool) else value
        return f"{label} is {word}"
    if isinstance(condition, OneOf):
        return f"{label} is one of {', '.join(condition.values)}"

    def limit_text(threshold: Threshold) -> str:
        if threshold.setting is not None and threshold.setting in settings:
            number, unit = settings[threshold.setting]
            shown = format_number(number) + (f" {unit}" if unit else "")
            return f"{shown} (setting {threshold.setting})"
        shown = format_number(threshold.number or 0.0) if threshold.number is not None else str(threshold.setting)
        return shown + (f" {threshold.unit}" if threshold.unit else "")

    if condition.operator == "between":
        low, high = condition.thresholds
        return f"{label} between {limit_text(low)} and {limit_text(high)}"
    return f"{label} {COMPARISONS[condition.operator]} {limit_text(condition.thresholds[0])}"


def truth_of(value: int) -> Truth:
    return TRUTHS[value]
