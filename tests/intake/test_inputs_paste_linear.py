"""A pasted line is read in time linear in its length: the analyte-name search tries only as many
leading words as the longest analyte name has, not every prefix of the line.

A 100 KB line of repeated words with no value took seconds, and 2 MB (within the input limit)
hung, when every prefix was joined and looked up. Timing is not asserted here (bench/ holds
timings); the number of name lookups is.
"""

from __future__ import annotations

import pytest

from notegen.errors import PasteError
from notegen.intake.paste import parse_paste
from notegen.knowledge import shipped_knowledge
from notegen.knowledge.analytes import Vocabulary

LONGEST_NAME_WORDS = 10  # an analyte name ("urine potassium creatinine ratio") is a few words


class _CountingNames(dict[str, str]):
    lookups = 0

    def __contains__(self, key: object) -> bool:
        _CountingNames.lookups += 1
        return super().__contains__(key)


@pytest.mark.parametrize("word", ["sodium", "urine", "xyz"])
def test_a_long_line_without_a_value_costs_a_few_name_lookups(monkeypatch: pytest.MonkeyPatch, word: str) -> None:
    original = Vocabulary.name_index
    monkeypatch.setattr(Vocabulary, "name_index", lambda self: _CountingNames(original(self)))
    _CountingNames.lookups = 0
    line = " ".join([word] * 20_000)  # about 140 KB
    with pytest.raises(PasteError, match="no lab value notegen can use") as caught:
        parse_paste(line + "\n", source="paste")
    assert len(str(caught.value)) < 300  # the line is quoted cut short, with its length
    # the whole line once, then at most one lookup per word of the longest name (before: one per word of the line)
    assert _CountingNames.lookups <= 1 + LONGEST_NAME_WORDS, _CountingNames.lookups


def test_the_longest_analyte_name_is_short() -> None:

    assert max(len(name.split()) for name in shipped_knowledge().analytes.name_index()) <= LONGEST_NAME_WORDS
