"""The metabolic-alkalosis differential: derive facts, walk the shipped pack, shape the result.

    pack = rule_pack(ALKALOSIS_PACK, [Path("our-rules")])      # shipped rules/alkalosis + our-rules/alkalosis
    result = evaluate_alkalosis(case, read_acid_base(case), pack, calculations=compute_calculations(case))
    result.chloride_class, result.differential[0].cause, result.json_ready()

The pack applies when the reading lists a metabolic alkalosis, established or possible
(a "hidden" one found through the anion gap included); otherwise the result says it does not apply
and holds no differential.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any, Literal

from pydantic import BaseModel, ConfigDict

from notegen._format import join_words
from notegen.acidbase.calculations import Calculation
from notegen.acidbase.model import AcidBaseReading
from notegen.case.model import Case
from notegen.engine import Fact, FactInput, RulePack, walk
from notegen.engine.facts import as_fact, plain_value
from notegen.engine.results import EvidenceResult, OpenEvidence, Suggestion
from notegen.knowledge import shipped_knowledge
from notegen.knowledge.settings import AcidBaseSettings
from notegen.workup.facts import derive_facts
from notegen.workup.model import (
    CauseEntry,
    ChlorideClass,
    Evidence,
    FactorEntry,
    MechanismEntry,
    SuggestedTest,
    TraceEntry,
)

JsonValue = float | bool | str | None


class RuleResult(BaseModel):
    """What the pack concludes for one case; the entries are the assessment's own types."""

    model_config = ConfigDict(frozen=True, extra="forbid")

    applies: bool
    alkalosis: Literal["established", "possible"] | None
    chloride_class: ChlorideClass | None
    chloride_notes: tuple[str, ...] = ()
    resistant_pattern: str | None = None
    generation: tuple[MechanismEntry, ...] = ()
    differential: tuple[CauseEntry, ...] = ()
    maintenance: tuple[FactorEntry, ...] = ()
    next_tests: tuple[SuggestedTest, ...] = ()
    trace: tuple[TraceEntry, ...] = ()
    facts: dict[str, JsonValue] = {}
    pack: str = ""

    def json_ready(self) -> dict[str, Any]:
        """The JSON shape of the issue: `chloride_class`, `differential`, `maintenance`, `next_tests`, ..."""
        return self.model_dump(mode="json", by_alias=True)


def _alkalosis(reading: AcidBaseReading) -> Literal["established", "possible"] | None:
    if "metabolic_alkalosis" in reading.disorders:
        return "established"
    if "metabolic_alkalosis" in reading.possible_disorders:
        return "possible"
    return None


def _evidence(item: EvidenceResult) -> Evidence:
    return Evidence(id=item.id, strength=item.strength, text=item.text, facts=dict(item.facts), source=item.source)  # type: ignore[arg-type]


def _not_assessable_without(pack: RulePack, open_items: Sequence[OpenEvidence]) -> tuple[str, ...]:
    """The tests (by label) whose missing result could have argued FOR a cause, firmly, each once.

    Only facts a test provides count: a fact the walk derives (a tree's outcome) is no value to send for.
    """
    by_fact = {fact: test.label for test in pack.tests for fact in test.provides}
    firm = [item for item in open_items if item.supporting and item.strength != "weak"]
    labels = [by_fact[name] for item in firm for name in item.missing if name in by_fact]
    return tuple(dict.fromkeys(labels))


def _undecided(pack: RulePack, item: OpenEvidence) -> str:
    names = [pack.facts[n].display_label if n in pack.facts else f"the {n.replace('_', ' ')}" for n in item.missing]
    side = "for" if item.supporting else "against"
    lacking = f"; {', '.join(names)} not known" if names else ""
    return f"{side} ({item.strength}): {item.condition}{lacking}"


def _conditional(pack: RulePack, suggestion: Suggestion) -> dict[str, Any]:
    """The conditional state of a suggested test: pending which facts, and the clause the note shows."""
    if not suggestion.conditional:
        return {}
    clauses: list[str] = []
    unworded: list[str] = []  # facts the pack gives no clause for, named by their label
    for name, clause in zip(suggestion.conditional_on, suggestion.conditional_says, strict=True):
        if clause:
            clauses.append(clause)
        else:
            unworded.append(pack.facts[name].display_label if name in pack.facts else name)
    parts = [f"if {join_words(clauses, 'or')}"] if clauses else []
    parts += [f"depending on {join_words(unworded)}"] if unworded else []
    says = ", or ".join(parts)
    return {"conditional": True, "conditional_on": suggestion.conditional_on, "conditional_says": says}


def evaluate_alkalosis(
    case: Case,
    reading: AcidBaseReading,
    pack: RulePack | None = None,
    *,
    calculations: Mapping[str, Calculation] | None = None,
    extra_facts: Mapping[str, FactInput] | None = None,
    explain: bool = False,
    settings: AcidBaseSettings | None = None,
) -> RuleResult:
    """Run the alkalosis pack when the reading finds a metabolic alkalosis.

    `extra_facts` adds or replaces facts the case model does not hold (renin, aldosterone, a diuretic
    screen, a cortisol evaluation). `explain` adds the trace of the walk.
    """
    pack = pack or shipped_knowledge().alkalosis_pack
    found = _alkalosis(reading)
    label = f"{pack.id} {pack.spec.pack.version}"
    if found is None:
        return RuleResult(applies=False, alkalosis=None, chloride_class=None, pack=label)
    facts: dict[str, Fact] = derive_facts(case, reading, pack, calculations, settings)
    for name, value in (extra_facts or {}).items():
        facts[name] = as_fact(value)
    result = walk(pack, facts)
    chloride = result.outcome("chloride_class")
    pattern = result.outcome("resistant_pattern")
    generation = tuple(
        MechanismEntry(mechanism=f.id, label=f.label, status=f.status, text=f.text, source=f.source)
        for f in result.factors
        if f.group == "generation"
    )
    maintenance = tuple(
        FactorEntry(factor=f.id, label=f.label, status=f.status, text=f.text, source=f.source)
        for f in result.factors
        if f.group == "maintenance"
    )
    forms = {cause.id: cause.form_of for cause in pack.spec.causes if cause.form_of is not None}
    differential = tuple(
        CauseEntry.model_validate(
            {
                "cause": c.id,
                "label": c.label,
                "tier": c.tier,
                "for": tuple(_evidence(e) for e in c.supporting),
                "against": tuple(_evidence(e) for e in c.opposing),
                "undecided": tuple(_undecided(pack, o) for o in c.open),
                "not_assessable_without": _not_assessable_without(pack, c.open),
                "form_of": forms.get(c.id),
            }
        )
        for c in result.causes
    )
    tests = tuple(
        SuggestedTest(test=s.test, label=s.label, why=s.why, **_conditional(pack, s)) for s in result.suggestions
    )
    trace = tuple(TraceEntry(**step.as_dict()) for step in result.trace()) if explain else ()
    return RuleResult(
        applies=True,
        alkalosis=found,
        chloride_class=chloride.outcome,  # type: ignore[arg-type]
        chloride_notes=(*chloride.notes, *pattern.notes),
        resistant_pattern=pattern.outcome,
        generation=generation,
        differential=differential,
        maintenance=maintenance,
        next_tests=tests,
        trace=trace,
        facts={name: plain_value(fact) for name, fact in facts.items()},
        pack=label,
    )
