"""What every part of case validation shares: limits, the problem collector, and message helpers."""

from __future__ import annotations

import difflib
import math
import re
import unicodedata
from collections.abc import Mapping
from dataclasses import dataclass, field
from typing import Any

from notegen.case.model import Measurement
from notegen.knowledge import shipped_knowledge

MAX_TEXT = 500
DEFAULT_WINDOW_HOURS = 24.0
# A result time outside these years is a typing error; it also keeps time arithmetic in range.
YEARS = (1900, 2199)

# Control characters (a terminal runs ESC sequences printed with the note) and the bidirectional
# overrides that make text display in another order than it reads; tab and newlines are harmless.
# An unpaired surrogate (JSON's "\ud800", or a command-line byte that is not UTF-8) is no character
# at all: it cannot be written as UTF-8, so a note holding one could not be written or read.
_UNSAFE_CHARACTER = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f\u202a-\u202e\u2066-\u2069\ud800-\udfff]")
# `q` takes <=, >=, ≤ and ≥ too, so that they are refused rather than read as < and >; digits are
# ASCII only (a Bengali ৪ looks like 8 but Python reads it as 4).
_VALUE_TEXT = re.compile(
    r"^\s*(?P<q>[<>]=?|[≤≥])?\s*(?P<num>[-+]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+))\s*(?P<unit>.*?)\s*$"
)


def foreign_digit(text: str) -> str | None:
    """What is wrong with `text` if it holds a digit other than 0-9, else None."""
    for char in text:
        if char.isdigit() and not "0" <= char <= "9":
            name = unicodedata.name(char, f"U+{ord(char):04X}")
            return f"holds the digit {char!r} ({name}); write numbers with the digits 0-9"
    return None


def _did_you_mean(
    word: str, choices: tuple[str, ...] | list[str], aliases: Mapping[str, str] | None = None
) -> str:
    """"not a known key", with the closest valid key: an alias ("sodium" for `na`) or a near spelling."""
    folded = re.sub(r"[\s_\-]+", " ", word.strip().lower())
    names = {name: key for name, key in (aliases or {}).items() if key in choices}
    names.update({choice: choice for choice in choices})
    close = [names[name] for name in difflib.get_close_matches(folded, list(names), n=1, cutoff=0.6)]
    hint = f"; did you mean `{close[0]}`?" if close else ""
    return f"not a known key{hint} (known: {', '.join(choices)})"


def _fmt(value: float) -> str:
    return f"{value:.4g}"


def _shown(value: Any) -> str:
    """A user's value echoed in a message, cut short: a 2 MB string must not become a 2 MB message."""
    text = repr(value)
    return text if len(text) <= 60 else f"{text[:57]}..."


def _key(key: Any) -> str:
    """A key as it appears in a field path, cut short like `_shown`, its control characters escaped."""
    text = _UNSAFE_CHARACTER.sub(lambda m: f"\\u{ord(m.group()):04x}", str(key))
    return text if len(text) <= 60 else f"{text[:57]}..."


def _unsafe_character(text: str) -> str | None:
    """What is wrong with `text` if it holds a character that must not reach a note, else None."""
    found = _UNSAFE_CHARACTER.search(text)
    if found is None:
        return None
    code = ord(found.group())
    if 0xD800 <= code <= 0xDFFF:
        return f"contains U+{code:04X}, an unpaired surrogate (not valid Unicode text); remove it"
    return f"contains the control character U+{code:04X}; remove it"


def _finite(value: int | float) -> float | None:
    """`value` as a float, or None when it is infinite, not a number, or too large for a float."""
    try:
        number = float(value)
    except OverflowError:
        return None
    return number if math.isfinite(number) else None


@dataclass
class _Collector:
    system: str
    filename: str | None
    provenance: Mapping[str, str]
    default_source: str
    declared: bool = False  # the case names its unit system (`units:`); bare values are then read in it
    problems: list[tuple[str, str]] = field(default_factory=list)
    measurements: list[Measurement] = field(default_factory=list)
    notices: list[str] = field(default_factory=list)
    date_as_written: str | None = None  # the one date of every result, read neither way (Case.date_as_written)

    def problem(self, path: str, text: str) -> None:
        self.problems.append((path, text))

    def source(self, path: str) -> str:
        return self.provenance.get(path, self.default_source)


def _lab_aliases(section: str) -> dict[str, str]:
    """Analyte names ("sodium", "bicarbonate") -> the section's key, to suggest for a misspelt key."""
    from notegen.knowledge.analytes import normalise

    return {
        normalise(name): analyte.fields[section]
        for analyte in shipped_knowledge().analytes.analytes.values()
        if section in analyte.fields
        for name in analyte.names
    }


def as_written(raw: Any) -> str | None:
    """The number as the case wrote it ("1.0" stays "1.0", "38" stays "38"), for the values table; None
    when it cannot be told (a value YAML or JSON read with more decimals than a lab reports)."""
    if isinstance(raw, Mapping):
        return as_written(raw.get("value"))
    if isinstance(raw, bool):
        return None
    if isinstance(raw, int):
        return str(raw)
    if isinstance(raw, float):
        text = repr(raw)
        point = text.find(".")
        return text if "e" not in text and 0 <= point and len(text) - point - 1 <= 6 else None
    if isinstance(raw, str):
        match = _VALUE_TEXT.match(raw)
        return match["num"] if match else None
    return None
