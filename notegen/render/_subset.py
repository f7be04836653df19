"""A strict parser for the Markdown the shipped note templates write; None for anything else.

markdown-it-py reads any Markdown exactly, but importing it costs more than the rest of the
plain-text step of a cold note, and it takes several milliseconds a note in a batch. The shipped
templates write a small part of CommonMark:

- ATX headings (`## Calculations`);
- paragraphs, their lines joined by soft breaks;
- tight `- ` lists whose items are one paragraph, with two-space continuation lines and
  backslash hard breaks, and tight `1. ` lists of one-line items;
- pipe tables whose rows all have the header's number of cells, aligned with `---:`;
- one-line block quotes (the critical-values banner);
- `**strong**` and `*emphasis*` in simple pairs, backslash escapes, and text.

`parse_note_markdown` reads exactly that part into nodes that carry what the text renderer reads
from markdown-it's SyntaxTreeNode (type, tag, content, attrs, hidden, children), built as
markdown-it builds them. Whenever a document holds anything else, or anything whose reading
depends on a CommonMark rule not modelled here (emphasis flanking beyond simple pairs, entities,
code spans, links, autolinks, tabs, indented or lazy lines, setext underlines, loose or nested
lists, ragged tables, escaped pipes in a table...), it returns None and the caller hands the
document to markdown-it. Declining is always safe; guessing never is.
"""

from __future__ import annotations

import re
import unicodedata
from collections.abc import Mapping, Sequence
from types import MappingProxyType

_NO_ATTRIBUTES: Mapping[str, str | int | float] = MappingProxyType({})


class SubsetNode:
    """One node of the tree, with the fields of markdown-it's SyntaxTreeNode the renderer reads."""

    __slots__ = ("attrs", "children", "content", "hidden", "tag", "type")

    def __init__(
        self,
        type: str,
        children: Sequence[SubsetNode] = (),
        *,
        tag: str = "",
        content: str = "",
        attrs: Mapping[str, str | int | float] = _NO_ATTRIBUTES,
        hidden: bool = False,
    ) -> None:
        self.type = type
        self.children = children
        self.tag = tag
        self.content = content
        self.attrs = attrs
        self.hidden = hidden

    def __repr__(self) -> str:
        return f"SubsetNode({self.type!r}, {list(self.children)!r}, content={self.content!r})"


class _Declined(Exception):
    """The document holds something this parser does not read with certainty."""


def parse_note_markdown(markdown: str) -> list[SubsetNode] | None:
    """The top-level blocks of `markdown` as markdown-it would build them, or None to decline."""
    # Whitespace other than spaces and newlines (tabs, carriage returns, no-break and other
    # Unicode spaces) changes indentation, trimming and emphasis flanking; NUL is replaced by
    # markdown-it. Trailing spaces make hard breaks. None of these come from the templates.
    if _UNUSUAL_CHARACTER.search(markdown) or " \n" in markdown or markdown.endswith(" "):
        return None
    try:
        return _parse_blocks(markdown.split("\n"))
    except _Declined:
        return None


_UNUSUAL_CHARACTER = re.compile(r"[^\S \n]|\x00")


# Blocks --------------------------------------------------------------------------------------------

_HEADING = re.compile(r"(#{1,6}) (\S.*)\Z")
_ORDERED_ITEM = re.compile(r"([0-9]{1,9})\. (\S.*)\Z")
# Anything that could be an ordered-list marker, digits of any script included: declined unless
# it is an _ORDERED_ITEM where one is expected.
_ORDERED_MARKER = re.compile(r"\d+[.)](?: |\Z)")
_DELIMITER_CELL = re.compile(r" *(:?)-+(:?) *\Z")
# A line's first character that could open a block other than a paragraph (or, on a following
# line, interrupt one or underline it): `#` heading, `-+*` list or break, `_` break, `=` and `-`
# underline, `>` quote, backtick and `~` fence, `<` HTML, `|` and `:` table rows, a space indent.
_UNSAFE_LINE_START = frozenset("#-+*_=>`~<|: ")


def _paragraph_text(line: str) -> str:
    """`line` if it can only continue or start a paragraph, wherever a block may begin; else decline."""
    first = line[:1]
    if not first:
        raise _Declined
    if first in _UNSAFE_LINE_START:
        # `**Label:**` and `*Draft ...*` open a paragraph: one or two `*` before anything but a
        # space or a third `*` start no list (that needs a space) and no thematic break.
        if first != "*" or not _STAR_LEAD.match(line):
            raise _Declined
    elif _ORDERED_MARKER.match(line):
        raise _Declined
    return line


_STAR_LEAD = re.compile(r"\*{1,2}[^ *]")


def _parse_blocks(lines: list[str]) -> list[SubsetNode]:
    blocks: list[SubsetNode] = []
    count = len(lines)
    index = 0
    while index < count:
        line = lines[index]
        if not line:
            index += 1
            continue
        first = line[0]
        if first == "#":
            node, index = _heading(lines, index)
        elif first == "|":
            node, index = _table(lines, index)
        elif first == ">":
            node, index = _block_quote(lines, index)
        elif first == "-":
            node, index = _bullet_list(lines, index)
        elif _ORDERED_MARKER.match(line):
            node, index = _ordered_list(lines, index)
        else:
            node, index = _paragraph(lines, index)
        blocks.append(node)
    return blocks


def _next_line(lines: list[str], index: int) -> str:
    return lines[index + 1] if index + 1 < len(lines) else ""


def _heading(lines: list[str], index: int) -> tuple[SubsetNode, int]:
    line = lines[index]
    match = _HEADING.match(line)
    # A closing run of `#` is cut by markdown-it; a heading that ends in `#` is declined.
    if match is None or line.endswith("#"):
        raise _Declined
    # The table rule runs before the heading rule: `## a | b` over a delimiter row is a table.
    if "|" in line and _next_line(lines, index)[:1] in ("|", "-", ":"):
        raise _Declined
    level = len(match.group(1))
    return SubsetNode("heading", [_inline(match.group(2))], tag=f"h{level}"), index + 1


def _paragraph(lines: list[str], index: int) -> tuple[SubsetNode, int]:
    # Every line must read as paragraph text: nothing on a following line may interrupt the
    # paragraph (heading, list, quote, fence, table) or turn it into a setext heading.
    parts = [_paragraph_text(lines[index])]
    index += 1
    while index < len(lines) and lines[index]:
        parts.append(_paragraph_text(lines[index]))
        index += 1
    return SubsetNode("paragraph", [_inline("\n".join(parts))], tag="p"), index


def _block_quote(lines: list[str], index: int) -> tuple[SubsetNode, int]:
    line = lines[index]
    # One line, `> ` and paragraph text, then a blank line: nothing lazy can follow.
    if not line.startswith("> ") or _next_line(lines, index):
        raise _Declined
    paragraph = SubsetNode("paragraph", [_inline(_paragraph_text(line[2:]))], tag="p")
    return SubsetNode("blockquote", [paragraph], tag="blockquote"), index + 1


def _bullet_list(lines: list[str], index: int) -> tuple[SubsetNode, int]:
    count = len(lines)
    items: list[SubsetNode] = []
    while True:
        line = lines[index]
        if not line.startswith("- "):
            raise _Declined
        parts = [_paragraph_text(line[2:])]
        index += 1
        # Continuation lines are indented by exactly the item's two columns; one, three or
        # more spaces, or none (a lazy line), are read differently and declined.
        while index < count and lines[index].startswith("  "):
            parts.append(_paragraph_text(lines[index][2:]))
            index += 1
        items.append(_tight_item("\n".join(parts)))
        if index >= count or not lines[index]:
            break
        if not lines[index].startswith("- "):
            raise _Declined  # a lazy line, or a block that interrupts the item
    # A `-` after blank lines would continue this list as a loose one.
    if _next_block_start(lines, index)[:1] == "-":
        raise _Declined
    return SubsetNode("bullet_list", items, tag="ul"), index


def _ordered_list(lines: list[str], index: int) -> tuple[SubsetNode, int]:
    count = len(lines)
    items: list[SubsetNode] = []
    start = 1
    while index < count and lines[index]:
        match = _ORDERED_ITEM.match(lines[index])
        if match is None:
            raise _Declined  # another marker, a `)` list, or a continuation line
        if not items:
            start = int(match.group(1))
        items.append(_tight_item(_paragraph_text(match.group(2))))
        index += 1
    if _ORDERED_MARKER.match(_next_block_start(lines, index)):
        raise _Declined  # would continue this list as a loose one
    attrs: Mapping[str, str | int | float] = _NO_ATTRIBUTES if start == 1 else MappingProxyType({"start": start})
    return SubsetNode("ordered_list", items, tag="ol", attrs=attrs), index


def _tight_item(text: str) -> SubsetNode:
    # markdown-it marks the paragraphs of a tight list hidden.
    return SubsetNode("list_item", [SubsetNode("paragraph", [_inline(text)], tag="p", hidden=True)], tag="li")


def _next_block_start(lines: list[str], index: int) -> str:
    while index < len(lines) and not lines[index]:
        index += 1
    return lines[index] if index < len(lines) else ""


def _table(lines: list[str], index: int) -> tuple[SubsetNode, int]:
    header = _table_row(lines[index])
    delimiter = _table_row(_next_line(lines, index))
    if len(delimiter) != len(header):
        raise _Declined
    aligns: list[Mapping[str, str | int | float]] = []
    for cell in delimiter:
        match = _DELIMITER_CELL.match(cell)
        if match is None:
            raise _Declined
        left, right = match.groups()
        align = "center" if left and right else "right" if right else "left" if left else ""
        aligns.append(MappingProxyType({"style": f"text-align:{align}"}) if align else _NO_ATTRIBUTES)
    sections = [SubsetNode("thead", [_table_cells("th", header, aligns)], tag="thead")]
    body: list[SubsetNode] = []
    index += 2
    # The table runs to a blank line; every row must have the header's number of cells
    # (markdown-it pads short rows and cuts long ones).
    while index < len(lines) and lines[index]:
        cells = _table_row(lines[index])
        if len(cells) != len(header):
            raise _Declined
        body.append(_table_cells("td", cells, aligns))
        index += 1
    if body:
        sections.append(SubsetNode("tbody", body, tag="tbody"))
    return SubsetNode("table", sections, tag="table"), index


def _table_cells(kind: str, cells: list[str], aligns: list[Mapping[str, str | int | float]]) -> SubsetNode:
    nodes = [
        SubsetNode(kind, [_inline(cell.strip(" "))], tag=kind, attrs=attrs)
        for cell, attrs in zip(cells, aligns, strict=True)
    ]
    return SubsetNode("tr", nodes, tag="tr")


def _table_row(line: str) -> list[str]:
    """The cells of `| a | b |`; declined without both outer pipes, or with an escaped pipe."""
    # markdown-it splits cells before reading escapes, and `\|` (even after `\\`) joins two cells.
    if len(line) < 2 or line[0] != "|" or line[-1] != "|" or "\\|" in line:
        raise _Declined
    return line[1:-1].split("|")


# Inline --------------------------------------------------------------------------------------------

# Characters that start inline syntax. `_`, backticks and brackets are declined outright; `<` and
# `&` only where an autolink or an entity could follow.
_INLINE_SYNTAX = re.compile(r"[\\\n*_`\[\]<&]")
# What a backslash makes literal (CommonMark's ASCII punctuation); before anything else it stays.
_ESCAPABLE = frozenset("!\"#$%&'()*+,-./:;<=>?@[\\]^_`{|}~")
_ASCII_WHITESPACE = frozenset(" \n")


def _inline(source: str) -> SubsetNode:
    """An `inline` node holding the children markdown-it builds from `source`."""
    if _INLINE_SYNTAX.search(source) is None:  # plain text, as most table cells are
        return SubsetNode("inline", [SubsetNode("text", content=source)] if source else [], content=source)
    # Tokens as markdown-it's inline rules push them: ("text", content), ("softbreak", ""),
    # ("hardbreak", ""), and one ("*", "") per delimiter character.
    tokens: list[tuple[str, str]] = []
    runs: list[tuple[int, int, bool, bool]] = []  # first token, length, can open, can close
    end = len(source)
    position = 0
    while position < end:
        match = _INLINE_SYNTAX.search(source, position)
        if match is None:
            tokens.append(("text", source[position:]))
            break
        at = match.start()
        if at > position:
            tokens.append(("text", source[position:at]))
        char = source[at]
        if char == "\\":
            if at + 1 >= end:
                tokens.append(("text", "\\"))  # a backslash ending the block is literal
                position = at + 1
                continue
            following = source[at + 1]
            if following == "\n":
                tokens.append(("hardbreak", ""))
                position = _skip_spaces(source, at + 2)
                continue
            tokens.append(("text", following if following in _ESCAPABLE else "\\" + following))
            position = at + 2
        elif char == "\n":
            if at and source[at - 1] == " ":
                raise _Declined  # trailing spaces: cut from the text, and two or more make a break
            tokens.append(("softbreak", ""))
            position = _skip_spaces(source, at + 1)
        elif char == "*":
            stop = at
            while stop < end and source[stop] == "*":
                stop += 1
            length = stop - at
            if length > 2:
                raise _Declined
            can_open, can_close = _flanking(source[at - 1] if at else " ", source[stop] if stop < end else " ")
            runs.append((len(tokens), length, can_open, can_close))
            tokens.extend([("*", "")] * length)
            position = stop
        elif char == "<":
            if source.find(">", at + 1) != -1:
                raise _Declined  # could be an autolink
            tokens.append(("text", "<"))
            position = at + 1
        elif char == "&":
            following = source[at + 1 : at + 2]
            if following == "#" or (following.isascii() and following.isalpha()):
                raise _Declined  # could be an entity
            tokens.append(("text", "&"))
            position = at + 1
        else:
            raise _Declined  # `_`, a backtick, `[` or `]`
    if runs:
        _pair_emphasis(tokens, runs)
    return SubsetNode("inline", _inline_tree(tokens), content=source)


def _skip_spaces(source: str, position: int) -> int:
    while position < len(source) and source[position] == " ":
        position += 1
    return position


def _flanking(before: str, after: str) -> tuple[bool, bool]:
    """Whether a `*` run between `before` and `after` can open and can close (CommonMark 0.31)."""
    before_space = _is_whitespace(before)
    after_space = _is_whitespace(after)
    before_punct = _is_punctuation(before)
    after_punct = _is_punctuation(after)
    left = not after_space and (not after_punct or before_space or before_punct)
    right = not before_space and (not before_punct or after_space or after_punct)
    return left, right


def _is_whitespace(char: str) -> bool:
    # Other whitespace never reaches here (the document is declined).
    return char in _ASCII_WHITESPACE


def _is_punctuation(char: str) -> bool:
    if char.isascii():
        return char in _ESCAPABLE
    return unicodedata.category(char)[0] in ("P", "S")


def _pair_emphasis(tokens: list[tuple[str, str]], runs: list[tuple[int, int, bool, bool]]) -> None:
    """Turn delimiter runs into open and close tokens, accepting only plain pairs.

    Runs must alternate: a run that can open, then a run of the same length that can close,
    and so on, so that no opener is ever left waiting while another opens. markdown-it's
    delimiter algorithm pairs such runs with each other and nothing else, even when a run
    could also do the other job (the closing `**` of `**(a)**` before a backslash): each
    closer finds its opener as the nearest unmatched one, and with equal lengths of 1 or 2 the
    "multiple of 3" rule never applies. Nesting, unequal lengths, a lone run, or a run that
    cannot do the job its place asks for are declined.
    """
    if len(runs) % 2:
        raise _Declined
    for opener, closer in zip(runs[::2], runs[1::2], strict=True):
        open_at, length, opens, _ = opener
        close_at, closer_length, _, closes = closer
        if not (opens and closes and length == closer_length):
            raise _Declined
        if length == 1:
            tokens[open_at] = ("em_open", "")
            tokens[close_at] = ("em_close", "")
        else:
            # markdown-it turns the inner two characters into the tags and leaves the outer
            # two as empty text, which joins whatever text stands beside it.
            tokens[open_at] = ("text", "")
            tokens[open_at + 1] = ("strong_open", "")
            tokens[close_at] = ("strong_close", "")
            tokens[close_at + 1] = ("text", "")


_TAGS = {"em": "em", "strong": "strong", "softbreak": "br", "hardbreak": "br"}


def _inline_tree(tokens: list[tuple[str, str]]) -> list[SubsetNode]:
    """Nest the tokens, joining each run of adjacent text into one text node, as markdown-it does."""
    root: list[SubsetNode] = []
    stack: list[list[SubsetNode]] = [root]
    text: list[str] | None = None
    for kind, content in tokens:
        if kind == "text":
            if text is None:
                text = [content]
            else:
                text.append(content)
            continue
        if text is not None:
            stack[-1].append(SubsetNode("text", content="".join(text)))
            text = None
        if kind.endswith("_open"):
            name = kind[:-5]
            children: list[SubsetNode] = []
            stack[-1].append(SubsetNode(name, children, tag=_TAGS[name]))
            stack.append(children)
        elif kind.endswith("_close"):
            stack.pop()
        else:
            stack[-1].append(SubsetNode(kind, tag=_TAGS[kind]))
    if text is not None:
        stack[-1].append(SubsetNode("text", content="".join(text)))
    return root
