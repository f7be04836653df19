"""Sentence templates: text with `{name}` placeholders filled by our own code.

A placeholder names a fact, a setting or a tree of the pack; nothing else is interpreted
(no attribute access, no expressions, no format specs). Any other brace is kept as written.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass

PLACEHOLDER = re.compile(r"\{([a-z][a-z0-9_]*)\}")


@dataclass(frozen=True, slots=True)
class Template:
    """A parsed template: literal pieces alternating with placeholder names."""

    text: str
    pieces: tuple[str, ...]  # even positions literal, odd positions names

    @property
    def names(self) -> tuple[str, ...]:
        return self.pieces[1::2]

    def fill(self, values: Mapping[str, str]) -> str:
        parts = list(self.pieces)
        for i in range(1, len(parts), 2):
            parts[i] = values[parts[i]]
        return "".join(parts)


def parse_template(text: str) -> Template:
    return Template(text, tuple(PLACEHOLDER.split(text)))
