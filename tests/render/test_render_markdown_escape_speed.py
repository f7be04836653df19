"""The regex `escape_markdown` writes exactly what the character-by-character version wrote.

The earlier implementation is kept here, unchanged, as the reference: the rewrite was for speed
(issue 8) and must not change a single escaped byte of any note.
"""

from __future__ import annotations

import re

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from notegen.render.markdown_escape import escape_markdown

# --- the reference: escape_markdown as it was before the regex rewrite -------------------------
_ALWAYS = frozenset("\\`*_[]|")
_WHITESPACE_RUN = re.compile(r"\s+")
_ENTITY = re.compile(r"&(?=#[0-9]{1,7};|#[xX][0-9a-fA-F]{1,6};|[A-Za-z][A-Za-z0-9]{1,31};)")
_ORDERED_MARKER = re.compile(r"^(\d{1,9})([.)])(?=\s|$)")
_HEADING_MARKER = re.compile(r"^#{1,6}(?=\s|$)")


def reference_escape(value: object) -> str:
    text = _WHITESPACE_RUN.sub(" ", str(value)).strip()
    if not text:
        return ""
    out: list[str] = []
    closing = text.rfind(">")
    for index, char in enumerate(text):
        if char in _ALWAYS or (char == "<" and index < closing):
            out.append("\\" + char)
        else:
            out.append(char)
    escaped = _ENTITY.sub(r"\\&", "".join(out))
    return _reference_line_start(escaped)


def _reference_line_start(text: str) -> str:
    first = text[0]
    if first == ">":
        return "\\" + text
    if first in "-+=" and (len(text) == 1 or text[1] in f" {first}"):
        return "\\" + text
    if first == "~" and text.startswith("~~~"):
        return "\\" + text
    if _HEADING_MARKER.match(text):
        return "\\" + text
    ordered = _ORDERED_MARKER.match(text)
    if ordered:
        return f"{ordered.group(1)}\\{ordered.group(2)}{text[ordered.end() :]}"
    return text


# --- the comparison --------------------------------------------------------------------------------

# Every character either version treats specially, a few ordinary ones, and digits from other
# scripts (`\d` matches them), so that short strings hit the edge cases often.
_MARKDOWN_HEAVY = st.text(
    alphabet=st.sampled_from(list("\\`*_[]|<>&#;-+=~.)( \t\n0123456789axX") + ["\u0663", "\u00a0", "\u2028"]),
    max_size=24,
)
_ENTITY_LIKE = st.builds(
    lambda head, body, tail: f"{head}&{body};{tail}",
    st.text(max_size=4),
    st.sampled_from(["amp", "#35", "#x23", "#X1F600", "#12345678", "x", "", "a" * 33, "lt"]),
    st.text(max_size=4),
)


@settings(max_examples=3000, deadline=None)
@given(st.one_of(_MARKDOWN_HEAVY, _ENTITY_LIKE, st.text(), st.integers(), st.floats()))
def test_same_output_as_the_character_by_character_version(value: object) -> None:
    assert escape_markdown(value) == reference_escape(value)


@pytest.mark.parametrize(
    "value",
    [
        ">",
        "<a>",
        "a<b>c<d",
        "<<>>",
        "x>y<z",
        "# x",
        "####### x",
        "12) a",
        "1234567890. a",
        "\u0663. x",
        "- ",
        "--",
        "-x",
        "~~~",
        "~~",
        "===",
        "+",
        "&amp; &x; &#;",
        "[`|`]",
        "\\",
    ],
)
def test_edge_cases_match_the_reference(value: str) -> None:
    assert escape_markdown(value) == reference_escape(value)
