"""The flat facts the metabolic-alkalosis pack reads, derived from a validated case and its reading.

Every value is in the unit the pack's fact catalogue declares. A value the case does not hold is a
`MissingFact` saying why, never a default. Conventions worth knowing:
- a finding not listed in the case is `false` ("not reported"), which the pack words as such;
- a medication class counts as absent only when every listed medication was recognised; with an
  unrecognised one, "is a loop diuretic listed?" is unknown;
- a loop or thiazide is "acting" when its last dose lies within that drug's usual duration of
  effect (`action_hours` in rules/vocabulary/medications.yaml: chlorthalidone lasts 48-72 h,
  furosemide about 6 h); a drug without one falls back on its class's window, a pack setting
  (`loop_diuretic_action_hours`, `thiazide_diuretic_action_hours`).
"""

from __future__ import annotations

from collections.abc import Mapping

from notegen._format import join_words
from notegen.acidbase.calculations import Calculation
from notegen.acidbase.critical_values import hypercalcemia
from notegen.acidbase.formulas import CREATININE_MOLAR_MASS
from notegen.acidbase.model import AcidBaseReading
from notegen.case.model import Case, Medication
from notegen.engine import BooleanFact, Fact, MissingFact, NumberFact, RulePack, TextFact
from notegen.errors import NotegenError
from notegen.knowledge import shipped_knowledge
from notegen.knowledge.settings import AcidBaseSettings

CALCIUM_MOLAR_MASS = 40.078  # g/mol (IUPAC standard atomic weight)

FINDINGS = (
    "vomiting",
    "gastric_drainage",
    "diarrhea",
    "edema",
    "corrected_hypercapnia",
    "chronic_co2_retention",
    "ventilatory_support",
    "transfusion",
    "plasma_exchange",
    "hypertension",
    "heart_failure",
    "cirrhosis",
    "ascites",
    "laxative_use",
    "dialysis",
)
DIURETIC_WINDOWS = {
    "loop_diuretic": "loop_diuretic_action_hours",
    "thiazide_diuretic": "thiazide_diuretic_action_hours",
}
# Listed-class facts and the medication classes behind them.
CLASS_FACTS = {
    "loop_or_thiazide_listed": ("loop_diuretic", "thiazide_diuretic"),
    "mineralocorticoid_listed": ("mineralocorticoid",),
    "glucocorticoid_listed": ("glucocorticoid",),
    "glycyrrhizin_listed": ("glycyrrhizin",),
    "alkali_listed": ("alkali",),
    "calcium_salt_listed": ("calcium_salt",),
    "laxative_listed": ("laxative",),
}
NAME_FACTS = {
    "diuretic_names": ("loop_diuretic", "thiazide_diuretic"),
    "alkali_names": ("alkali",),
    "calcium_names": ("calcium_salt",),
    "mineralocorticoid_names": ("mineralocorticoid", "glycyrrhizin"),
}


def urine_calcium_creatinine_ratio(urine_calcium: float, urine_creatinine: float) -> float:
    """Urine calcium/creatinine in mmol/mmol from both in mg/dL (molar masses 40.078 and 113.12 g/mol)."""
    return (urine_calcium / CALCIUM_MOLAR_MASS) / (urine_creatinine / CREATININE_MOLAR_MASS)


def _qualifier(case: Case, field: str) -> str | None:
    for measurement in reversed(case.measurements):
        if measurement.field == field:
            return measurement.qualifier
    return None


def _number(case: Case, field: str, value: float | None, unit: str) -> Fact:
    if value is None:
        return MissingFact()
    qualifier = _qualifier(case, field)
    return NumberFact(value, unit, qualifier if qualifier in ("<", ">") else None)  # type: ignore[arg-type]


def _setting_hours(pack: RulePack, setting: str) -> float:
    if setting not in pack.settings:
        raise NotegenError(f"rule pack `{pack.id}` lacks the setting `{setting}` that notegen.workup.facts reads")
    value, unit = pack.settings[setting]
    if unit != "h":
        raise NotegenError(f"setting `{setting}` of pack `{pack.id}` must be in h, not {unit}")
    return value


def action_window(med: Medication, pack: RulePack) -> float:
    """Hours after the last dose during which this diuretic may still shape the urine chloride.

    The drug's own longest usual duration of effect when the vocabulary has one, else its class's
    window from the pack.
    """
    info = shipped_knowledge().drug(med.generic) if med.generic else None
    if info is not None and info.action_hours is not None:
        return info.action_hours[1]
    return max(_setting_hours(pack, DIURETIC_WINDOWS[c]) for c in med.classes if c in DIURETIC_WINDOWS)


def _of_classes(meds: tuple[Medication, ...], classes: tuple[str, ...]) -> list[Medication]:
    return [m for m in meds if set(m.classes) & set(classes)]


def _unrecognised(meds: tuple[Medication, ...]) -> list[str]:
    return [m.name for m in meds if not m.recognised]


def class_facts(
    meds: tuple[Medication, ...],
    listed_facts: Mapping[str, tuple[str, ...]],
    name_facts: Mapping[str, tuple[str, ...]],
) -> dict[str, Fact]:
    """Yes/no facts for medication classes (unknown while a listed name is not recognised) and the names
    to show for others; shared by both work-ups."""
    unknown = _unrecognised(meds)
    facts: dict[str, Fact] = {}
    for name, classes in listed_facts.items():
        if _of_classes(meds, classes):
            facts[name] = BooleanFact(True)
        elif unknown:
            facts[name] = MissingFact(f"unrecognised medication: {', '.join(unknown)}")
        else:
            facts[name] = BooleanFact(False)
    for name, classes in name_facts.items():
        listed = _of_classes(meds, classes)
        facts[name] = TextFact(join_words(m.generic or m.name for m in listed)) if listed else MissingFact()
    return facts


def medication_facts(case: Case, pack: RulePack) -> dict[str, Fact]:
    """Class facts, diuretic timing and the names to show, from `Case.context.meds`."""
    meds = case.context.meds
    unknown = _unrecognised(meds)
    facts = class_facts(meds, CLASS_FACTS, NAME_FACTS)

    diuretics = _of_classes(meds, tuple(DIURETIC_WINDOWS))
    timed = [m.last_dose_hours for m in diuretics if m.last_dose_hours is not None]
    facts["loop_or_thiazide_hours"] = NumberFact(min(timed), "h") if timed else MissingFact()
    acting = False
    untimed: list[str] = []
    for med in diuretics:
        window = action_window(med, pack)
        if med.last_dose_hours is None:
            untimed.append(med.name)
        elif med.last_dose_hours <= window:
            acting = True
    if acting:
        facts["loop_or_thiazide_acting"] = BooleanFact(True)
    elif untimed:
        facts["loop_or_thiazide_acting"] = MissingFact(f"no last-dose time for {', '.join(untimed)}")
    elif not diuretics and unknown:
        facts["loop_or_thiazide_acting"] = MissingFact(f"unrecognised medication: {', '.join(unknown)}")
    else:
        facts["loop_or_thiazide_acting"] = BooleanFact(False)
    return facts


def urine_chloride_range(case: Case) -> dict[str, Fact]:
    """The lowest and highest urine chloride across serial samples (a swing marks an intermittent diuretic)."""
    values = [u.cl for u in (*case.earlier_urine, case.urine) if u.cl is not None]
    if len(values) < 2:
        missing = MissingFact("fewer than two urine chloride results")
        return {"urine_cl_lowest": missing, "urine_cl_highest": missing}
    return {"urine_cl_lowest": NumberFact(min(values), "mmol/L"), "urine_cl_highest": NumberFact(max(values), "mmol/L")}


def creatinine_unsteady(reading: AcidBaseReading) -> BooleanFact:
    """Whether the reading flagged a rising creatinine (KDIGO's definition): the eGFR then overstates function."""
    return BooleanFact(any(alert.code == "unsteady_creatinine" for alert in reading.alerts))


def derive_facts(
    case: Case,
    reading: AcidBaseReading,
    pack: RulePack,
    calculations: Mapping[str, Calculation] | None = None,
    settings: AcidBaseSettings | None = None,
) -> dict[str, Fact]:
    """Every fact of the alkalosis pack's catalogue, present or missing with a reason.

    `settings` are the acid-base thresholds (calcium, PaCO2) the reading also uses, so each is
    defined once, in rules/acid_base.yaml.
    """
    chem, urine, context = case.chem, case.urine, case.context
    calcs = calculations or {}
    s = settings or shipped_knowledge().settings
    facts: dict[str, Fact] = {
        "urine_cl": _number(case, "urine.cl", urine.cl, "mmol/L"),
        "urine_na": _number(case, "urine.na", urine.na, "mmol/L"),
        "urine_k": _number(case, "urine.k", urine.k, "mmol/L"),
        "urine_ph": _number(case, "urine.ph", urine.ph, ""),
        "k": _number(case, "chem.k", chem.k, "mmol/L"),
        "mg": _number(case, "chem.mg", chem.mg, "mg/dL"),
        "hco3": NumberFact(reading.hco3, "mmol/L") if reading.hco3 is not None else MissingFact("no bicarbonate"),
        "renin": TextFact(context.renin) if context.renin else MissingFact("not given"),
        "aldosterone": TextFact(context.aldosterone) if context.aldosterone else MissingFact("not given"),
        "cortisol_excess": (
            BooleanFact(context.cortisol_excess) if context.cortisol_excess is not None else MissingFact("not given")
        ),
        "diuretic_screen_positive": (
            BooleanFact(context.diuretic_screen == "positive") if context.diuretic_screen else MissingFact("not given")
        ),
    }
    if reading.pco2 is not None and reading.sample in ("arterial", "unstated"):
        facts["arterial_pco2"] = NumberFact(reading.pco2, "mmHg")
        # Against the reading's own upper limit (rules/acid_base.yaml `pco2_high`), defined once.
        facts["hypercapnic"] = BooleanFact(reading.pco2 > s.pco2_high.value)
    elif reading.sample == "venous":
        facts["arterial_pco2"] = facts["hypercapnic"] = MissingFact("venous sample; its PCO2 is not converted")
    else:
        facts["arterial_pco2"] = facts["hypercapnic"] = MissingFact("no blood gas PCO2")
    facts["alkalemia"] = (
        BooleanFact(reading.ph_status == "alkalemia") if reading.ph_status is not None else MissingFact("no pH")
    )
    for name, unit in (("egfr", "mL/min/1.73 m2"), ("urine_k_creatinine", "mmol/mmol")):
        calculation = calcs.get(name)
        if calculation is not None and calculation.unit != unit:
            raise NotegenError(f"calculation `{name}` is in {calculation.unit}; the pack expects {unit}")
        facts[name] = NumberFact(calculation.value, unit) if calculation is not None else MissingFact()
    facts["creatinine_unsteady"] = creatinine_unsteady(reading)
    if urine.calcium is not None and urine.creatinine is not None and urine.creatinine > 0:
        ratio = urine_calcium_creatinine_ratio(urine.calcium, urine.creatinine)
        facts["urine_calcium_creatinine"] = NumberFact(ratio, "mmol/mmol")
    else:
        facts["urine_calcium_creatinine"] = MissingFact()
    if context.bp is not None:
        facts["systolic_bp"] = NumberFact(float(context.bp.systolic), "mmHg")
        facts["diastolic_bp"] = NumberFact(float(context.bp.diastolic), "mmHg")
        # The pair as a clinician writes it ("118/70 mmHg"), for the pack's sentences.
        facts["bp_reading"] = TextFact(f"{context.bp.systolic}/{context.bp.diastolic} mmHg")
    else:
        facts["systolic_bp"] = facts["diastolic_bp"] = facts["bp_reading"] = MissingFact()
    if chem.mg is not None:
        # The reading's own limits (rules/acid_base.yaml), so each is defined once.
        facts["mg_low"] = BooleanFact(chem.mg < s.magnesium_low.value)
        facts["mg_severe_low"] = BooleanFact(chem.mg < s.magnesium_low_warning.value)
    else:
        facts["mg_low"] = facts["mg_severe_low"] = MissingFact()
    high_calcium = hypercalcemia(case, s)
    facts["hypercalcemia"] = (
        BooleanFact(high_calcium) if high_calcium is not None else MissingFact("no calcium measured")
    )
    facts.update(urine_chloride_range(case))
    units = context.blood_product_units
    facts["blood_product_units"] = NumberFact(float(units), "units") if units is not None else MissingFact()
    facts["volume"] = TextFact(context.volume) if context.volume != "unknown" else MissingFact()
    for finding in FINDINGS:
        facts[finding] = BooleanFact(finding in context.findings)
    facts.update(medication_facts(case, pack))
    return facts

