"""General management considerations, selected from `rules/management.yaml` for one assessment.

Every consideration says when it applies (`when`), when it must not be printed (`never_when`, each
with its reason and source) and, optionally, sentences added when a further condition holds
(`also`). The conditions are those of the rule engine (`notegen.engine.conditions`), evaluated with
its three-valued logic over the facts of `notegen.assess.facts`:
- a consideration is printed only when `when` is true;
- a contraindication keeps it out when it is true or cannot be decided (a missing value): a
  sentence the clinician must strike is worse than one left out;
- an `also` sentence is added only when its condition is true.

Loading checks every condition against the fact catalogue of the LOADED alkalosis pack (the shipped
one with any service folder laid over it), so a cause a service adds can be named at once and a
typo fails with its file and line. No doses: the file holds considerations for the clinician.
"""

from __future__ import annotations

import functools
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Annotated, Any

from pydantic import Field, ValidationError

from notegen.assess.facts import MedicationGroup, consideration_catalogue, consideration_facts
from notegen.assess.model import Assessment, WithheldConsideration
from notegen.engine import RulePack
from notegen.engine.checks import check_conditions
from notegen.engine.conditions import FALSE, TRUE, Compiled, ConditionSyntaxError, Env, Limits, compile_condition
from notegen.engine.facts import BooleanFact, Fact, MissingFact, TextFact, display_fact, fact_value
from notegen.engine.pack import ConditionField, FactSpec, Id, PackModel, Problem, SettingSpec, Text
from notegen.engine.source import PackSourceError, SourceDict, locate, read_yaml
from notegen.engine.wording import Template, parse_template
from notegen.errors import RulePackError
from notegen.knowledge import ACIDOSIS_PACK, ALKALOSIS_PACK, rule_pack, shipped_knowledge
from notegen.resources import rules_dir

__all__ = [
    "Chosen",
    "Considerations",
    "Verdict",
    "check_considerations",
    "consider",
    "load_considerations",
    "management_considerations",
    "select_considerations",
    "weigh_considerations",
    "withheld_considerations",
]

FILE_NAME = "management.yaml"
SECTIONS = ("settings", "medication_groups", "considerations")


# The file's content ----------------------------------------------------------------------------


class Contraindication(PackModel):
    """A condition under which the consideration must not be printed, with its reason and source."""

    if_: ConditionField = Field(alias="if")
    because: Text
    source: Text


class Addition(PackModel):
    """A sentence added to the consideration when its condition holds."""

    if_: ConditionField = Field(alias="if")
    says: Text
    source: Text


class ConsiderationSpec(PackModel):
    id: Id
    when: ConditionField
    never_when: tuple[Contraindication, ...] = ()
    says: Text
    also: tuple[Addition, ...] = ()
    source: Text


class GroupSpec(PackModel):
    id: Id
    classes: Annotated[tuple[str, ...], Field(min_length=1)]
    label: Text


class ManagementFile(PackModel):
    settings: tuple[SettingSpec, ...] = ()
    medication_groups: tuple[GroupSpec, ...] = ()
    considerations: tuple[ConsiderationSpec, ...] = ()


# Loading ---------------------------------------------------------------------------------------


def _explain(error: ValidationError, raw: SourceDict) -> list[Problem]:
    problems: list[Problem] = []
    for detail in error.errors():
        cause = (detail.get("ctx") or {}).get("error")
        if isinstance(cause, ConditionSyntaxError):
            problems.append((cause.where[0], cause.where[1], cause.message))
            continue
        loc = tuple(detail["loc"])
        where = locate(raw, loc[:-1] if detail["type"] == "missing" else loc)
        field = ".".join(str(part) for part in loc)
        problems.append((where[0], where[1], f"`{field}`: {detail['msg'].removeprefix('Value error, ')}"))
    return problems


def _read(path: Path, problems: list[Problem]) -> ManagementFile | None:
    try:
        raw = read_yaml(path)
    except PackSourceError as error:
        problems.append((error.where[0], error.where[1], error.message))
        return None
    if not isinstance(raw, SourceDict) or not raw:
        problems.append((str(path), 1, f"expected a mapping with the sections {', '.join(SECTIONS)}"))
        return None
    unknown = [key for key in raw if key not in SECTIONS]
    for key in unknown:
        where = raw.where_of(key)
        problems.append((where[0], where[1], f"unknown section `{key}`; sections are {', '.join(SECTIONS)}"))
    if unknown:
        return None
    try:
        return ManagementFile.model_validate(raw)
    except ValidationError as error:
        problems.extend(_explain(error, raw))
        return None


def _merge(files: Sequence[ManagementFile], problems: list[Problem]) -> ManagementFile:
    """Lay each file over the ones before it: an item with a known id replaces it, a new id is added."""
    merged: dict[str, dict[str, Any]] = {name: {} for name in SECTIONS}
    for file in files:
        for name in SECTIONS:
            seen: dict[str, int | None] = {}
            for item in getattr(file, name):
                if item.id in seen:
                    message = f"id `{item.id}` is used twice (first on line {seen[item.id]})"
                    problems.append((item.where[0], item.where[1], message))
                seen[item.id] = item.where[1]
                merged[name][item.id] = item
    return ManagementFile.model_construct(
        settings=tuple(merged["settings"].values()),
        medication_groups=tuple(merged["medication_groups"].values()),
        considerations=tuple(merged["considerations"].values()),
    )


@dataclass(frozen=True)
class _Compiled:
    spec: ConsiderationSpec
    when: Compiled
    never: tuple[Compiled, ...]
    also: tuple[tuple[Compiled, Template], ...]
    says: Template


@dataclass(frozen=True)
class Considerations:
    """A loaded, checked and compiled considerations file, with the pack whose facts it reads."""

    items: tuple[_Compiled, ...]
    pack: RulePack
    groups: tuple[MedicationGroup, ...]
    catalogue: Mapping[str, FactSpec]
    acidosis_pack: RulePack | None = None

    @property
    def specs(self) -> tuple[ConsiderationSpec, ...]:
        return tuple(item.spec for item in self.items)


def _settings(pack: RulePack, own: Sequence[SettingSpec]) -> list[SettingSpec]:
    shipped = [
        SettingSpec.model_validate({"id": name, "value": value, "unit": unit, "source": "the alkalosis pack"})
        for name, (value, unit) in pack.settings.items()
    ]
    return [*shipped, *own]


def _check(merged: ManagementFile, pack: RulePack, catalogue: Mapping[str, FactSpec]) -> list[Problem]:
    problems: list[Problem] = []
    settings = _settings(pack, merged.settings)
    for setting in merged.settings:
        if setting.id in pack.settings or setting.id in catalogue:
            where = setting.where
            problems.append((where[0], where[1], f"setting `{setting.id}` has the name of a pack setting or fact"))
    known_classes = {c for info in shipped_knowledge().medications.values() for c in info.classes}
    for group in merged.medication_groups:
        for name in group.classes:
            if name not in known_classes:
                where = group.where_of("classes")
                problems.append((where[0], where[1], f"medication class `{name}` is in no vocabulary entry"))
    conditions = []
    names = set(catalogue) | {s.id for s in settings}
    for item in merged.considerations:
        conditions += [item.when, *(c.if_ for c in item.never_when), *(a.if_ for a in item.also)]
        for text, where in ((item.says, item.where_of("says")), *((a.says, a.where_of("says")) for a in item.also)):
            for name in parse_template(text).names:
                if name not in names:
                    problems.append((where[0], where[1], f"placeholder `{{{name}}}` names no fact or setting"))
    problems += check_conditions(conditions, catalogue.values(), settings)
    return problems


def _compile(merged: ManagementFile, pack: RulePack) -> tuple[_Compiled, ...]:
    settings = {s.id: s.value for s in _settings(pack, merged.settings)}
    limits = Limits(settings, {})
    return tuple(
        _Compiled(
            spec=item,
            when=compile_condition(item.when, limits),
            never=tuple(compile_condition(c.if_, limits) for c in item.never_when),
            also=tuple((compile_condition(a.if_, limits), parse_template(" ".join(a.says.split()))) for a in item.also),
            says=parse_template(" ".join(item.says.split())),
        )
        for item in merged.considerations
    )


def _files(folders: tuple[Path, ...]) -> list[Path]:
    # The shipped file must exist; a service's folder need not change the considerations.
    return [folders[0] / FILE_NAME, *(f / FILE_NAME for f in folders[1:] if (f / FILE_NAME).is_file())]


def _build(
    folders: tuple[Path, ...], pack: RulePack, acidosis_pack: RulePack | None = None
) -> tuple[Considerations | None, list[Problem]]:
    problems: list[Problem] = []
    files = [parsed for path in _files(folders) if (parsed := _read(path, problems)) is not None]
    if problems:
        return None, problems
    merged = _merge(files, problems)
    groups = tuple(MedicationGroup(g.id, g.classes, g.label) for g in merged.medication_groups)
    catalogue = consideration_catalogue(pack, groups, acidosis_pack)
    problems += _check(merged, pack, catalogue)
    if problems:
        return None, sorted(set(problems), key=lambda p: (p[0], p[1] or 0, p[2]))
    return Considerations(_compile(merged, pack), pack, groups, catalogue, acidosis_pack), []


def _pack(service_folders: tuple[Path, ...]) -> RulePack:
    return rule_pack(ALKALOSIS_PACK, service_folders)


def _acidosis_pack(service_folders: tuple[Path, ...]) -> RulePack:
    return rule_pack(ACIDOSIS_PACK, service_folders)


@functools.lru_cache(maxsize=16)
def _load(resolved: tuple[Path, ...], given: tuple[Path, ...]) -> Considerations:
    # Cached by where the folders are (`resolved`); problems name the files as the user gave them.
    loaded, problems = _build((_shipped_folder(), *given), _pack(given), _acidosis_pack(given))
    if loaded is None:
        raise RulePackError(problems)
    return loaded


@functools.cache
def _shipped_folder() -> Path:
    # The shipped folder does not move while notegen runs; resolving it per case cost three `lstat`s.
    return rules_dir().resolve()


def load_considerations(rules_dirs: Sequence[Path] = ()) -> Considerations:
    """The shipped considerations, with those of each service folder laid over them by id."""
    given = tuple(Path(folder) for folder in rules_dirs)
    return _load(tuple(folder.resolve() for folder in given), given)


def check_considerations(rules_dirs: Sequence[Path] = ()) -> list[Problem]:
    """Every problem of the layered considerations, as (file, line, message); empty when they load.

    Checked against the alkalosis pack of the same folders; when that pack fails, its own check
    reports why, and the considerations are not checked here.
    """
    folders = tuple(Path(folder) for folder in rules_dirs)
    try:
        pack, acidosis_pack = _pack(folders), _acidosis_pack(folders)
    except RulePackError:
        return []
    return _build((_shipped_folder(), *folders), pack, acidosis_pack)[1]


# Selecting -------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Chosen:
    """A consideration printed for this case: its id and its text, placeholders filled."""

    id: str
    text: str


def _fill(template: Template, facts: Mapping[str, Fact], loaded: Considerations) -> str | None:
    values: dict[str, str] = {}
    for name in template.names:
        fact = facts.get(name, MissingFact())
        if isinstance(fact, MissingFact):
            return None  # never print "not given" where a name or value belongs
        spec = loaded.catalogue.get(name)
        values[name] = display_fact(fact, spec.decimals if spec is not None else None)
    return template.fill(values)


@dataclass(frozen=True)
class Verdict:
    """How one consideration fared for a case: whether `when` holds, and which contraindications keep it out.

    `blocked_by` holds the index in `never_when` of each contraindication that is true or undecided;
    `undecided` those of them that a missing value leaves open. Both are empty when it does not apply.
    """

    id: str
    applies: bool
    blocked_by: tuple[int, ...]
    undecided: tuple[int, ...] = ()


def _env(assessment: Assessment, loaded: Considerations) -> tuple[dict[str, Fact], Env]:
    facts = consideration_facts(assessment, loaded.pack, loaded.groups, loaded.acidosis_pack)
    # Yes/no and word facts are most of them; their value is read directly (fact_value for the rest).
    env: Env = {
        name: fact.value if isinstance(fact, BooleanFact | TextFact) else fact_value(fact)
        for name, fact in facts.items()
    }
    return facts, env


def _weigh(loaded: Considerations, env: Env) -> tuple[Verdict, ...]:
    verdicts: list[Verdict] = []
    for item in loaded.items:
        if item.when(env) != TRUE:
            verdicts.append(Verdict(item.spec.id, False, ()))  # contraindications matter only when it applies
            continue
        results = [test(env) for test in item.never]
        verdicts.append(
            Verdict(
                item.spec.id,
                True,
                tuple(index for index, value in enumerate(results) if value != FALSE),
                tuple(index for index, value in enumerate(results) if value not in (FALSE, TRUE)),
            )
        )
    return tuple(verdicts)


def _chosen(
    loaded: Considerations, verdicts: Sequence[Verdict], facts: Mapping[str, Fact], env: Env
) -> tuple[Chosen, ...]:
    chosen: list[Chosen] = []
    for item, verdict in zip(loaded.items, verdicts, strict=True):
        if not verdict.applies or verdict.blocked_by:
            continue
        text = _fill(item.says, facts, loaded)
        if text is None:
            continue
        extra = [_fill(says, facts, loaded) for test, says in item.also if test(env) == TRUE]
        chosen.append(Chosen(item.spec.id, " ".join([text, *(e for e in extra if e)])))
    return tuple(chosen)


def _withheld(loaded: Considerations, verdicts: Sequence[Verdict]) -> tuple[WithheldConsideration, ...]:
    withheld: list[WithheldConsideration] = []
    for item, verdict in zip(loaded.items, verdicts, strict=True):
        if not verdict.applies or not verdict.blocked_by:
            continue
        reasons = []
        for index in verdict.blocked_by:
            contraindication = item.spec.never_when[index]
            because = " ".join(contraindication.because.split())
            if index in verdict.undecided:
                because = f"cannot be ruled out from the values given: {because}"
            reasons.append(f"{because} [{' '.join(contraindication.source.split())}]")
        withheld.append(WithheldConsideration(id=verdict.id, reasons=tuple(reasons)))
    return tuple(withheld)


def weigh_considerations(assessment: Assessment, loaded: Considerations) -> tuple[Verdict, ...]:
    """Every consideration's verdict for this assessment, in file order (printed or not)."""
    return _weigh(loaded, _env(assessment, loaded)[1])


def select_considerations(assessment: Assessment, loaded: Considerations) -> tuple[Chosen, ...]:
    """The considerations whose `when` holds and no contraindication can hold, in file order."""
    facts, env = _env(assessment, loaded)
    return _chosen(loaded, _weigh(loaded, env), facts, env)


def consider(
    assessment: Assessment, *, rules_dirs: Sequence[Path] = ()
) -> tuple[tuple[str, ...], tuple[WithheldConsideration, ...]]:
    """The considerations to print, and those that apply but a contraindication keeps out (with why)."""
    loaded = load_considerations(rules_dirs)
    facts, env = _env(assessment, loaded)
    verdicts = _weigh(loaded, env)
    return tuple(item.text for item in _chosen(loaded, verdicts, facts, env)), _withheld(loaded, verdicts)


def withheld_considerations(
    assessment: Assessment, *, rules_dirs: Sequence[Path] = ()
) -> tuple[WithheldConsideration, ...]:
    """The considerations that apply but that a contraindication keeps out, each with its reasons and sources."""
    return consider(assessment, rules_dirs=rules_dirs)[1]


def management_considerations(assessment: Assessment, *, rules_dirs: Sequence[Path] = ()) -> tuple[str, ...]:
    """General considerations for this assessment, phrased for the clinician to weigh, no doses."""
    return consider(assessment, rules_dirs=rules_dirs)[0]
