"""The one severity vocabulary (`rules/severity.yaml`): each word names one threshold of one value.

The number lives in `acid_base.yaml` (the alerts read it); a rule-pack setting sharing the word must
hold the same number. `severity_problems` lists every disagreement, for `check-pack` and the tests.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from functools import lru_cache
from typing import Literal, cast

from notegen.errors import RulePackError
from notegen.knowledge.rules_yaml import read_rules_file
from notegen.knowledge.settings import AcidBaseSettings
from notegen.resources import rules_dir

__all__ = ["SeverityWord", "severity_problems", "severity_words"]

Word = Literal["marked", "severe", "critical"]
FILE_NAME = "severity.yaml"


@dataclass(frozen=True)
class SeverityWord:
    id: str
    word: Word
    threshold: str  # a setting of acid_base.yaml
    pack_settings: tuple[str, ...]  # alkalosis-pack settings that must hold the same number


@lru_cache(maxsize=1)
def severity_words() -> tuple[SeverityWord, ...]:
    path = rules_dir() / FILE_NAME
    data, _ = read_rules_file(path)
    if not isinstance(data, dict):
        raise RulePackError([(str(path), 1, "expected a mapping at the top")])
    words = []
    for key, entry in data.items():
        if entry.get("word") not in ("marked", "severe", "critical"):
            raise ValueError(f"{FILE_NAME}: {key}: word must be marked, severe or critical")
        words.append(
            SeverityWord(
                id=str(key),
                word=cast(Word, entry["word"]),
                threshold=str(entry["threshold"]),
                pack_settings=tuple(str(name) for name in entry.get("pack_settings", ())),
            )
        )
    return tuple(words)


def severity_problems(settings: AcidBaseSettings, pack_settings: Mapping[str, tuple[float, str | None]]) -> list[str]:
    """Each place where a severity word would mean two numbers, in words; empty when they agree."""
    problems: list[str] = []
    for entry in severity_words():
        threshold = getattr(settings, entry.threshold, None)
        if threshold is None:
            problems.append(f"{FILE_NAME}: {entry.id}: acid_base.yaml has no setting {entry.threshold!r}")
            continue
        for name in entry.pack_settings:
            shared = pack_settings.get(name)
            if shared is None:
                problems.append(f"{FILE_NAME}: {entry.id}: the alkalosis pack has no setting {name!r}")
            elif shared[0] != threshold.value:
                problems.append(
                    f"{FILE_NAME}: {entry.id}: the alkalosis pack's {name} is {shared[0]:g} but "
                    f"acid_base.yaml's {entry.threshold} is {threshold.value:g}; '{entry.word}' must mean one threshold"
                )
    return problems
