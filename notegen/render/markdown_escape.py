"""Make user text safe to place inside Markdown: it prints literally, wherever it lands.

A label such as `**x**`, `| a |` or `{{ 7*7 }}` is data. Escaping it keeps it
from turning bold, splitting a table cell or starting a list. Whitespace runs
(newlines included) collapse to one space, so a value can never end a table
row or open a block of its own.

The escapes are kept to what CommonMark (0.31) and its pipe tables would act on,
because the Markdown note is itself pasted into charts and a backslash before
every full stop would read badly there.
"""

from __future__ import annotations

import re

# Characters that can open or close inline syntax anywhere in a line.
_ALWAYS = frozenset("\\`*_[]|")
_WHITESPACE_RUN = re.compile(r"\s+")
# Entity and numeric references (`&amp;`, `&#35;`, `&#x23;`) would be decoded.
_ENTITY = re.compile(r"&(?=#[0-9]{1,7};|#[xX][0-9a-fA-F]{1,6};|[A-Za-z][A-Za-z0-9]{1,31};)")
# Block syntax that only counts at the start of a line. A value may be placed
# at the start of a line or list item, so its own start is treated as one.
_ORDERED_MARKER = re.compile(r"^(\d{1,9})([.)])(?=\s|$)")
_HEADING_MARKER = re.compile(r"^#{1,6}(?=\s|$)")


def escape_markdown(value: object) -> str:
    """Return `value` as Markdown source that renders as exactly its text.

    Whitespace runs become single spaces and the ends are stripped, which is
    also how the text and HTML renderers would show it.
    """
    if value is None:
        # Printing "None" in a note would hide a missing value; say so instead.
        raise TypeError("md: the value is missing (None); test for it in the template before printing")
    text = _WHITESPACE_RUN.sub(" ", str(value)).strip()
    if not text:
        return ""
    out: list[str] = []
    # `<` starts raw HTML or an autolink only when a `>` follows it; a bare
    # "<5" (a lab result below the limit) is left as typed.
    closing = text.rfind(">")
    for index, char in enumerate(text):
        if char in _ALWAYS or (char == "<" and index < closing):
            out.append("\\" + char)
        else:
            out.append(char)
    escaped = _ENTITY.sub(r"\\&", "".join(out))
    return _escape_line_start(escaped)


def _escape_line_start(text: str) -> str:
    first = text[0]
    if first == ">":
        return "\\" + text
    if first in "-+=" and (len(text) == 1 or text[1] in f" {first}"):
        # A list bullet ("- x"), a thematic break or setext underline ("---", "==").
        return "\\" + text
    if first == "~" and text.startswith("~~~"):
        return "\\" + text
    if _HEADING_MARKER.match(text):
        return "\\" + text
    ordered = _ORDERED_MARKER.match(text)
    if ordered:
        return f"{ordered.group(1)}\\{ordered.group(2)}{text[ordered.end():]}"
    return text
