"""Number and word formatting used by the note templates: the filters are `notegen._format`'s writers."""

from __future__ import annotations

from notegen._format import format_number, join_words, ph_text, sentence_case, trimmed_number

__all__ = ["format_number", "join_words", "ph_text", "sentence_case", "trimmed_number"]
