"""The content model of a rule pack, and reading it from one or more folders.

A pack folder holds YAML files (read in name order) with these top-level sections, each optional
in any one file: `pack`, `facts`, `settings`, `scoring`, `factor_groups`, `trees`, `causes`,
`factors`, `tests`. Every item carries an `id`; every node, evidence item, factor, setting and test
names its provenance in `source` (a published source, or "common practice"). A test may carry
`suggest_when`, a condition: the test is held back where it is false, kept where true or undecided.
A cause may carry `form_of: <cause id>`: it is a specific form of that cause, and where it is likely
the note names it alone rather than beside the general one.

`read_pack(dirs)` layers the folders in order: the first is the base (the shipped pack), each later
one (a service's own) adds or overrides items by id; see `notegen.engine.source` for the rules.
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path
from typing import Annotated, Any, Literal

from pydantic import BaseModel, ConfigDict, Field, PlainValidator, PrivateAttr, ValidationError, model_validator

from notegen.engine.conditions import Condition, ConditionSyntaxError, parse_condition
from notegen.engine.facts import FactKind
from notegen.engine.source import (
    Overlay,
    PackSourceError,
    SourceDict,
    Where,
    combine_files,
    find_duplicate_ids,
    locate,
    read_yaml,
)

Strength = Literal["strong", "moderate", "weak"]
Id = Annotated[str, Field(pattern=r"^[a-z][a-z0-9_]*$")]
Text = Annotated[str, Field(min_length=1)]
ConditionField = Annotated[Condition, PlainValidator(parse_condition)]

SECTIONS = ("pack", "facts", "settings", "scoring", "factor_groups", "trees", "causes", "factors", "tests")


class PackModel(BaseModel):
    """Strict, frozen, and remembering the file and line it was read from."""

    # Validators are built on the first load, as one schema for the whole pack, not at import.
    model_config = ConfigDict(frozen=True, extra="forbid", arbitrary_types_allowed=True, defer_build=True)

    _where: Where = PrivateAttr(default=("<pack>", None))
    _key_where: dict[str, Where] = PrivateAttr(default_factory=dict)

    @model_validator(mode="wrap")
    @classmethod
    def _keep_where(cls, data: Any, handler: Any) -> Any:
        model = handler(data)
        if isinstance(data, SourceDict):
            model._where = data.where
            model._key_where = dict(data.key_where)
        return model

    @property
    def where(self) -> Where:
        return self._where

    def where_of(self, key: str) -> Where:
        """Where `key` was last written (an overlay's line when a service changed it)."""
        return self._key_where.get(key, self._where)


class PackInfo(PackModel):
    id: Id
    title: Text
    version: str = "1"
    description: str = ""


class FactSpec(PackModel):
    """One entry of the fact catalogue."""

    id: Id
    kind: FactKind
    unit: str | None = None  # numbers only; None for a pure number (a ratio, a pH)
    values: tuple[str, ...] = ()  # enum only
    label: str | None = None  # how conditions and traces name it; defaults to the id in words
    description: str = ""
    decimals: int | None = Field(default=None, ge=0, le=4)

    @property
    def display_label(self) -> str:
        return self.label or self.id.replace("_", " ")


class SettingSpec(PackModel):
    """A named threshold a service can change in one place."""

    id: Id
    value: float
    unit: str | None = None
    source: Text
    description: str = ""


class Weights(PackModel):
    strong: int = Field(default=3, ge=1)
    moderate: int = Field(default=2, ge=1)
    weak: int = Field(default=1, ge=1)


class Scoring(PackModel):
    """Points of evidence and the cut-offs of the tiers (see `notegen.engine.walk`)."""

    weights: Weights = Field(default_factory=Weights)
    likely_from: int = Field(default=3, ge=1)
    possible_from: int = Field(default=1, ge=1)
    keep_in_view_from: int = Field(default=3, ge=1)


class Node(PackModel):
    """A branch (`ask` with three exits) or a leaf (`outcome`)."""

    id: Id
    ask: ConditionField | None = None
    if_true: Id | None = None
    if_false: Id | None = None
    if_unknown: Id | None = None
    outcome: Id | None = None
    says: str | None = None
    consider: tuple[Id, ...] = ()
    source: Text

    @model_validator(mode="after")
    def _branch_or_leaf(self) -> Node:
        exits = (self.if_true, self.if_false, self.if_unknown)
        if self.ask is not None:
            if self.outcome is not None:
                raise ValueError(f"node `{self.id}` has both `ask` and `outcome`; a node branches or ends")
            if any(e is None for e in exits):
                raise ValueError(f"branch node `{self.id}` needs all of if_true, if_false and if_unknown")
        elif self.outcome is None or any(e is not None for e in exits):
            raise ValueError(f"node `{self.id}` needs either `ask` with its three exits, or an `outcome`")
        return self

    @property
    def exits(self) -> tuple[str, ...]:
        return tuple(e for e in (self.if_true, self.if_false, self.if_unknown) if e is not None)


class Tree(PackModel):
    """A decision tree; its id is also a fact whose value is the outcome of the walk."""

    id: Id
    title: Text
    outcomes: tuple[Id, ...] = Field(min_length=1)
    outcome_labels: dict[str, str] = {}  # words for an outcome in reasons, e.g. "primary aldosteronism pattern"
    start: Id
    nodes: tuple[Node, ...] = Field(min_length=1)


class Evidence(PackModel):
    id: Id
    when: ConditionField
    strength: Strength
    says: Text
    source: Text


class EvidenceLists(PackModel):
    supporting: tuple[Evidence, ...] = Field(default=(), alias="for")
    opposing: tuple[Evidence, ...] = Field(default=(), alias="against")


class Cause(PackModel):
    id: Id
    label: Text
    evidence: EvidenceLists = Field(default_factory=EvidenceLists)
    description: str = ""
    # Another cause of the pack this one is a specific form of: where this one is likely, a note names it
    # alone, not the general cause beside it as a second cause "acting together".
    form_of: Id | None = None


class FactorGroup(PackModel):
    id: Id
    title: Text


class Factor(PackModel):
    id: Id
    group: Id
    label: Text
    when: ConditionField
    says: Text
    source: Text


class NextTest(PackModel):
    id: Id
    label: Text
    provides: tuple[Id, ...] = Field(min_length=1)
    purpose: str = ""
    source: Text
    # Optional: the test is held back only where this condition is FALSE. True or undecided (a value
    # it reads is missing) leaves the test to the usual rule, so a missing value never hides a test.
    suggest_when: ConditionField | None = None
    # Optional: for a fact `suggest_when` reads, the clause that words it when its absence leaves the
    # test undecided ({gap_unexplained: "lactate and ketones leave the gap unexplained"}); the note says
    # "if <clause> or <clause>", and names a missing fact that has no clause by its label.
    conditional_says: dict[Id, Text] = Field(default_factory=dict)


class PackSpec(PackModel):
    """A whole pack after layering and validation, before the load-time checks."""

    pack: PackInfo
    facts: tuple[FactSpec, ...] = ()
    settings: tuple[SettingSpec, ...] = ()
    scoring: Scoring = Field(default_factory=Scoring)
    factor_groups: tuple[FactorGroup, ...] = ()
    trees: tuple[Tree, ...] = ()
    causes: tuple[Cause, ...] = ()
    factors: tuple[Factor, ...] = ()
    tests: tuple[NextTest, ...] = ()


Problem = tuple[str, int | None, str]


def _problem(where: Where, message: str) -> Problem:
    return (where[0], where[1], message)


def _pack_files(folder: Path) -> list[Path]:
    return sorted(p for p in folder.rglob("*") if p.suffix in {".yaml", ".yml"} and p.is_file())


def read_folder(folder: Path, problems: list[Problem]) -> SourceDict | None:
    """Read and join one folder's files; problems are appended, None when nothing usable."""
    if not folder.is_dir():
        problems.append((str(folder), None, "no such pack folder"))
        return None
    files = _pack_files(folder)
    if not files:
        problems.append((str(folder), None, "the folder holds no .yaml files"))
        return None
    documents: list[SourceDict] = []
    for path in files:
        try:
            data = read_yaml(path)
        except PackSourceError as exc:
            problems.append(_problem(exc.where, exc.message))
            continue
        if data is None:
            continue
        if not isinstance(data, SourceDict):
            problems.append((str(path), 1, "a pack file is a mapping of sections (facts:, trees:, ...)"))
            continue
        for key in data:
            if key not in SECTIONS:
                problems.append(_problem(data.where_of(key), f"unknown section `{key}`; sections are {list(SECTIONS)}"))
        documents.append(data)
    try:
        combined = combine_files(documents, (str(folder), None))
    except PackSourceError as exc:
        problems.append(_problem(exc.where, exc.message))
        return None
    duplicates: list[tuple[Where, str]] = []
    find_duplicate_ids(combined, duplicates)
    problems.extend(_problem(where, message) for where, message in duplicates)
    return combined


def read_pack(dirs: Sequence[Path]) -> tuple[PackSpec | None, list[Problem]]:
    """Layer the folders and validate the result; returns the spec (None on failure) and problems."""
    problems: list[Problem] = []
    if not dirs:
        return None, [("<pack>", None, "no pack folder given")]
    overlay = Overlay()
    merged: SourceDict | None = None
    for folder in dirs:
        data = read_folder(Path(folder), problems)
        if data is None:
            continue
        if merged is None:
            merged = data
            continue
        try:
            merged = overlay.merge(merged, data)
        except PackSourceError as exc:
            problems.append(_problem(exc.where, exc.message))
    if merged is None or problems:
        return None, problems
    try:
        spec = PackSpec.model_validate(merged)
    except ValidationError as exc:
        problems.extend(_explain(exc, merged, overlay))
        return None, problems
    return spec, problems


def _field_path(raw: Any, loc: tuple[int | str, ...]) -> str:
    """`settings[soil_dry].vaule` rather than `settings.1.vaule`."""
    text = ""
    node = raw
    for step in loc:
        if isinstance(step, int) and isinstance(node, list) and 0 <= step < len(node):
            node = node[step]
            item_id = node.get("id") if isinstance(node, dict) else None
            text += f"[{item_id}]" if isinstance(item_id, str) else f"[{step}]"
        else:
            node = node.get(step) if isinstance(node, dict) and isinstance(step, str) else None
            text += f".{step}" if text else str(step)
    return text


def _explain(exc: ValidationError, raw: SourceDict, overlay: Overlay) -> list[Problem]:
    problems: list[Problem] = []
    added = {where: (path, item_id) for path, item_id, where in overlay.added}
    lacking: dict[Where, list[str]] = {}
    for error in exc.errors():
        loc = tuple(error["loc"])
        cause = (error.get("ctx") or {}).get("error")
        if isinstance(cause, ConditionSyntaxError):
            problems.append(_problem(cause.where, cause.message))
            continue
        where = locate(raw, loc)
        field = _field_path(raw, loc)
        message = error["msg"].removeprefix("Value error, ")
        if error["type"] == "missing":
            item_where = locate(raw, loc[:-1])
            if item_where in added:
                lacking.setdefault(item_where, []).append(str(loc[-1]))
                continue
            where = item_where
        problems.append(_problem(where, f"`{field}`: {message}"))
    for item_where, fields in lacking.items():
        path, item_id = added[item_where]
        needs = ", ".join(f"`{f}`" for f in fields)
        message = f"unknown id `{item_id}` in `{path}`: nothing below to override, and as a new item it lacks {needs}"
        problems.append(_problem(item_where, message))
    return sorted(set(problems), key=lambda p: (p[0], p[1] or 0, p[2]))
