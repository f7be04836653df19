"""Printout forms the paste reader accepts beyond one analyte per line: decimal commas and gas shorthand.

- Decimal commas ("7,41") are read only when the whole paste writes decimals that way: no
  decimal point anywhere, and at least one comma followed by one or two digits. A comma
  followed by three digits ("1,200") could be a thousands separator and is left as written,
  so its line is not used.
- Gas shorthand is the trade's order pH/PaCO2/PaO2/HCO3 after a gas heading
  ("ABG 7.52/48/80/38"); exactly four numbers, nothing else on the line.
"""

from __future__ import annotations

import re
from collections.abc import Mapping

from notegen.knowledge.analytes import Heading, normalise

_DOT_DECIMAL = re.compile(r"[0-9]\.[0-9]")
_COMMA_DECIMAL = re.compile(r"(?<![0-9,])([0-9]+),([0-9]{1,2})(?![0-9,])")
_SHORTHAND = re.compile(
    r"^(?P<head>[^0-9/]*?)\s*:?\s*(?P<numbers>[0-9]+(?:\.[0-9]+)?(?:\s*/\s*[0-9]+(?:\.[0-9]+)?)+)\s*$"
)
SHORTHAND_ORDER = ("ph", "pco2", "po2", "bicarbonate")  # analyte ids in rules/vocabulary/analytes.yaml


def decimal_commas(text: str) -> tuple[str, bool]:
    """`text` with decimal commas read as points when the whole paste uses them; and whether it did."""
    if _DOT_DECIMAL.search(text) or not _COMMA_DECIMAL.search(text):
        return text, False
    return _COMMA_DECIMAL.sub(r"\1.\2", text), True


def gas_shorthand(rest: str, headings: Mapping[str, Heading]) -> tuple[Heading, list[str]] | None:
    """(the gas heading, the numbers) when `rest` is a gas heading then numbers joined by '/', else None."""
    match = _SHORTHAND.match(rest)
    if match is None:
        return None
    heading = headings.get(normalise(match["head"]))
    if heading is None or heading.section != "gas":
        return None
    return heading, [part.strip() for part in match["numbers"].split("/")]


def only_words_from(rest: str, words: set[str]) -> bool:
    """Whether `rest` is made only of `words` (a table's column header: "Test  Result  Units")."""
    found = normalise(rest).split()
    return bool(found) and all(word in words for word in found)


def names_any(rest: str, labels: set[str]) -> bool:
    """Whether `rest` holds one of `labels` (each one or more whole words)."""
    words = f" {normalise(rest)} "
    return any(f" {label} " in words for label in labels)
