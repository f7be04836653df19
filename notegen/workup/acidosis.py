"""The metabolic-acidosis differential: derive facts, walk the shipped pack, shape the result.

    pack = rule_pack(ACIDOSIS_PACK, [Path("our-rules")])      # shipped rules/acidosis + our-rules/acidosis
    result = evaluate_acidosis(case, read_acid_base(case), pack, calculations=calculations)
    result.kind, result.differential[0].cause, result.json_ready()

The pack is walked by the same generic engine as the alkalosis pack. It applies when the reading
establishes a metabolic acidosis whose anion gap is known (alone, or beside an alkalosis); the
pack's `gap_pattern` tree names the causes in view for the kind of acidosis (its `consider`), and
only those enter the differential. Otherwise `evaluate_acidosis` returns None.
"""

from __future__ import annotations

from collections.abc import Mapping

from notegen.acidbase.calculations import Calculation
from notegen.acidbase.model import AcidBaseReading
from notegen.case.model import Case
from notegen.engine import Fact, FactInput, RulePack, walk
from notegen.engine.facts import as_fact
from notegen.engine.results import Suggestion
from notegen.knowledge import shipped_knowledge
from notegen.workup.acidosis_facts import acidosis_kind, derive_acidosis_facts
from notegen.workup.acidosis_model import AcidosisTest, AcidosisWorkup
from notegen.workup.alkalosis import _conditional, _evidence, _undecided
from notegen.workup.model import CauseEntry, TraceEntry

KIND_TREE = "gap_pattern"  # the tree whose leaf names the causes in view
AMMONIUM_TREE = "ammonium_excretion"


def _test(pack: RulePack, suggestion: Suggestion) -> AcidosisTest:
    purposes = {test.id: test.purpose for test in pack.spec.tests}
    return AcidosisTest(
        test=suggestion.test,
        label=suggestion.label,
        why=suggestion.why,
        purpose=purposes.get(suggestion.test, ""),
        settles=tuple(d.label for d in suggestion.decides if d.kind == "tree"),
        bears_on=tuple(d.label for d in suggestion.decides if d.kind == "cause"),
        **_conditional(pack, suggestion),
    )


def evaluate_acidosis(
    case: Case,
    reading: AcidBaseReading,
    pack: RulePack | None = None,
    *,
    calculations: Mapping[str, Calculation] | None = None,
    extra_facts: Mapping[str, FactInput] | None = None,
    explain: bool = False,
) -> AcidosisWorkup | None:
    """Run the acidosis pack when the reading finds a metabolic acidosis with a known gap; else None.

    `extra_facts` adds or replaces facts the case model does not hold (toxic alcohol or acetaminophen
    levels). `explain` adds the trace of the walk.
    """
    kind = acidosis_kind(reading)
    if kind is None:
        return None
    pack = pack or shipped_knowledge().acidosis_pack
    facts: dict[str, Fact] = derive_acidosis_facts(case, reading, calculations, pack)
    for name, value in (extra_facts or {}).items():
        facts[name] = as_fact(value)
    result = walk(pack, facts)
    outcomes = {o.tree: o for o in result.outcomes}
    in_view = set(outcomes[KIND_TREE].consider) if KIND_TREE in outcomes else {c.id for c in result.causes}
    differential = tuple(
        CauseEntry.model_validate(
            {
                "cause": c.id,
                "label": c.label,
                "tier": c.tier,
                "for": tuple(_evidence(e) for e in c.supporting),
                "against": tuple(_evidence(e) for e in c.opposing),
                "undecided": tuple(_undecided(pack, o) for o in c.open),
            }
        )
        for c in result.causes
        if c.id in in_view
    )
    ammonium = outcomes.get(AMMONIUM_TREE)
    return AcidosisWorkup(
        kind=kind,
        differential=differential,
        next_tests=tuple(_test(pack, s) for s in result.suggestions),
        ammonium=ammonium.outcome if ammonium is not None else None,
        notes=ammonium.notes if ammonium is not None else (),
        trace=tuple(TraceEntry(**step.as_dict()) for step in result.trace()) if explain else (),
        pack=f"{pack.id} {pack.spec.pack.version}",
    )
