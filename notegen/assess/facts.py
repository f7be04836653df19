"""The facts the management considerations read, derived from an assessment.

The considerations in `rules/management.yaml` are conditions of the rule engine
(`notegen.engine.conditions`), so they read flat, typed facts as the alkalosis pack does. This
module gives them:
- every fact of the alkalosis pack's catalogue (`notegen.workup.facts.derive_facts`), for any case;
- the reading: `metabolic_alkalosis`, `metabolic_acidosis` (established), `primary`, `ph_status`, `chronicity`,
  `anion_gap_status`, and `chloride_class` (the pack's tree outcome; missing without a work-up);
- `na` (serum sodium), `ca` (total calcium), `ionized_ca` and `glucose`;
- `cause_<id>` (true when the cause is likely or possible), for the acidosis pack also
  `cause_<id>_likely` (true when likely) and `evidence_<cause>_<item>` (true when that item of the
  pack counted FOR the cause, false otherwise: not met or undecided), so that a consideration can
  ask for a positive finding, not a tier alone; `factor_<id>` (true when present) and
  `test_<id>` (true when the test is suggested), one per id of the LOADED pack, so that a cause a
  service adds can be named at once;
- `alert_<code>`: the level of that alert (`critical`, `warning`, `info`) or `none`;
- `finding_<id>`: each finding of the vocabulary, false when not reported;
- `<group>_listed` and `<group>_names` for each medication group the considerations file declares.

The catalogue (`consideration_catalogue`) declares each fact's kind and unit, so that the engine's
load-time checks hold the considerations file to the same rules as the pack.
"""

from __future__ import annotations

import functools
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from typing import get_args

from notegen._format import join_words
from notegen.acidbase.model import Chronicity, GapStatus, PhStatus, Primary
from notegen.assess.model import Assessment
from notegen.case.model import Medication
from notegen.engine import BooleanFact, Fact, MissingFact, NumberFact, RulePack, TextFact
from notegen.engine.pack import FactSpec
from notegen.knowledge import shipped_knowledge
from notegen.workup.facts import derive_facts

__all__ = ["ALERT_CODES", "EVIDENCE_PREFIX", "MedicationGroup", "consideration_catalogue", "consideration_facts"]

# The alert codes notegen raises (notegen.acidbase); a test keeps this list and the code in step.
ALERT_CODES = (
    "severe_alkalemia",
    "severe_acidemia",
    "severe_hypokalemia",
    "hypokalemia",
    "severe_hyperkalemia",
    "hyperkalemia",
    "low_ionized_calcium",
    "hypomagnesemia",
    "high_bicarbonate_hypoventilation",
    "inconsistent_gas",
    "gas_panel_mismatch",
    "sample_unstated",
    "hypercalcemia",
    "severe_hypocalcemia",
    "severe_hyponatremia",
    "severe_hypernatremia",
    "hypoglycemia",
    "severe_hyperglycemia",
    "high_lactate",
    "toxic_salicylate",
    "severe_hypercapnia",
    "severe_hypocapnia",
    "hypercapnic_acidemia",
    "unsteady_creatinine",
)
ALERT_LEVELS = ("none", "info", "warning", "critical")
EVIDENCE_PREFIX = "evidence_"  # `evidence_<cause>_<item>`: an acidosis finding that counted for its cause
CHLORIDE_TREE = "chloride_class"


@dataclass(frozen=True)
class MedicationGroup:
    """Medication classes read together: `<id>_listed` (yes/no) and `<id>_names` (the names given)."""

    id: str
    classes: tuple[str, ...]
    label: str


def _spec(fact_id: str, kind: str, label: str, *, unit: str | None = None, values: Iterable[str] = ()) -> FactSpec:
    return FactSpec.model_validate(
        {"id": fact_id, "kind": kind, "label": label, "unit": unit, "values": tuple(values)}
        if kind == "enum"
        else {"id": fact_id, "kind": kind, "label": label, "unit": unit}
    )


def consideration_catalogue(
    pack: RulePack, groups: Sequence[MedicationGroup], acidosis_pack: RulePack | None = None
) -> dict[str, FactSpec]:
    """Every fact a consideration may read: the pack's catalogue and the facts this module adds.

    `acidosis_pack` adds `cause_<id>` for each cause of the acidosis work-up (likely or possible).
    """
    catalogue: dict[str, FactSpec] = dict(pack.facts)
    added = [
        _spec("metabolic_alkalosis", "boolean", "metabolic alkalosis established"),
        _spec("metabolic_acidosis", "boolean", "metabolic acidosis established"),
        _spec("primary", "enum", "primary disorder", values=get_args(Primary)),
        _spec("ph_status", "enum", "pH status", values=get_args(PhStatus)),
        _spec("chronicity", "enum", "chronicity of the respiratory disorder", values=get_args(Chronicity)),
        _spec("anion_gap_status", "enum", "anion gap", values=get_args(GapStatus)),
        _spec("na", "number", "sodium", unit="mmol/L"),
        _spec("ionized_ca", "number", "ionized calcium", unit="mmol/L"),
        _spec("ca", "number", "calcium", unit="mg/dL"),
        _spec("glucose", "number", "glucose", unit="mg/dL"),
    ]
    trees = {tree.id: tree for tree in pack.trees}
    if CHLORIDE_TREE in trees:
        added.append(_spec(CHLORIDE_TREE, "enum", "chloride class", values=trees[CHLORIDE_TREE].outcomes))
    added += [_spec(f"cause_{c.id}", "boolean", f"{c.label} likely or possible") for c in pack.causes]
    if acidosis_pack is not None:
        added += _acidosis_specs(acidosis_pack)
    added += [_spec(f"factor_{f.id}", "boolean", f"{f.label} present") for f in pack.factors]
    added += [_spec(f"test_{t.id}", "boolean", f"{t.label} suggested") for t in pack.tests]
    added += [_spec(f"alert_{code}", "enum", f"{code} alert", values=ALERT_LEVELS) for code in ALERT_CODES]
    for finding_id in _finding_ids():
        label = shipped_knowledge().finding_label(finding_id)
        added.append(_spec(f"finding_{finding_id}", "boolean", f"{label} reported"))
    for group in groups:
        added.append(_spec(f"{group.id}_listed", "boolean", f"{group.label} listed"))
        added.append(_spec(f"{group.id}_names", "text", f"{group.label} listed"))
    for spec in added:
        catalogue.setdefault(spec.id, spec)  # the pack's own fact wins a shared name
    return catalogue


def _acidosis_specs(acidosis_pack: RulePack) -> list[FactSpec]:
    specs: list[FactSpec] = []
    for cause in acidosis_pack.causes:
        specs.append(_spec(f"cause_{cause.id}", "boolean", f"{cause.label} likely or possible"))
        specs.append(_spec(f"cause_{cause.id}_likely", "boolean", f"{cause.label} likely"))
        for index in cause.evidence:
            item = acidosis_pack.evidence[index]
            if item.supporting:
                label = f"{item.id} counted for {cause.label}"
                specs.append(_spec(f"{EVIDENCE_PREFIX}{cause.id}_{item.id}", "boolean", label))
    return specs


def _acidosis_facts(
    assessment: Assessment, causes: Sequence[str], evidence: Sequence[str]
) -> dict[str, Fact]:
    entries = assessment.acidosis.differential if assessment.acidosis is not None else ()
    tiers = {c.cause: c.tier for c in entries}
    held = {f"{EVIDENCE_PREFIX}{c.cause}_{item.id}" for c in entries for item in c.supporting}
    facts: dict[str, Fact] = {}
    for cause in causes:
        facts[f"cause_{cause}"] = BooleanFact(tiers.get(cause) in ("likely", "possible"))
        facts[f"cause_{cause}_likely"] = BooleanFact(tiers.get(cause) == "likely")
    facts.update({name: BooleanFact(name in held) for name in evidence})
    return facts


@functools.cache
def _finding_ids() -> tuple[str, ...]:
    # The shipped vocabulary does not change while notegen runs; a set built per case cost more than the rest.
    return tuple(sorted({info.id for info in shipped_knowledge().findings.values()}))


def _group_facts(meds: tuple[Medication, ...], group: MedicationGroup) -> dict[str, Fact]:
    listed = [m for m in meds if set(m.classes) & set(group.classes)]
    unknown = [m.name for m in meds if not m.recognised]
    if listed:
        names = join_words(m.generic or m.name for m in listed)
        return {f"{group.id}_listed": BooleanFact(True), f"{group.id}_names": TextFact(names)}
    if unknown:
        why = MissingFact(f"unrecognised medication: {', '.join(unknown)}")
        return {f"{group.id}_listed": why, f"{group.id}_names": MissingFact()}
    return {f"{group.id}_listed": BooleanFact(False), f"{group.id}_names": MissingFact()}


def _reading_facts(assessment: Assessment) -> dict[str, Fact]:
    reading, chem = assessment.acid_base, assessment.case.chem
    return {
        "metabolic_alkalosis": BooleanFact("metabolic_alkalosis" in reading.disorders),
        "metabolic_acidosis": BooleanFact("metabolic_acidosis" in reading.disorders),
        "primary": TextFact(reading.primary),
        "ph_status": TextFact(reading.ph_status) if reading.ph_status else MissingFact(),
        "chronicity": TextFact(reading.chronicity) if reading.chronicity else MissingFact(),
        "anion_gap_status": TextFact(reading.anion_gap_status) if reading.anion_gap_status else MissingFact(),
        CHLORIDE_TREE: TextFact(assessment.chloride_class) if assessment.chloride_class else MissingFact(),
        "na": NumberFact(chem.na, "mmol/L") if chem.na is not None else MissingFact(),
        "ionized_ca": NumberFact(chem.ionized_ca, "mmol/L") if chem.ionized_ca is not None else MissingFact(),
        "ca": NumberFact(chem.ca, "mg/dL") if chem.ca is not None else MissingFact(),
        "glucose": NumberFact(chem.glucose, "mg/dL") if chem.glucose is not None else MissingFact(),
    }


def consideration_facts(
    assessment: Assessment,
    pack: RulePack,
    groups: Sequence[MedicationGroup],
    acidosis_causes: Sequence[str] = (),
    acidosis_evidence: Sequence[str] = (),
) -> dict[str, Fact]:
    """The facts of `consideration_catalogue` for this assessment; a value not held is missing, never guessed.

    `acidosis_evidence` names the `evidence_<cause>_<item>` facts of the catalogue.
    """
    case = assessment.case
    facts: dict[str, Fact] = dict(derive_facts(case, assessment.acid_base, pack, assessment.calculations))
    facts.update(_reading_facts(assessment))
    likely = {c.cause for c in assessment.differential if c.tier in ("likely", "possible")}
    present = {f.factor for f in assessment.maintenance if f.status == "present"}
    present |= {m.mechanism for m in assessment.generation if m.status == "present"}
    suggested = {t.test for t in assessment.next_tests}
    facts.update({f"cause_{c.id}": BooleanFact(c.id in likely) for c in pack.causes})
    if acidosis_causes:
        facts.update(_acidosis_facts(assessment, acidosis_causes, acidosis_evidence))
    facts.update({f"factor_{f.id}": BooleanFact(f.id in present) for f in pack.factors})
    facts.update({f"test_{t.id}": BooleanFact(t.id in suggested) for t in pack.tests})
    levels: dict[str, str] = {}
    for alert in assessment.alerts:
        if ALERT_LEVELS.index(alert.level) > ALERT_LEVELS.index(levels.get(alert.code, "none")):
            levels[alert.code] = alert.level
    facts.update({f"alert_{code}": TextFact(levels.get(code, "none")) for code in ALERT_CODES})
    findings = set(case.context.findings)
    for finding_id in _finding_ids():
        facts[f"finding_{finding_id}"] = BooleanFact(finding_id in findings)
    for group in groups:
        facts.update(_group_facts(case.context.meds, group))
    return facts
