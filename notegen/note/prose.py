"""Words and figures shared by the paragraph's sentences: clauses, lists, articles, amounts.

Every figure comes from the one formatter (`notegen._format`), so a value reads the same in the
paragraph, the reading's steps and the worksheet.
"""

from __future__ import annotations

import re
from collections.abc import Sequence

from notegen._format import format_range, join_words, sentence_case, trimmed_number
from notegen.acidbase.model import ExpectedRange

WORDS: dict[str, str] = {
    "metabolic_alkalosis": "metabolic alkalosis",
    "metabolic_acidosis": "metabolic acidosis",
    "respiratory_acidosis": "respiratory acidosis",
    "respiratory_alkalosis": "respiratory alkalosis",
}
# Eponyms keep their capital when a finding or label moves into the middle of a sentence.
_KEEP_CAPITAL = frozenset({"Addison", "Bartter", "Conn", "Cushing", "Gitelman", "Henderson", "Liddle", "Winter"})
_FIRST_WORD = re.compile(r"[A-Za-z]+")
# Two-letter words that are English, not element symbols such as Na, Mg or Cl.
_SHORT_WORDS = frozenset({"A", "An", "As", "At", "By", "If", "In", "Is", "It", "No", "Of", "On", "Or", "To", "Up"})


def mmhg(value: float) -> str:
    return f"{trimmed_number(value)} mmHg"


def mmol(value: float) -> str:
    return f"{trimmed_number(value)} mmol/L"


def span(low: float, high: float, unit: str) -> str:
    return format_range(low, high, unit)


def expected_range(expected: ExpectedRange) -> str:
    return span(expected.low, expected.high, expected.unit)


def by_rule(rule: str) -> str:
    return rule if rule.startswith("Winter") else f"the {rule}"


def inline(text: str) -> str:
    """Text placed mid-sentence: an ordinary capitalised first word loses its capital."""
    text = text.strip()
    match = _FIRST_WORD.match(text)
    if match and match.start() == 0:
        word = match.group()
        ordinary = (len(word) >= 3 and word[1:].islower()) or word in _SHORT_WORDS
        if ordinary and word[0].isupper() and word not in _KEEP_CAPITAL:
            return text[0].lower() + text[1:]
    return text


def clause(text: str) -> str:
    """A sentence turned into a clause for a parenthesis or a list."""
    return inline(text).rstrip().rstrip(".").rstrip()


def sentence(text: str) -> str:
    text = text.strip()
    if not text:
        return ""
    text = sentence_case(text)
    return text if text[-1] in ".!?" else text + "."


def article(word: str) -> str:
    return "an" if word[:1].lower() in "aeiou" else "a"


def word_list(items: Sequence[str], conj: str = "and") -> str:
    """An English list. Items holding their own commas or semicolons are kept apart by semicolons;
    items holding "and" or "or" get a serial comma, so "chloride and volume depletion" stays whole."""
    if len(items) > 2 and any(mark in item for item in items for mark in (",", ";")):
        return f"{'; '.join(items[:-1])}; {conj} {items[-1]}"
    if len(items) > 2 and any(f" {word} " in item for item in items for word in ("and", "or")):
        return f"{', '.join(items[:-1])}, {conj} {items[-1]}"
    if len(items) == 2 and not items[0].endswith(")") and any(f" {word} " in items[0] for word in ("and", "or")):
        return f"{items[0]}, {conj} {items[1]}"
    return join_words(items, conj)
