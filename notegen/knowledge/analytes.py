"""The paste vocabulary (`rules/vocabulary/analytes.yaml`), loaded and checked once."""

from __future__ import annotations

import re
from pathlib import Path
from typing import Literal

from pydantic import BaseModel, ConfigDict, ValidationError

from notegen.errors import RulePackError
from notegen.knowledge.rules_yaml import read_rules_file
from notegen.resources import rules_dir

# Unpickled from the wheel, never validated there: the validator is built on first use.
_STRICT = ConfigDict(frozen=True, extra="forbid", defer_build=True)
SectionName = Literal["gas", "chem", "urine"]
SampleName = Literal["arterial", "venous"]
MarkerName = Literal["urine", "blood", "arterial", "venous"]

_WORD_BREAK = re.compile(r"[^a-z0-9+µμ*!<>]+")


def normalise(text: str) -> str:
    """Lower-case and collapse punctuation to single spaces ("CO2, total" → "co2 total").

    "+" is kept because it tells "Ca++" (ionized) from "Ca" (total).
    """
    return " ".join(_WORD_BREAK.split(text.lower())).strip()


class Analyte(BaseModel):
    model_config = _STRICT

    fields: dict[SectionName, str]
    names: list[str]
    sample: SampleName | None = None
    # Used only when a marker word or a heading says where the sample came from ("ketones" alone
    # may be serum or urine, in different units): never assigned by default.
    needs_origin: bool = False
    # True when the reported value is itself calculated (a gas report's HCO3), so "calc" beside
    # it names the same analyte; otherwise a `derived` word makes the line another quantity.
    calculated: bool = False


class Heading(BaseModel):
    model_config = _STRICT

    section: SectionName
    names: list[str]
    sample: SampleName | None = None


class Vocabulary(BaseModel):
    model_config = _STRICT

    analytes: dict[str, Analyte]
    markers: dict[MarkerName, list[str]]
    noise: list[str]
    derived: list[str] = []
    status_words: list[str] = []
    column_labels: list[str] = []
    result_time_labels: list[str] = []
    headings: list[Heading]
    time_labels: list[str]
    flags: list[str]
    empty_cells: list[str]

    def name_index(self) -> dict[str, str]:
        return {normalise(name): key for key, analyte in self.analytes.items() for name in analyte.names}

    def heading_index(self) -> dict[str, Heading]:
        return {normalise(name): heading for heading in self.headings for name in heading.names}

    def marker_index(self) -> dict[str, MarkerName]:
        return {word: marker for marker, words in self.markers.items() for word in words}


def vocabulary_path() -> Path:
    return rules_dir() / "vocabulary" / "analytes.yaml"


def read_analyte_vocabulary(path: Path | None = None) -> Vocabulary:
    """Read and check the vocabulary; a name given to two analytes is refused."""
    path = path or vocabulary_path()
    raw, _ = read_rules_file(path)
    try:
        vocabulary = Vocabulary.model_validate(raw)
    except ValidationError as exc:
        problems: list[tuple[str, int | None, str]] = [
            (str(path), None, f"{'.'.join(str(p) for p in err['loc'])}: {err['msg']}") for err in exc.errors()
        ]
        raise RulePackError(problems) from exc
    seen: dict[str, str] = {}
    problems = []
    for key, analyte in vocabulary.analytes.items():
        for name in analyte.names:
            norm = normalise(name)
            if norm in seen and seen[norm] != key:
                problems.append((str(path), None, f"name {name!r} is given to both {seen[norm]} and {key}"))
            seen[norm] = key
    if problems:
        raise RulePackError(problems)
    return vocabulary
