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
typo fails with its file and line (`notegen.assess.management_file`). The shipped file alone is
used as the wheel's build hook checked it, while every rule file matches. No doses: the file holds
considerations for the clinician.
"""

from __future__ import annotations

import functools
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path

from notegen._format import format_value
from notegen.assess.facts import EVIDENCE_PREFIX, MedicationGroup, consideration_facts
from notegen.assess.management_file import (
    PREPARED_NAME,
    Checked,
    ConsiderationSpec,
    ManagementFile,
    check_file,
    prepare_considerations,
    setting_specs,
)
from notegen.assess.model import Assessment, WithheldConsideration
from notegen.engine import RulePack
from notegen.engine.conditions import FALSE, TRUE, Compiled, Env, Limits, compile_condition
from notegen.engine.facts import BooleanFact, Fact, MissingFact, TextFact, display_fact, fact_value
from notegen.engine.pack import FactSpec, Problem
from notegen.engine.wording import Template, parse_template
from notegen.errors import RulePackError
from notegen.knowledge import ACIDOSIS_PACK, ALKALOSIS_PACK, rule_pack
from notegen.resources import rules_dir

__all__ = [
    "Chosen",
    "Considerations",
    "Verdict",
    "check_considerations",
    "consider",
    "consider_all",
    "load_considerations",
    "prepare_considerations",
    "management_considerations",
    "select_considerations",
    "weigh_considerations",
    "withheld_considerations",
]

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
    acidosis_causes: tuple[str, ...] = ()  # the acidosis pack's cause ids: `cause_<id>` facts
    setting_text: Mapping[str, str] = field(default_factory=dict)  # "{k_before_insulin_from}" -> "3.3 mmol/L"
    acidosis_evidence: tuple[str, ...] = ()  # the catalogue's `evidence_<cause>_<item>` facts

    @property
    def specs(self) -> tuple[ConsiderationSpec, ...]:
        return tuple(item.spec for item in self.items)


def _compile(merged: ManagementFile, pack: RulePack) -> tuple[_Compiled, ...]:
    settings = {s.id: s.value for s in setting_specs(pack, merged.settings)}
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


def _assemble(checked: Checked, pack: RulePack) -> Considerations:
    compiled = _compile(checked.merged, pack)
    settings = setting_specs(pack, checked.merged.settings)
    text = {s.id: format_value(s.value, s.unit) for s in settings}
    evidence = tuple(name for name in checked.catalogue if name.startswith(EVIDENCE_PREFIX))
    return Considerations(
        compiled, pack, checked.groups, checked.catalogue, checked.acidosis_causes, text, evidence
    )


def _pack(service_folders: tuple[Path, ...]) -> RulePack:
    return rule_pack(ALKALOSIS_PACK, service_folders)


def _acidosis_pack(service_folders: tuple[Path, ...]) -> RulePack:
    return rule_pack(ACIDOSIS_PACK, service_folders)


@functools.lru_cache(maxsize=16)
def _load(resolved: tuple[Path, ...], given: tuple[Path, ...]) -> Considerations:
    # Cached by where the folders are (`resolved`); problems name the files as the user gave them.
    pack = _pack(given)
    if not given and (prepared := _prepared()) is not None:
        return _assemble(prepared, pack)
    checked, problems = check_file((_shipped_folder(), *given), pack, _acidosis_pack(given))
    if checked is None:
        raise RulePackError(problems)
    return _assemble(checked, pack)


def _prepared() -> Checked | None:
    """The shipped considerations as the wheel's build hook checked them, while every rule file still matches."""
    from notegen.knowledge.prepared_pack import load_prepared
    from notegen.resources import prepared_packs_dir

    prepared = load_prepared(PREPARED_NAME, _shipped_folder(), prepared_packs_dir())
    return prepared if isinstance(prepared, Checked) else None


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
    return check_file((_shipped_folder(), *folders), pack, acidosis_pack)[1]


# Selecting -------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Chosen:
    """A consideration printed for this case: its id and its text, placeholders filled."""

    id: str
    text: str
    answers_alerts: tuple[str, ...] = ()  # alert codes whose advice this text carries


def _fill(template: Template, facts: Mapping[str, Fact], loaded: Considerations) -> str | None:
    values: dict[str, str] = {}
    for name in template.names:
        if name not in facts and name in loaded.setting_text:  # a setting the check allowed by name
            values[name] = loaded.setting_text[name]
            continue
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
    facts = consideration_facts(
        assessment, loaded.pack, loaded.groups, loaded.acidosis_causes, loaded.acidosis_evidence
    )
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
        chosen.append(Chosen(item.spec.id, " ".join([text, *(e for e in extra if e)]), item.spec.answers_alerts))
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


def consider_all(
    assessment: Assessment, *, rules_dirs: Sequence[Path] = ()
) -> tuple[tuple[Chosen, ...], tuple[WithheldConsideration, ...]]:
    """The considerations to print, with the alerts each answers, and those a contraindication keeps out."""
    loaded = load_considerations(rules_dirs)
    facts, env = _env(assessment, loaded)
    verdicts = _weigh(loaded, env)
    return _chosen(loaded, verdicts, facts, env), _withheld(loaded, verdicts)


def consider(
    assessment: Assessment, *, rules_dirs: Sequence[Path] = ()
) -> tuple[tuple[str, ...], tuple[WithheldConsideration, ...]]:
    """The considerations to print, and those that apply but a contraindication keeps out (with why)."""
    chosen, withheld = consider_all(assessment, rules_dirs=rules_dirs)
    return tuple(item.text for item in chosen), withheld


def withheld_considerations(
    assessment: Assessment, *, rules_dirs: Sequence[Path] = ()
) -> tuple[WithheldConsideration, ...]:
    """The considerations that apply but that a contraindication keeps out, each with its reasons and sources."""
    return consider(assessment, rules_dirs=rules_dirs)[1]


def management_considerations(assessment: Assessment, *, rules_dirs: Sequence[Path] = ()) -> tuple[str, ...]:
    """General considerations for this assessment, phrased for the clinician to weigh, no doses."""
    return consider(assessment, rules_dirs=rules_dirs)[0]
