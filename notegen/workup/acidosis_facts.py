"""The flat facts the metabolic-acidosis pack reads, derived from a validated case and its reading.

The same conventions as `notegen.workup.facts` (the alkalosis pack's facts): every value in the
unit the pack's catalogue declares; a value the case does not hold is a `MissingFact`, never a
default; a finding not listed is `false` ("not reported"); a medication class is absent only when
every listed medication was recognised.
"""

from __future__ import annotations

from collections.abc import Mapping

from notegen._format import join_words
from notegen.acidbase.calculations import Calculation
from notegen.acidbase.model import AcidBaseReading
from notegen.case.model import Case
from notegen.engine import BooleanFact, Fact, MissingFact, NumberFact, RulePack, TextFact
from notegen.errors import NotegenError
from notegen.knowledge import shipped_knowledge
from notegen.workup.acidosis_model import AcidosisWorkupKind
from notegen.workup.facts import class_facts, creatinine_unsteady

ACIDOSIS_FINDINGS = (
    "diabetes",
    "starvation",
    "malnutrition",
    "alcohol_use",
    "toxic_ingestion",
    "sepsis",
    "shock",
    "seizure",
    "short_bowel",
    "kidney_disease",
    "dialysis",
    "diarrhea",
    "ostomy",
    "fistula",
    "urinary_diversion",
    "saline_load",
)
# Findings named together in the gut-loss sentence, in this order.
GUT_LOSSES = ("diarrhea", "ostomy", "fistula", "urinary_diversion")
# Drugs that lower aldosterone or block its effect (Kraut & Madias, Nat Rev Nephrol 2010; from memory).
POTASSIUM_RETAINING = (
    "ace_inhibitor", "angiotensin_receptor_blocker", "potassium_sparing_diuretic", "nsaid", "trimethoprim",
)  # fmt: skip
# Listed-class facts and the medication classes (rules/vocabulary/medications.yaml) behind them.
ACIDOSIS_CLASS_FACTS = {
    "metformin_listed": ("biguanide",),
    "acetaminophen_listed": ("acetaminophen",),
    "salicylate_listed": ("salicylate",),
    "ca_inhibitor_listed": ("carbonic_anhydrase_inhibitor",),
    "potassium_retaining_listed": POTASSIUM_RETAINING,
}
ACIDOSIS_NAME_FACTS = {
    "ca_inhibitor_names": ("carbonic_anhydrase_inhibitor",),
    "potassium_retaining_names": POTASSIUM_RETAINING,
}
# Case values: fact id -> (case field, canonical unit).
_CASE_NUMBERS = {
    "glucose": ("chem.glucose", "mg/dL"),
    "bhb": ("chem.bhb", "mmol/L"),
    "lactate": ("chem.lactate", "mmol/L"),
    "salicylate": ("chem.salicylate", "mg/dL"),
    "bun": ("chem.bun", "mg/dL"),
    "k": ("chem.k", "mmol/L"),
    "phos": ("chem.phos", "mg/dL"),
    "urine_ketones": ("urine.ketones", "mg/dL"),
    "urine_na": ("urine.na", "mmol/L"),
    "urine_ph": ("urine.ph", ""),
}
# Calculations: fact id -> the unit the pack expects.
_CALCULATED = {
    "osmolal_gap": "mOsm/kg",
    "egfr": "mL/min/1.73 m2",
    "urine_anion_gap": "mmol/L",
    "urine_osmolal_gap": "mOsm/kg",
}
_KINDS: dict[str, AcidosisWorkupKind] = {
    "high_gap": "high_gap",
    "normal_gap": "normal_gap",
    "high_and_normal_gap": "mixed",
}


def acidosis_kind(reading: AcidBaseReading) -> AcidosisWorkupKind | None:
    """The kind the pack reads: the reading's metabolic-acidosis kind, or None when there is none to work up."""
    if "metabolic_acidosis" not in reading.disorders or reading.metabolic_acidosis_kind is None:
        return None
    return _KINDS[reading.metabolic_acidosis_kind]


def _case_number(case: Case, field: str, unit: str) -> Fact:
    section, name = field.split(".")
    value = getattr(getattr(case, section), name)
    if value is None:
        return MissingFact()
    qualifier = None
    for measurement in reversed(case.measurements):
        if measurement.field == field:
            qualifier = measurement.qualifier
            break
    return NumberFact(value, unit or None, qualifier)


def acidosis_medication_facts(case: Case) -> dict[str, Fact]:
    """Class facts and the names to show, from `Case.context.meds`."""
    return class_facts(case.context.meds, ACIDOSIS_CLASS_FACTS, ACIDOSIS_NAME_FACTS)


def _setting(pack: RulePack, setting: str, unit: str) -> float:
    if setting not in pack.settings:
        raise NotegenError(f"rule pack `{pack.id}` lacks the setting `{setting}` that the acidosis facts read")
    value, found = pack.settings[setting]
    if found != unit:
        raise NotegenError(f"setting `{setting}` of pack `{pack.id}` must be in {unit}, not {found}")
    return value


def ketonuria_fact(case: Case, pack: RulePack) -> Fact:
    """Whether measured ketones reach the pack's thresholds; missing when no ketone was measured.

    A derived fact that no test provides, so the urine anion gap's ketonuria caveat never asks for a
    ketone test by itself.
    """
    measured = [
        (case.urine.ketones, _setting(pack, "urine_ketones_positive_from", "mg/dL")),
        (case.chem.bhb, _setting(pack, "bhb_high_from", "mmol/L")),
    ]
    known = [(value, limit) for value, limit in measured if value is not None]
    if not known:
        return MissingFact("no ketones measured")
    return BooleanFact(any(value >= limit for value, limit in known))


def gap_unexplained_fact(case: Case, calcs: Mapping[str, Calculation], pack: RulePack) -> Fact:
    """Whether the measured lactate, beta-hydroxybutyrate or uremia leave the gap excess unexplained.

    False (explained) as soon as what is measured accounts for the excess, even if a value is missing,
    or a salicylate level is in the toxic range; true only when lactate and beta-hydroxybutyrate are
    both measured and fall short; otherwise missing, so that a test gated on it is kept (see
    `suggest_when` in notegen/engine/pack.py). The settings and their sources are in the pack.
    """
    excess = calcs.get("delta_gap")
    if excess is None:
        return MissingFact("no anion gap")
    if excess.unit != "mmol/L":
        raise NotegenError(f"calculation `delta_gap` is in {excess.unit}; the pack expects mmol/L")
    lactate, bhb = case.chem.lactate, case.chem.bhb
    left = excess.value - (lactate or 0.0) - (bhb or 0.0)
    if left <= _setting(pack, "gap_excess_explained_within", "mmol/L"):
        return BooleanFact(False)
    egfr, bun = calcs.get("egfr"), case.chem.bun
    uremic = (egfr is not None and egfr.value < _setting(pack, "egfr_uremic_below", "mL/min/1.73 m2")) or (
        bun is not None and bun >= _setting(pack, "bun_uremic_from", "mg/dL")
    )
    if uremic and left <= _setting(pack, "uremic_gap_excess_up_to", "mmol/L"):
        return BooleanFact(False)
    salicylate = case.chem.salicylate
    if salicylate is not None and salicylate >= _setting(pack, "salicylate_toxic_from", "mg/dL"):
        return BooleanFact(False)  # a toxic level accounts for the gap (the acids it drives with its own anion)
    if lactate is None or bhb is None:
        return MissingFact("lactate or beta-hydroxybutyrate not measured")
    return BooleanFact(True)


def derive_acidosis_facts(
    case: Case,
    reading: AcidBaseReading,
    calculations: Mapping[str, Calculation] | None = None,
    pack: RulePack | None = None,
) -> dict[str, Fact]:
    """Every fact of the acidosis pack's catalogue, present or missing with a reason."""
    calcs = calculations or {}
    kind = acidosis_kind(reading)
    gap = reading.anion_gap_corrected if reading.anion_gap_corrected is not None else reading.anion_gap
    facts: dict[str, Fact] = {
        "acidosis_kind": TextFact(kind) if kind is not None else MissingFact("no metabolic acidosis with a known gap"),
        "anion_gap": NumberFact(gap, "mmol/L") if gap is not None else MissingFact("no anion gap"),
        "hco3": NumberFact(reading.hco3, "mmol/L") if reading.hco3 is not None else MissingFact("no bicarbonate"),
        "respiratory_alkalosis": BooleanFact("respiratory_alkalosis" in reading.disorders),
        # Results of tests the case file does not hold; a caller passes them as extra facts.
        "toxic_alcohol_detected": MissingFact("not given"),
        "acetaminophen_detected": MissingFact("not given"),
    }
    for name, (field, unit) in _CASE_NUMBERS.items():
        facts[name] = _case_number(case, field, unit)
    for name, unit in _CALCULATED.items():
        calculation = calcs.get(name)
        if calculation is not None and calculation.unit != unit:
            raise NotegenError(f"calculation `{name}` is in {calculation.unit}; the pack expects {unit}")
        facts[name] = NumberFact(calculation.value, unit) if calculation is not None else MissingFact()
    for finding in ACIDOSIS_FINDINGS:
        facts[finding] = BooleanFact(finding in case.context.findings)
    facts["creatinine_unsteady"] = creatinine_unsteady(reading)
    losses = [shipped_knowledge().finding_label(f) for f in GUT_LOSSES if f in case.context.findings]
    facts["gut_losses"] = TextFact(join_words(losses)) if losses else MissingFact("none reported")
    facts.update(acidosis_medication_facts(case))
    facts["ketonuria"] = ketonuria_fact(case, pack) if pack is not None else MissingFact("no pack settings")
    facts["gap_unexplained"] = (
        gap_unexplained_fact(case, calcs, pack) if pack is not None else MissingFact("no pack settings")
    )
    return facts
