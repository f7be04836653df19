"""The vocabularies under `rules/`: case fields, medications and clinical findings.

Loaded on first use and cached; a service's folder can add entries of its own.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from notegen.errors import RulePackError
from notegen.knowledge.rules_yaml import read_rules_file
from notegen.resources import rules_dir


@dataclass(frozen=True)
class FieldInfo:
    label: str
    low: float
    high: float


@dataclass(frozen=True)
class DrugInfo:
    generic: str
    classes: tuple[str, ...]
    # Usual duration of a diuretic's effect, (shortest, longest) hours, and where the figure comes from.
    action_hours: tuple[float, float] | None = None
    action_source: str | None = None


@dataclass(frozen=True)
class FindingInfo:
    id: str
    label: str


def fold(text: str) -> str:
    """Fold a name for matching: case, spaces, hyphens, underscores and apostrophes do not count."""
    return re.sub(r"[\s_\-'’]+", " ", text.strip().lower()).strip()


def _load(path: Path) -> dict[str, Any]:
    data, _ = read_rules_file(path)
    if not isinstance(data, dict):
        raise RulePackError([(str(path), 1, "expected a mapping at the top")])
    return data


def read_fields(folder: Path | None = None) -> dict[str, FieldInfo]:
    """Case field -> label and plausibility bounds, from `fields.yaml`."""
    data = _load((folder or rules_dir()) / "fields.yaml")
    return {name: FieldInfo(entry["label"], *entry["plausible"]) for name, entry in data.items()}


def read_medications(folder: Path | None = None) -> dict[str, DrugInfo]:
    """Folded name or synonym -> drug."""
    path = (folder or rules_dir()) / "vocabulary" / "medications.yaml"
    data = _load(path)
    table: dict[str, DrugInfo] = {}
    for generic, entry in data.items():
        hours = entry.get("action_hours")
        action = (float(hours[0]), float(hours[1])) if hours is not None else None
        if action is not None and not (0 < action[0] <= action[1] and entry.get("action_source")):
            message = f"medication `{generic}`: action_hours needs 0 < shortest <= longest and an action_source"
            raise RulePackError([(str(path), None, message)])
        info = DrugInfo(generic, tuple(entry["classes"]), action, entry.get("action_source"))
        for name in [generic, *entry.get("synonyms", [])]:
            table[fold(name)] = info
    return table


def read_findings(folder: Path | None = None) -> dict[str, FindingInfo]:
    """Folded id, label or synonym -> finding."""
    data = _load((folder or rules_dir()) / "vocabulary" / "findings.yaml")
    table: dict[str, FindingInfo] = {}
    for finding_id, entry in data.items():
        info = FindingInfo(finding_id, entry["label"])
        for name in [finding_id, entry["label"], *entry.get("synonyms", [])]:
            table[fold(name)] = info
    return table


def read_next_test_sentences(folder: Path | None = None) -> dict[str, str]:
    """For each suggested test id, one plain sentence on what its result would change (next_tests.yaml)."""
    data = _load((folder or rules_dir()) / "vocabulary" / "next_tests.yaml")
    return {str(test): " ".join(str(text).split()) for test, text in data.items()}

