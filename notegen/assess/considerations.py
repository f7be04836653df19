"""General management considerations, selected from `rules/management.yaml` by the assessment.

The wording and its provenance live in the YAML; this module only loads it (refusing typos
with the file and line), and picks the considerations whose conditions the assessment meets,
in the order the file gives. No doses: the file holds considerations for the clinician to weigh.
"""

from __future__ import annotations

import functools
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import yaml
from pydantic import BaseModel, ConfigDict, Field, ValidationError, field_validator

from notegen.acidbase.model import Chronicity, Disorder, Primary
from notegen.assess.model import Assessment
from notegen.case.model import CANONICAL_UNITS, Case, Volume
from notegen.errors import RulePackError
from notegen.resources import rules_dir, strict_yaml_loader
from notegen.workup.model import ChlorideClass

__all__ = ["Consideration", "load_considerations", "management_considerations"]

FILE_NAME = "management.yaml"
# Stable ids of the alkalosis rule pack (issue 4) and of the acid-base alerts; a typo in a
# condition must fail at load time rather than silently never match.
CAUSE_IDS = frozenset(
    {
        "gastric_loss",
        "diuretic",
        "mineralocorticoid_excess",
        "alkali_load",
        "reduced_gfr",
        "post_hypercapnia",
        "salt_wasting_tubulopathy",
        "chloride_losing_diarrhea",
        "potassium_magnesium_depletion",
        "calcium_alkali",
    }
)
FACTOR_IDS = frozenset({"volume_contraction", "hypokalemia", "reduced_gfr", "mineralocorticoid_activity"})
ALERT_CODES = frozenset(
    {
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
    }
)
ALERT_LEVELS = frozenset({"critical", "warning", "info"})
_STRICT = ConfigDict(frozen=True, extra="forbid")


class Condition(BaseModel):
    """One condition set: every key given must hold; a list holds when any of its values does."""

    model_config = _STRICT

    alkalosis: bool | None = None
    chloride_class: tuple[ChlorideClass, ...] | None = None
    cause: tuple[str, ...] | None = None
    factor: tuple[str, ...] | None = None
    alert: tuple[str, ...] | None = None
    finding: tuple[str, ...] | None = None
    volume: tuple[Volume, ...] | None = None
    med_class: tuple[str, ...] | None = None
    disorder: tuple[Disorder, ...] | None = None
    primary: tuple[Primary, ...] | None = None
    chronicity: tuple[Chronicity, ...] | None = None
    egfr_below: float | None = Field(default=None, gt=0)
    unmeasured: tuple[str, ...] | None = None

    @field_validator("unmeasured")
    @classmethod
    def _known_fields(cls, value: tuple[str, ...] | None) -> tuple[str, ...] | None:
        return _known(value, frozenset(CANONICAL_UNITS), "case field")

    @field_validator("cause")
    @classmethod
    def _known_causes(cls, value: tuple[str, ...] | None) -> tuple[str, ...] | None:
        return _known(value, CAUSE_IDS, "cause")

    @field_validator("factor")
    @classmethod
    def _known_factors(cls, value: tuple[str, ...] | None) -> tuple[str, ...] | None:
        return _known(value, FACTOR_IDS, "maintenance factor")

    @field_validator("alert")
    @classmethod
    def _known_alerts(cls, value: tuple[str, ...] | None) -> tuple[str, ...] | None:
        for item in value or ():
            code, _, level = item.partition(":")
            _known((code,), ALERT_CODES, "alert code")
            if level and level not in ALERT_LEVELS:
                raise ValueError(f"alert level {level!r} is not one of {', '.join(sorted(ALERT_LEVELS))}")
        return value


def _known(value: tuple[str, ...] | None, known: frozenset[str], what: str) -> tuple[str, ...] | None:
    for item in value or ():
        if item not in known:
            raise ValueError(f"unknown {what} {item!r} (known: {', '.join(sorted(known))})")
    return value


class Consideration(BaseModel):
    """A consideration, the conditions that select it, and where it comes from."""

    model_config = _STRICT

    id: str = Field(pattern=r"^[a-z][a-z0-9_]*$")
    when: tuple[Condition, ...] = Field(min_length=1)  # any one suffices
    unless: tuple[Condition, ...] = ()
    says: str = Field(min_length=1)
    source: str = Field(min_length=1)

    @field_validator("when", mode="before")
    @classmethod
    def _one_or_many(cls, value: object) -> object:
        return [value] if isinstance(value, dict) else value


# Loading ---------------------------------------------------------------------------------------


def _read(path: Path) -> list[tuple[int, Any]]:
    """The entries of `considerations`, each with its line number, from one parse of the file."""
    name = str(path)
    try:
        text = path.read_text(encoding="utf-8")
        loader = strict_yaml_loader()(text)  # a second `says:` must not silently win
        try:
            root = loader.get_single_node()
            data = loader.construct_document(root) if root is not None else None
        finally:
            loader.dispose()
    except OSError as error:
        raise RulePackError([(name, None, f"cannot read: {error.strerror or error}")]) from None
    except yaml.MarkedYAMLError as error:
        line = error.problem_mark.line + 1 if error.problem_mark else None
        raise RulePackError([(name, line, f"YAML error: {error.problem or error}")]) from None
    if not isinstance(data, dict) or set(data) != {"considerations"} or not isinstance(data["considerations"], list):
        raise RulePackError([(name, 1, "expected one top-level key, `considerations`, holding a list")])
    assert isinstance(root, yaml.MappingNode)
    items_node = next(value for key, value in root.value if key.value == "considerations")
    lines = [item.start_mark.line + 1 for item in items_node.value]
    return list(zip(lines, data["considerations"], strict=True))


def _parse(path: Path) -> list[Consideration]:
    problems: list[tuple[str, int | None, str]] = []
    parsed: list[Consideration] = []
    seen: dict[str, int] = {}
    for line, raw in _read(path):
        try:
            item = Consideration.model_validate(raw)
        except ValidationError as error:
            for detail in error.errors():
                where = ".".join(str(part) for part in detail["loc"])
                problems.append((str(path), line, f"{where}: {detail['msg']}" if where else detail["msg"]))
            continue
        if item.id in seen:
            problems.append((str(path), line, f"id {item.id!r} is used twice (first on line {seen[item.id]})"))
            continue
        seen[item.id] = line
        parsed.append(item)
    if problems:
        raise RulePackError(problems)
    return parsed


@functools.lru_cache(maxsize=16)
def _load(folders: tuple[Path, ...]) -> tuple[Consideration, ...]:
    merged: dict[str, Consideration] = {}
    for folder in folders:
        path = folder / FILE_NAME
        if folder != folders[0] and not path.is_file():
            continue  # a service's folder need not change the considerations
        for item in _parse(path):
            merged[item.id] = item  # replaces in place, or adds at the end
    return tuple(merged.values())


@functools.cache
def _shipped_folder() -> Path:
    # The shipped folder does not move while notegen runs; resolving it per case cost three `lstat`s.
    return rules_dir().resolve()


def load_considerations(rules_dirs: Sequence[Path] = ()) -> tuple[Consideration, ...]:
    """The shipped considerations, with those of each service folder laid over them by id."""
    return _load((_shipped_folder(), *(Path(folder).resolve() for folder in rules_dirs)))


# Selecting -------------------------------------------------------------------------------------


@dataclass(frozen=True)
class _Facts:
    alkalosis: bool
    chloride_class: str | None
    causes: frozenset[str]
    factors: frozenset[str]
    alerts: frozenset[str]
    findings: frozenset[str]
    volume: str
    med_classes: frozenset[str]
    disorders: frozenset[str]
    primary: str
    chronicity: str | None
    egfr: float | None
    measured: frozenset[str]

    @classmethod
    def of(cls, assessment: Assessment) -> _Facts:
        reading, case = assessment.acid_base, assessment.case
        egfr = assessment.calculations.get("egfr")
        return cls(
            alkalosis="metabolic_alkalosis" in reading.disorders,
            chloride_class=assessment.chloride_class,
            causes=frozenset(c.cause for c in assessment.differential if c.tier in ("likely", "possible")),
            factors=frozenset(f.factor for f in assessment.maintenance if f.status == "present"),
            alerts=frozenset(
                text for alert in assessment.alerts for text in (alert.code, f"{alert.code}:{alert.level}")
            ),
            findings=frozenset(case.context.findings),
            volume=case.context.volume,
            med_classes=frozenset(c for med in case.context.meds for c in med.classes),
            disorders=frozenset(reading.disorders),
            primary=reading.primary,
            chronicity=reading.chronicity,
            egfr=egfr.value if egfr is not None else None,
            measured=_measured(case),
        )


def _measured(case: Case) -> frozenset[str]:
    sections = {"gas": case.gas, "chem": case.chem, "urine": case.urine}
    return frozenset(
        name for name in CANONICAL_UNITS if getattr(sections[name.split(".")[0]], name.split(".")[1], None) is not None
    )


def _any(wanted: tuple[str, ...] | None, present: frozenset[str] | str | None) -> bool:
    if wanted is None:
        return True
    if present is None:
        return False
    if isinstance(present, str):
        return present in wanted
    return bool(present.intersection(wanted))


def _holds(condition: Condition, facts: _Facts) -> bool:
    if condition.alkalosis is not None and condition.alkalosis != facts.alkalosis:
        return False
    if condition.egfr_below is not None and (facts.egfr is None or facts.egfr >= condition.egfr_below):
        return False
    if condition.unmeasured is not None and facts.measured.intersection(condition.unmeasured):
        return False
    checks: tuple[tuple[tuple[str, ...] | None, frozenset[str] | str | None], ...] = (
        (condition.chloride_class, facts.chloride_class),
        (condition.cause, facts.causes),
        (condition.factor, facts.factors),
        (condition.alert, facts.alerts),
        (condition.finding, facts.findings),
        (condition.volume, facts.volume),
        (condition.med_class, facts.med_classes),
        (condition.disorder, facts.disorders),
        (condition.primary, facts.primary),
        (condition.chronicity, facts.chronicity),
    )
    return all(_any(wanted, present) for wanted, present in checks)


def select_considerations(assessment: Assessment, considerations: Sequence[Consideration]) -> tuple[Consideration, ...]:
    """The considerations whose `when` holds and no `unless` does, in file order."""
    facts = _Facts.of(assessment)
    return tuple(
        item
        for item in considerations
        if any(_holds(c, facts) for c in item.when) and not any(_holds(c, facts) for c in item.unless)
    )


def management_considerations(assessment: Assessment, *, rules_dirs: Sequence[Path] = ()) -> tuple[str, ...]:
    """General considerations for this assessment, phrased for the clinician to weigh, no doses."""
    chosen = select_considerations(assessment, load_considerations(rules_dirs))
    return tuple(" ".join(item.says.split()) for item in chosen)
