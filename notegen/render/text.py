"""Plain text for dictation and terminals, derived from the Markdown note.

The text is built from the Markdown's syntax tree rather than by stripping
symbols from the source, so it always says what the Markdown says. The tree
comes from notegen's own strict parser when the document is one it reads with
certainty (what the shipped templates write; see `notegen.render._subset`), and
from markdown-it-py otherwise; both give the same tree, so the same text:

- level 1 and 2 headings in capitals, deeper ones as "Heading:" lines;
- paragraphs wrapped at `width`; a hard line break starts a new line;
- bullets as "- " and numbered items as "1. ", with a hanging indent;
- tables as columns two spaces apart under a dashed rule, cells wrapped when
  the table is wider than `width` (then rows are parted by a blank line);
- block quotes and code indented by four spaces; code is never wrapped;
- a thematic break as one extra blank line; links as "label (address)".
"""

from __future__ import annotations

import re
import textwrap
from collections.abc import Callable, Mapping, Sequence
from typing import TYPE_CHECKING, Protocol

from notegen.render._parser import markdown_parser
from notegen.render._subset import parse_note_markdown
from notegen.render.ascii_fold import NO_BREAK_SPACE, fold_to_ascii

if TYPE_CHECKING:
    from markdown_it.tree import SyntaxTreeNode

MIN_WIDTH = 20
_INDENT = "    "
_COLUMN_GAP = "  "
# A column is never squeezed below the longest word it holds, up to this many
# characters; longer words are split rather than let one column eat the page.
_LONGEST_UNBROKEN_CELL_WORD = 20
_SPACES = re.compile(r"[ \t\r\f\v]+")
_BREAK = object()  # a thematic break among rendered blocks


class MarkdownNode(Protocol):
    """What the renderer reads from a node of either parser's tree (markdown-it's SyntaxTreeNode)."""

    @property
    def type(self) -> str: ...
    @property
    def tag(self) -> str: ...
    @property
    def content(self) -> str: ...
    @property
    def attrs(self) -> Mapping[str, str | int | float]: ...
    @property
    def hidden(self) -> bool: ...
    @property
    def children(self) -> Sequence[MarkdownNode]: ...


def markdown_to_text(markdown: str, *, width: int = 80, ascii_only: bool = False) -> str:
    """Return the Markdown as plain text wrapped at `width`, ending with one newline."""
    _check_width(width)
    blocks: Sequence[MarkdownNode] | None = parse_note_markdown(markdown)
    if blocks is None:
        blocks = markdown_it_blocks(markdown)
    return blocks_to_text(blocks, width=width, ascii_only=ascii_only)


def markdown_it_blocks(markdown: str) -> list[SyntaxTreeNode]:
    """The top-level blocks of any Markdown, read by markdown-it-py (imported on first use)."""
    from markdown_it.tree import SyntaxTreeNode

    return SyntaxTreeNode(markdown_parser().parse(markdown)).children


def blocks_to_text(blocks: Sequence[MarkdownNode], *, width: int, ascii_only: bool) -> str:
    """Plain text from a parsed document's top-level blocks, wrapped at `width`, ending with one newline."""
    _check_width(width)
    renderer = _TextRenderer(fold_to_ascii if ascii_only else _unchanged)
    lines = renderer.blocks(blocks, width, tight=False)
    text = "\n".join(line.rstrip() for line in lines).replace(NO_BREAK_SPACE, " ")
    return text.strip("\n") + "\n"


def _check_width(width: int) -> None:
    if width < MIN_WIDTH:
        raise ValueError(f"width must be at least {MIN_WIDTH} characters, got {width}")


def _unchanged(text: str) -> str:
    return text


class _TextRenderer:
    def __init__(self, fold: Callable[[str], str]) -> None:
        self.fold = fold

    # Blocks ---------------------------------------------------------------

    def blocks(self, nodes: Sequence[MarkdownNode], width: int, *, tight: bool) -> list[str]:
        """Render sibling blocks, parted by a blank line (none inside a tight list item)."""
        rendered: list[list[str] | object] = [self.block(node, width) for node in nodes]
        lines: list[str] = []
        pending_break = False
        for block in rendered:
            if block is _BREAK:
                pending_break = True
                continue
            assert isinstance(block, list)
            if not block:
                continue
            if lines:
                if not tight:
                    lines.append("")
                if pending_break:
                    lines.append("")
            pending_break = False
            lines.extend(block)
        return lines

    def block(self, node: MarkdownNode, width: int) -> list[str] | object:
        kind = node.type
        if kind == "paragraph":
            return self.wrap(self.inline_of(node), width)
        if kind == "heading":
            return self.heading(node, width)
        if kind in ("bullet_list", "ordered_list"):
            return self.list_(node, width)
        if kind == "table":
            return self.table(node, width)
        if kind == "blockquote":
            inner = self.blocks(node.children, max(width - len(_INDENT), MIN_WIDTH), tight=False)
            return [_INDENT + line if line else "" for line in inner]
        if kind in ("code_block", "fence", "html_block"):
            code = self.fold(node.content.rstrip("\n"))
            return [_INDENT + line if line.strip() else "" for line in code.split("\n")]
        if kind == "hr":
            return _BREAK
        # Anything a future parser option adds still shows its text.
        return self.wrap(self.fold(node.content), width) if node.content else []

    def heading(self, node: MarkdownNode, width: int) -> list[str]:
        text = _one_line(self.inline_of(node))
        if node.tag in ("h1", "h2"):
            text = _upper_case(text)
        elif text and text[-1] not in ".:?!" and ":" not in text:
            # "Gastric acid loss: likely" already reads as a lead-in; a second colon would not
            text += ":"
        return self.wrap(text, width)

    def list_(self, node: MarkdownNode, width: int) -> list[str]:
        items = node.children
        if node.type == "ordered_list":
            start = int(node.attrs.get("start", 1))
            markers = [f"{start + offset}." for offset in range(len(items))]
        else:
            markers = ["-"] * len(items)
        hang = max(len(marker) for marker in markers) + 1
        # markdown-it hides the paragraphs of a tight list; a loose list keeps
        # the blank lines its author put between items.
        tight = all(child.hidden for item in items for child in item.children if child.type == "paragraph")
        lines: list[str] = []
        for marker, item in zip(markers, items, strict=True):
            body = self.blocks(item.children, max(width - hang, MIN_WIDTH), tight=tight)
            if lines and not tight:
                lines.append("")
            lines.append((marker.ljust(hang) + body[0]) if body else marker)
            lines.extend(" " * hang + line if line else "" for line in body[1:])
        return lines

    def table(self, node: MarkdownNode, width: int) -> list[str]:
        rows: list[list[str]] = []
        aligns: list[str] = []
        header_rows = 0
        for section in node.children:
            for row in section.children:
                cells = [_one_line(self.inline_of(cell)) for cell in row.children]
                if not aligns:
                    aligns = [_alignment(cell) for cell in row.children]
                rows.append(cells)
                if section.type == "thead":
                    header_rows += 1
        if not rows:
            return []
        columns = max(len(row) for row in rows)
        rows = [row + [""] * (columns - len(row)) for row in rows]
        aligns += ["left"] * (columns - len(aligns))
        widths = _column_widths(rows, width - len(_COLUMN_GAP) * (columns - 1))
        wrapped = [
            [
                textwrap.wrap(cell, max(column_width, 1), break_on_hyphens=False) or [""]
                for cell, column_width in zip(row, widths, strict=True)
            ]
            for row in rows
        ]
        any_wrapped = any(len(cell) > 1 for row in wrapped for cell in row)
        lines: list[str] = []
        for index, row_cells in enumerate(wrapped):
            if index == header_rows and header_rows:
                lines.append(_COLUMN_GAP.join("-" * column_width for column_width in widths))
            elif index > header_rows and any_wrapped:
                lines.append("")
            height = max(len(cell) for cell in row_cells)
            for line_number in range(height):
                parts = [
                    _align(cell[line_number] if line_number < len(cell) else "", column_width, align)
                    for cell, column_width, align in zip(row_cells, widths, aligns, strict=True)
                ]
                lines.append(_COLUMN_GAP.join(parts).rstrip())
        return lines

    # Inline ---------------------------------------------------------------

    def inline_of(self, node: MarkdownNode) -> str:
        """The text of a block's inline content, folded; "\\n" marks a hard break."""
        parts: list[str] = []
        for child in node.children:
            if child.type == "inline":
                parts.append(self.inline_of(child))
            else:
                parts.append(self.inline_part(child))
        return self.fold(_SPACES.sub(" ", "".join(parts)))

    def inline_part(self, node: MarkdownNode) -> str:
        kind = node.type
        if kind in ("text", "text_special", "code_inline", "html_inline"):
            return node.content
        if kind == "softbreak":
            return " "
        if kind == "hardbreak":
            return "\n"
        label = "".join(self.inline_part(child) for child in node.children)
        if kind == "link":
            href = str(node.attrs.get("href", ""))
            if href and href not in (label, f"mailto:{label}"):
                return f"{label} ({href})"
        return label

    def wrap(self, text: str, width: int) -> list[str]:
        lines: list[str] = []
        for segment in text.split("\n"):
            # break_long_words=False: an address or long drug name overflows
            # rather than being cut in two for a dictation pipeline. A number and its unit are
            # held together by a joiner that is no space to textwrap, then printed as a space.
            bound = _NUMBER_UNIT.sub(_JOINER, segment.strip())
            lines.extend(
                line.replace(_JOINER, " ")
                for line in textwrap.wrap(bound, width, break_long_words=False, break_on_hyphens=False)
            )
        return lines


# A space between a number and its unit: a line break there would leave "10" at a line's end and
# "mmol/L" at the next one's start.
_UNITS = (
    r"mmol/L|mmol/mmol|mmol|mmHg|kPa|mg/dL|g/dL|g/L|µmol/L|umol/L|mEq/L|mL/min|m2|kg|cm|%|years?|hours?|minutes?"
)
_NUMBER_UNIT = re.compile(rf"(?<=\d) (?=(?:{_UNITS})(?![A-Za-z]))")
_JOINER = "\x1f"  # a control character no note text holds (input refuses them)


def _one_line(text: str) -> str:
    # Only ASCII spaces part words here: a no-break space must keep its pair together.
    return _SPACES.sub(" ", text.replace("\n", " ")).strip(" ")


def _upper_case(text: str) -> str:
    # The micro sign upper-cases to a Greek capital M, which changes the unit.
    return "".join(char if char in "\u00b5\u03bc" else char.upper() for char in text)


def _alignment(cell: MarkdownNode) -> str:
    style = str(cell.attrs.get("style", ""))
    for align in ("right", "center"):
        if f"text-align:{align}" in style:
            return align
    return "left"


def _align(text: str, width: int, align: str) -> str:
    if align == "right":
        return text.rjust(width)
    if align == "center":
        return text.center(width)
    return text.ljust(width)


def _column_widths(rows: list[list[str]], available: int) -> list[int]:
    """Share `available` characters among columns, narrow columns first.

    Columns that fit keep their natural width; the rest split what is left
    evenly. If even the narrowest layout is too wide, the table overflows
    rather than dropping text from a clinical table.
    """
    columns = len(rows[0])
    natural = [max((len(row[i]) for row in rows), default=0) for i in range(columns)]
    if sum(natural) <= available:
        return natural
    floor = [
        min(natural[i], max([len(word) for row in rows for word in row[i].split(" ")] + [1]))
        for i in range(columns)
    ]
    floor = [min(value, _LONGEST_UNBROKEN_CELL_WORD) for value in floor]
    widths = list(floor)
    spare = available - sum(widths)
    # Raise every unfinished column one character at a time, left to right,
    # which is the even split computed the slow, obviously deterministic way.
    while spare > 0:
        grew = False
        for i in range(columns):
            if spare > 0 and widths[i] < natural[i]:
                widths[i] += 1
                spare -= 1
                grew = True
        if not grew:
            break
    return widths
