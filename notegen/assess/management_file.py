"""The considerations file (`rules/management.yaml`): its content, read, laid over by id and checked.

A service's folder may hold its own `management.yaml`, laid over the shipped one by id. The layered
file is checked against the fact catalogue of the loaded packs (`notegen.assess.facts`): every
condition, placeholder, medication class and setting name, each problem with its file and line.
What the check passes (`Checked`) is compiled by `notegen.assess.considerations`; the shipped file,
checked when the wheel is built (`prepare_considerations`), is kept in the wheel, so that a note
need not read the YAML nor load the acidosis pack to check it.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Annotated, Any

from pydantic import Field, ValidationError

from notegen.assess.facts import ALERT_CODES, MedicationGroup, consideration_catalogue
from notegen.engine import RulePack
from notegen.engine.checks import check_conditions
from notegen.engine.conditions import ConditionSyntaxError
from notegen.engine.pack import ConditionField, FactSpec, Id, PackModel, Problem, SettingSpec, Text
from notegen.engine.source import PackSourceError, SourceDict, locate, read_yaml
from notegen.engine.wording import parse_template
from notegen.errors import RulePackError
from notegen.knowledge import ACIDOSIS_PACK, ALKALOSIS_PACK, shipped_knowledge

__all__ = [
    "FILE_NAME",
    "PREPARED_NAME",
    "SECTIONS",
    "Checked",
    "ConsiderationSpec",
    "ManagementFile",
    "check_file",
    "prepare_considerations",
    "setting_specs",
]

FILE_NAME = "management.yaml"
PREPARED_NAME = "considerations"  # its pickle and key in the wheel's prepared folder
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
    # Alert codes whose advice this sentence carries: while it is printed, the chart note states those
    # alerts without their own advice ("hypokalemia; consider repletion" beside "Potassium repletion is
    # indicated" says it twice).
    answers_alerts: tuple[Id, ...] = ()


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


def setting_specs(pack: RulePack, own: Sequence[SettingSpec]) -> list[SettingSpec]:
    shipped = [
        SettingSpec.model_validate({"id": name, "value": value, "unit": unit, "source": "the alkalosis pack"})
        for name, (value, unit) in pack.settings.items()
    ]
    return [*shipped, *own]


def _check(merged: ManagementFile, pack: RulePack, catalogue: Mapping[str, FactSpec]) -> list[Problem]:
    problems: list[Problem] = []
    settings = setting_specs(pack, merged.settings)
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
        for code in item.answers_alerts:
            if code not in ALERT_CODES:
                where = item.where_of("answers_alerts")
                problems.append((where[0], where[1], f"alert code `{code}` is not an alert notegen raises"))
        for text, where in ((item.says, item.where_of("says")), *((a.says, a.where_of("says")) for a in item.also)):
            for name in parse_template(text).names:
                if name not in names:
                    problems.append((where[0], where[1], f"placeholder `{{{name}}}` names no fact or setting"))
    problems += check_conditions(conditions, catalogue.values(), settings)
    return problems


def _files(folders: tuple[Path, ...]) -> list[Path]:
    # The shipped file must exist; a service's folder need not change the considerations.
    return [folders[0] / FILE_NAME, *(f / FILE_NAME for f in folders[1:] if (f / FILE_NAME).is_file())]


@dataclass(frozen=True)
class Checked:
    """The layered considerations file, read, validated and checked against the packs, not yet compiled.

    What the wheel's build hook prepares for the shipped rules (`prepare_considerations`): the
    catalogue and the acidosis pack's cause ids are kept, so that a note need not load that pack.
    """

    merged: ManagementFile
    groups: tuple[MedicationGroup, ...]
    catalogue: Mapping[str, FactSpec]
    acidosis_causes: tuple[str, ...]


def check_file(
    folders: tuple[Path, ...], pack: RulePack, acidosis_pack: RulePack | None = None
) -> tuple[Checked | None, list[Problem]]:
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
    causes = tuple(c.id for c in acidosis_pack.causes) if acidosis_pack is not None else ()
    return Checked(merged, groups, catalogue, causes), []


def prepare_considerations(rules: Path, target: Path) -> None:
    """Read and check the shipped considerations against the shipped packs, all from `rules`; keep them in `target`.

    Called by the wheel's build hook with `rules` relative to the checkout. Raises `RulePackError`
    when they have a problem: a broken rule file stops the build.
    """
    from notegen.engine import load_pack
    from notegen.knowledge.prepared_pack import write_prepared

    pack, acidosis_pack = load_pack([rules / ALKALOSIS_PACK]), load_pack([rules / ACIDOSIS_PACK])
    checked, problems = check_file((rules,), pack, acidosis_pack)
    if checked is None:
        raise RulePackError(problems)
    write_prepared(checked, PREPARED_NAME, rules, target)
