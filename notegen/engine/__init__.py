"""A generic YAML rule engine: facts in, a walked decision tree and ranked causes out.

It knows nothing of medicine; the clinical pack under `rules/` and `notegen.workup.facts` give it meaning.

    pack = load_pack([shipped_dir, service_dir])   # later folders override by id
    result = walk(pack, {"soil_moisture": NumberFact(12, "%"), "wilting": True})
    result.outcome("watering_need").outcome, result.causes[0].tier, result.trace()
"""

from __future__ import annotations

from notegen.engine.conditions import Truth
from notegen.engine.facts import BooleanFact, Fact, FactInput, MissingFact, NumberFact, TextFact
from notegen.engine.pack import PackSpec, Problem
from notegen.engine.program import RulePack, check_pack, load_pack
from notegen.engine.results import (
    CauseResult,
    Decision,
    EvidenceResult,
    FactorResult,
    OpenEvidence,
    Suggestion,
    Tier,
    TraceStep,
    TreeOutcome,
)
from notegen.engine.walk import WalkResult, walk

__all__ = [
    "BooleanFact",
    "CauseResult",
    "Decision",
    "EvidenceResult",
    "Fact",
    "FactInput",
    "FactorResult",
    "MissingFact",
    "NumberFact",
    "OpenEvidence",
    "PackSpec",
    "Problem",
    "RulePack",
    "Suggestion",
    "TextFact",
    "Tier",
    "TraceStep",
    "TreeOutcome",
    "Truth",
    "WalkResult",
    "check_pack",
    "load_pack",
    "walk",
]
