"""The plain-text fast path: notegen's own parser for the Markdown the shipped templates write.

markdown-it-py is the exact parser; `parse_note_markdown` stands in for it on the small part of
CommonMark the shipped templates use. Every test here holds it to one promise: for any document
it either declines (returns None, and markdown-it reads the document) or gives the same tree as
markdown-it, and so the same text at every width, with and without ASCII folding.
"""

from __future__ import annotations

import itertools
import string
import subprocess
import sys
from pathlib import Path
from typing import Any

import pytest
from hypothesis import given
from hypothesis import strategies as st
from test_properties import _profile, alkalosis_case_file, case_file

from notegen.case.validation import validate_case
from notegen.intake.read import read_case
from notegen.pipeline import Drafter, DraftOptions
from notegen.render import escape_markdown
from notegen.render._subset import parse_note_markdown
from notegen.render.text import MarkdownNode, blocks_to_text, markdown_it_blocks, markdown_to_text

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = sorted((ROOT / "samples").glob("*.yaml"))
SERVICE = ROOT / "samples" / "service"
WIDTHS = (30, 80, 200)
DRAFTER = Drafter()


def shape(node: MarkdownNode) -> tuple[Any, ...]:
    """Everything the text renderer can read from a node, recursively."""
    return (
        node.type,
        node.tag,
        node.content,
        dict(node.attrs),
        node.hidden,
        tuple(shape(child) for child in node.children),
    )


def assert_same_as_markdown_it(markdown: str, *, widths: tuple[int, ...] = WIDTHS) -> bool:
    """Assert that the fast parser declines or matches markdown-it; return whether it parsed."""
    fast = parse_note_markdown(markdown)
    if fast is None:
        return False
    exact = markdown_it_blocks(markdown)
    assert [shape(node) for node in fast] == [shape(node) for node in exact], markdown
    for width, ascii_only in itertools.product(widths, (False, True)):
        expected = blocks_to_text(exact, width=width, ascii_only=ascii_only)
        assert blocks_to_text(fast, width=width, ascii_only=ascii_only) == expected, (markdown, width, ascii_only)
        assert markdown_to_text(markdown, width=width, ascii_only=ascii_only) == expected
    return True


# --- Shipped templates: every sample, every layout ---------------------------------------------------


@pytest.mark.parametrize("path", SAMPLES, ids=[path.stem for path in SAMPLES])
@pytest.mark.parametrize(("brief", "explain"), list(itertools.product((False, True), repeat=2)), ids=str)
def test_sample_notes_take_the_fast_path_and_match_markdown_it(path: Path, brief: bool, explain: bool) -> None:
    case = read_case(str(path))
    markdown = DRAFTER.draft(case, DraftOptions(output_format="markdown", brief=brief, explain=explain))
    assert parse_note_markdown(markdown) is not None, "a note from the shipped templates was declined"
    assert assert_same_as_markdown_it(markdown)
    exact = markdown_it_blocks(markdown)
    for width, ascii_only in itertools.product(WIDTHS, (False, True)):
        options = DraftOptions(output_format="text", brief=brief, explain=explain, width=width, ascii_only=ascii_only)
        # The public path (draft -> markdown_to_text) gives what markdown-it's tree gives.
        assert DRAFTER.draft(case, options) == blocks_to_text(exact, width=width, ascii_only=ascii_only)


@pytest.mark.parametrize("path", SAMPLES[:4], ids=[path.stem for path in SAMPLES[:4]])
def test_a_service_template_note_declines_or_matches(path: Path) -> None:
    drafter = Drafter(rules_dirs=(SERVICE,), template=SERVICE / "consult_note.md.j2")
    markdown = drafter.draft(read_case(str(path)), DraftOptions(output_format="markdown"))
    assert_same_as_markdown_it(markdown)
    assert drafter.draft(read_case(str(path)), DraftOptions(output_format="text")) == blocks_to_text(
        markdown_it_blocks(markdown), width=80, ascii_only=False
    )


# --- Generated cases -------------------------------------------------------------------------------------


def test_generated_notes_match_markdown_it_and_almost_all_take_the_fast_path() -> None:
    taken: list[bool] = []

    @_profile(300)
    @given(
        data=st.one_of(case_file(), alkalosis_case_file(allow_diuretics=True)),
        brief=st.booleans(),
        explain=st.booleans(),
    )
    def check(data: dict[str, Any], brief: bool, explain: bool) -> None:
        case = validate_case(data, filename="generated.yaml")
        markdown = DRAFTER.draft(case, DraftOptions(output_format="markdown", brief=brief, explain=explain))
        taken.append(assert_same_as_markdown_it(markdown, widths=(80,)))

    check()
    share = sum(taken) / len(taken)
    print(f"fast path taken for {sum(taken)} of {len(taken)} generated notes ({share:.1%})")
    assert share >= 0.95, f"only {share:.1%} of generated notes took the fast path"


# --- Adversarial corpus ----------------------------------------------------------------------------------

# What the shipped templates write: these must be parsed, and parsed exactly.
ACCEPTED = [
    "# Acid-base assessment\n\nCase: demo\n",
    "A paragraph\nwith a soft break.\n",
    "## Calculations\n\n- **Anion gap: 12 mmol/L**\\\n  Formula: Na - (Cl + HCO3)\\\n  Source: Kraut & Madias\n",
    "- **Patient:** 34 years\n- **Findings:** vomiting\n",
    "| Value | As reported | Converted |\n| --- | ---: | ---: |\n"
    "| pH | 7.35 | unchanged |\n| Urine chloride | <10 mmol/L |  |\n",
    "| a | b | c | d |\n|:--|--:|:-:|---|\n| 1 | 2 | 3 | 4 |\n",
    "| Header only |\n| --- |\n",
    "> **Critical values:** Potassium 2.1 mmol/L is below 2.5 mmol/L.\n\nBody.\n",
    "**Reading the gas:**\n\n1. one\n2. two\n3. three\n",
    "3. starts at three\n4. four\n",
    "9. nine\n10. ten\n11. eleven\n",
    "### Gastric acid loss: likely\n\n- For (strong): Vomiting is reported. Source: Galla, JASN 2000;11:369.\n",
    "*Draft from the values given, for the clinician to check.*\n",
    "**Chloride class:** not known. Text after.\n",
    "Escapes: \\*not bold\\*, \\_x\\_, \\`c\\`, \\[l\\], \\| and 2 \\< 3 > 1.\n",
    "\\- not a list\n\n\\# not a heading\n\n1\\. not ordered\n\n\\> not a quote\n",
    "Ünïcödé **µmol/L** and “**quoted**” and **日本**語 — fine.\n",
    "# Heading\nText right under it\n",
    "a **b** c **d** e *f* g\n",
    "**a**\n**b**\n",
    "Line one\\\nline two\\\nline three\n",
    "Ends with a backslash\\\n",
    "(**a**) **(b)** **a**.\n",
]

PITFALLS = [
    # emphasis
    "***a***",
    "**a**b",
    "a**b**",
    "** a**",
    "**a **",
    "**a*",
    "*a**",
    "a*b*c",
    "__a__",
    "_a_",
    "x _a_ y",
    "x __a__ y",
    "x *_a_* y",
    "a_b",
    "**a\nb**",
    "**a\\**",
    "\\***a**",
    "**a**\\",
    "****",
    "** **",
    "*",
    "**",
    "x**(a)**y",
    "**:**",
    "*a* *b*",
    "**a *b* c**",
    "*a **b** c*",
    "**a**—b",
    "→**a**",
    "**a**→",
    "*α*",
    "a*",
    # entities, code, links, autolinks, raw HTML
    "a & b",
    "a &amp; b",
    "a &#35; b",
    "a &#x23; b",
    "A&B;",
    "a &copy b",
    "`code`",
    "a ``b`` c",
    "[a](b)",
    "[a]: /b\n\n[a]",
    "![a](b)",
    "a ] b",
    "<https://example.org>",
    "<a@b.org>",
    "see <https://example.org> now",
    "mail <a@b.org> now",
    "x <word:x> y",
    "x \\<https://example.org> y",
    "x <https://example.org\\> y",
    "a <b> c",
    "a <5 mmol/L",
    "a < 5 > 3",
    "<div>x</div>",
    # whitespace
    "a\tb",
    "\tcode",
    "a\rb",
    "a\r\nb",
    "a\x00b",
    "a\u00a0b",
    "a\u2003b",
    "a\u3000b",
    "a\u2028b",
    "a  \nb",
    "a \nb",
    "a\\ \nb",
    "   \n\na",
    " a",
    "   a",
    "    code",
    "a\n    b",
    "a\n b",
    "",
    "\n\n\n",
    "a\n\n\n\nb",
    # headings
    "# a #",
    "## a ##",
    "# a#",
    "# a \\#",
    "#a",
    "####### a",
    "#",
    "# ",
    " # a",
    "# **a**",
    "###### six",
    "## a | b\n|---|---|",
    "## a | b\n| --- | --- |\n| c | d |",
    # setext, thematic breaks, quotes, fences
    "a\n===",
    "a\n---",
    "a\n***",
    "---",
    "***",
    "___",
    "- - -",
    "> a",
    "> a\nb",
    "> a\n> b",
    ">a",
    ">  a",
    "> # a",
    "> - a",
    "a\n> b",
    "```\ncode\n```",
    "~~~\ncode\n~~~",
    "a\n```\nb\n```",
    # lists
    "- a\n- b",
    "- a\n\n- b",
    "- a\n\n\n- b",
    "- a\n  b",
    "- a\n b",
    "- a\n   b",
    "- a\n    b",
    "- a\nb",
    "- a\n\n  b",
    "- a\n  - b",
    "- a\n  1. b",
    "* a",
    "+ a",
    "- a\n* b",
    "-a",
    "- ",
    "-",
    "-  a",
    "- a\\\n  b",
    "- a\n# h",
    "- a\n> q",
    "- a\n| b |\n| --- |",
    "- a | b\n  |---|---|",
    "- a | b\n|---|---|",
    "- # a",
    "- > a",
    "- 1. a",
    "1. a\n2. b",
    "1. a\n\n2. b",
    "1. a\n- b",
    "- a\n1. b",
    "1) a",
    "01. a",
    "0. a",
    "1234567890. a",
    "1.a",
    "1. a\n   b",
    "1. a\nb",
    "a\n- b",
    "a\n1. b",
    "a\n2. b",
    "a\n+ b",
    "7.35 is the pH",
    "Heading next\n# Then a heading\nthen text\n",
    # tables
    "| a | b |\n| --- | --- |\n| 1 |",
    "| a | b |\n| --- | --- |\n| 1 | 2 | 3 |",
    "| a | b |\n| --- |\n| 1 | 2 |",
    "| a \\| b |\n| --- |\n| 1 |",
    "| a | b |\n| --- | --- |\n| 1 \\| 2 | 3 |",
    "| a | b |\n| --- | --- |\n| 1 \\\\| 2 |",
    "a | b\n--- | ---\n1 | 2",
    "| a | b |\n|---|---|\n1 | 2",
    "| a | b |\n|---|---|\n| 1 | 2",
    "| a | b |\n|---|---|\n| 1 | 2 |\ntext",
    "| a | b |\n|---|---|\n| 1 | 2 |\n- x",
    "| a | b |\n|---|---|\n| 1 | 2 |\n> q",
    "para\n| a | b |\n|---|---|",
    "| a |\n|:-:|\n| b |",
    "| a |\n| :--- |\n| b |",
    "| a |\n| - |\n| b |",
    "| a |\n| -- - |\n| b |",
    "| a |\n|---|\n|   |",
    "| a |\n|---|\n||",
    "|a|\n|-|",
    "| **a** | *b* |\n|---|---|\n| **1** | \\*2 |",
    "| a |\n|---|\n| `c` |",
    "| a |\n|---|\n| & |",
    "|",
    "||\n|-|",
    "| a |\n| --- |\n\n| b |",
    "text | with | pipes",
    "text | with\n| --- |",
]

ESCAPED_VALUES = [
    "**x**",
    "| a |",
    "- item",
    "# head",
    "1. one",
    "10) ten",
    "> quote",
    "<b>x</b>",
    "<5 mmol/L",
    "&amp; &#35; & plain",
    "_a_ and __b__",
    "`c`",
    "[l](u)",
    "===",
    "---",
    "~~~",
    "+ x",
    "a\\b\\",
    "tab\there",
    "new\nline",
    "µmol/L — “q” ½",
    "*",
    "x*y*z",
    "a | b \\| c",
]
for _punct in string.punctuation:
    ESCAPED_VALUES.append(f"{_punct}")
    ESCAPED_VALUES.append(f"a{_punct}b {_punct}{_punct}{_punct}")

# The layouts the templates put a value into.
CONTEXTS = [
    "{v}\n",
    "# {v}\n",
    "### {v}: likely\n",
    "Case: {v}\n",
    "- **Label:** {v}\n",
    "- {v}\n- {v}\n",
    "1. {v}\n2. {v}\n",
    "> **Critical values:** {v} {v}\n",
    "**{v}:** {v}.\n",
    "| {v} | {v} |\n| --- | ---: |\n| {v} | {v} |\n",
    "- **{v}: {v}**\\\n  Formula: {v}\\\n  Source: {v}\n",
]


@pytest.mark.parametrize("markdown", ACCEPTED, ids=range(len(ACCEPTED)))
def test_what_the_templates_write_is_parsed_exactly(markdown: str) -> None:
    assert parse_note_markdown(markdown) is not None
    assert assert_same_as_markdown_it(markdown)


@pytest.mark.parametrize("markdown", PITFALLS, ids=range(len(PITFALLS)))
def test_commonmark_pitfalls_are_declined_or_parsed_exactly(markdown: str) -> None:
    for text in (markdown, markdown + "\n", f"Lead.\n\n{markdown}\n\nTail.\n"):
        assert_same_as_markdown_it(text)


def test_every_ascii_punctuation_escaped_or_bare_in_every_block() -> None:
    for punct in string.punctuation:
        for layout in (
            "a \\{p} b {p}\n",
            "\\{p} at the start\n",
            "{p} at the start\n",
            "- item \\{p}\n  more \\{p}\n",
            "# head \\{p}\n",
            "| \\{p} | {p} |\n| --- | --- |\n| x\\{p} | {p}y |\n",
            "1. \\{p}\n",
        ):
            assert_same_as_markdown_it(layout.format(p=punct), widths=(80,))


def test_case_text_escaped_by_the_md_filter_is_parsed_exactly_in_every_layout() -> None:
    parsed = 0
    for value, layout in itertools.product(ESCAPED_VALUES, CONTEXTS):
        parsed += assert_same_as_markdown_it(layout.format(v=escape_markdown(value)), widths=(30, 80))
    # The filter exists so that case text reads as data: most of it must stay on the fast path.
    assert parsed >= 0.8 * len(ESCAPED_VALUES) * len(CONTEXTS)


_PIECES = [
    "a", "b", "word", "7.35", "1", "10", "µ", "é", "—", "“", ".", ",", ":", ";", "!", "?", "(", ")",
    "*", "**", "***", "_", "__", "\\", "\\*", "\\|", "\\\\", "\\\n", "`", "[", "]", "<", ">", "&", "&amp;",
    "&#35;", "#", "# ", "## ", "###### ", "- ", "-", "+ ", "1. ", "2) ", "> ", "|", " | ", "| --- |",
    "|:-:|", "---", "===", "~~~", "```", " <https://x.org>", " _a_ ", " <a:b>",
    " ", "  ", "    ", "\n", "\n\n", "\n  ", "\n   ", "\t", "\u00a0",
    "| a | b |\n| --- | ---: |\n", "| 1 | 2 |\n", "- **x:** y\n", "**x**", "*x*",
]  # fmt: skip


@_profile(600)
@given(st.lists(st.sampled_from(_PIECES), max_size=30).map("".join))
def test_random_markdown_is_declined_or_parsed_exactly(markdown: str) -> None:
    assert_same_as_markdown_it(markdown, widths=(20, 80))


# Mostly what the parser accepts, so that the comparison runs on parsed documents, not declines.
_NOTE_PIECES = [
    "a", " word", " 7.35", " µmol/L", "—", "(", ")", ".", ":", ",", "!", " &", "<", ">", "#", "|", "=", "~", "+",
    "*", "**", "\\", "\\*", "\\|", "\\\\", "\\\n", "\n", "\n\n", "- a", "\n- b", "\n  c", "# h", "\n## h",
    "1. x", "\n2. y", "> q", "| a | b |\n| --- | ---: |\n", "| x | y |\n", "\n| 1 | 2 |", "**Label:** ", "*x*",
]  # fmt: skip


def test_random_note_like_markdown_is_declined_or_parsed_exactly() -> None:
    parsed: list[bool] = []

    @_profile(800)
    @given(st.lists(st.sampled_from(_NOTE_PIECES), max_size=25).map("".join))
    def check(markdown: str) -> None:
        parsed.append(assert_same_as_markdown_it(markdown, widths=(20, 80)))

    check()
    # About a quarter: random pieces often start a line with a marker the parser declines.
    assert sum(parsed) >= 0.2 * len(parsed), f"only {sum(parsed)} of {len(parsed)} were parsed"


@_profile(300)
@given(
    values=st.lists(st.lists(st.sampled_from(_PIECES), max_size=8).map("".join), min_size=1, max_size=4),
    layout=st.sampled_from(CONTEXTS),
)
def test_random_case_text_through_the_md_filter_is_declined_or_parsed_exactly(values: list[str], layout: str) -> None:
    escaped = [escape_markdown(value) for value in values]
    markdown = layout.replace("{v}", "{}").format(*(escaped[i % len(escaped)] for i in range(layout.count("{v}"))))
    assert_same_as_markdown_it(markdown, widths=(30, 80))


def test_markdown_it_still_reads_what_the_fast_parser_declines() -> None:
    source = "Some `code` and a [link](https://example.org/x).\n"
    assert parse_note_markdown(source) is None
    assert markdown_to_text(source) == "Some code and a link (https://example.org/x).\n"


# --- Start-up ----------------------------------------------------------------------------------------------


def test_a_text_note_from_a_fresh_interpreter_never_imports_markdown_it() -> None:
    program = (
        "import sys\n"
        "from notegen.pipeline import Drafter, DraftOptions\n"
        "from notegen.intake.read import read_case\n"
        f"text = Drafter().draft(read_case({str(SAMPLES[0])!r}), DraftOptions(output_format='text'))\n"
        "assert 'ACID-BASE ASSESSMENT' in text, text\n"
        "print(sorted(name for name in sys.modules if name.split('.')[0] == 'markdown_it'))\n"
    )
    result = subprocess.run([sys.executable, "-c", program], capture_output=True, text=True, check=False)
    assert result.returncode == 0, result.stderr
    assert result.stdout.strip() == "[]"
