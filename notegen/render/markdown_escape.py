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

# Characters that can open or close inline syntax anywhere in a line; `<` only before a `>`.
# One substitution over the whole value: the filter runs about 160 times a note.
_ALWAYS = re.compile(r"[\\`*_\[\]|]")
_ALWAYS_OR_ANGLE = re.compile(r"[\\`*_\[\]|<]")
_BACKSLASHED = r"\\\g<0>"
# Entity and numeric references (`&amp;`, `&#35;`, `&#x23;`) would be decoded.
_ENTITY = re.compile(r"&(?=#[0-9]{1,7};|#[xX][0-9a-fA-F]{1,6};|[A-Za-z][A-Za-z0-9]{1,31};)")
# Block syntax that only counts at the start of a line. A value may be placed
# at the start of a line or list item, so its own start is treated as one.
_ORDERED_MARKER = re.compile(r"^(\d{1,9})([.)])(?=\s|$)")
_HEADING_MARKER = re.compile(r"^#{1,6}(?=\s|$)")
_LINE_START_MARKS = frozenset(">-+=~#")


def escape_markdown(value: object) -> str:
    """Return `value` as Markdown source that renders as exactly its text.

    Whitespace runs become single spaces and the ends are stripped, which is
    also how the text and HTML renderers would show it.
    """
    if value is None:
        # Printing "None" in a note would hide a missing value; say so instead.
        raise TypeError("md: the value is missing (None); test for it in the template before printing")
    # str.split() splits on the characters `\s` matches (str.isspace), and drops the ends.
    text = " ".join(str(value).split())
    if not text:
        return ""
    # `<` starts raw HTML or an autolink only when a `>` follows it; a bare
    # "<5" (a lab result below the limit) is left as typed.
    closing = text.rfind(">")
    if closing > 0:
        before, after = text[:closing], text[closing:]
        escaped = _ALWAYS_OR_ANGLE.sub(_BACKSLASHED, before) + _ALWAYS.sub(_BACKSLASHED, after)
    else:
        escaped = _ALWAYS.sub(_BACKSLASHED, text)
    if "&" in escaped:
        escaped = _ENTITY.sub(r"\\&", escaped)
    return _escape_line_start(escaped)


def _escape_line_start(text: str) -> str:
    first = text[0]
    if first not in _LINE_START_MARKS and not first.isdigit():
        return text  # the common case: no block syntax can start here
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
