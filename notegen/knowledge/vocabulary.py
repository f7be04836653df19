"""The vocabularies under `rules/`: case fields, medications and clinical findings.

Loaded on first use and cached; a service's folder can add entries of its own.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from functools import lru_cache
from pathlib import Path
from typing import Any

from notegen.resources import read_yaml_safely, rules_dir


@dataclass(frozen=True)
class FieldInfo:
    label: str
    low: float
    high: float


@dataclass(frozen=True)
class DrugInfo:
    generic: str
    classes: tuple[str, ...]


@dataclass(frozen=True)
class FindingInfo:
    id: str
    label: str


def fold(text: str) -> str:
    """Fold a name for matching: case, spaces, hyphens, underscores and apostrophes do not count."""
    return re.sub(r"[\s_\-'’]+", " ", text.strip().lower()).strip()


def _load(path: Path) -> dict[str, Any]:
    with path.open(encoding="utf-8") as handle:
        data = read_yaml_safely(handle)  # plain YAML types only
    if not isinstance(data, dict):
        raise ValueError(f"{path}: expected a mapping at the top")
    return data


@lru_cache(maxsize=8)
def fields(folder: Path | None = None) -> dict[str, FieldInfo]:
    data = _load((folder or rules_dir()) / "fields.yaml")
    return {name: FieldInfo(entry["label"], *entry["plausible"]) for name, entry in data.items()}


@lru_cache(maxsize=8)
def medications(folder: Path | None = None) -> dict[str, DrugInfo]:
    """Folded name or synonym -> drug."""
    data = _load((folder or rules_dir()) / "vocabulary" / "medications.yaml")
    table: dict[str, DrugInfo] = {}
    for generic, entry in data.items():
        info = DrugInfo(generic, tuple(entry["classes"]))
        for name in [generic, *entry.get("synonyms", [])]:
            table[fold(name)] = info
    return table


@lru_cache(maxsize=8)
def findings(folder: Path | None = None) -> dict[str, FindingInfo]:
    """Folded id, label or synonym -> finding."""
    data = _load((folder or rules_dir()) / "vocabulary" / "findings.yaml")
    table: dict[str, FindingInfo] = {}
    for finding_id, entry in data.items():
        info = FindingInfo(finding_id, entry["label"])
        for name in [finding_id, entry["label"], *entry.get("synonyms", [])]:
            table[fold(name)] = info
    return table


@lru_cache(maxsize=1)
def _finding_labels() -> dict[str, str]:
    return {info.id: info.label for info in findings().values()}  # `findings()`, the call already cached


def finding_label(finding_id: str) -> str:
    """The words for a finding id; a look-up, not a scan, since a case may list many findings."""
    label = _finding_labels().get(finding_id)
    return label if label is not None else finding_id.replace("_", " ")


@lru_cache(maxsize=1)
def next_test_sentences() -> dict[str, str]:
    """For each suggested test id, one plain sentence on what its result would change (next_tests.yaml)."""
    data = _load(rules_dir() / "vocabulary" / "next_tests.yaml")
    return {str(test): " ".join(str(text).split()) for test, text in data.items()}
