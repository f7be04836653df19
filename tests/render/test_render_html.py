"""The standalone HTML page: escaping, no external resources, the critical banner."""

from __future__ import annotations

import html
import re
from html.parser import HTMLParser

from hypothesis import given
from hypothesis import strategies as st

from notegen.render import CRITICAL_BANNER_CLASS, escape_markdown, markdown_to_html_page

SCRIPT = "<script>alert(1)</script>"
ESCAPED_SCRIPT = "&lt;script&gt;alert(1)&lt;/script&gt;"


def body_of(page: str) -> str:
    match = re.search(r"<main>\n(.*)</main>", page, re.S)
    assert match, page
    return match.group(1)


class _TagBalance(HTMLParser):
    VOID = frozenset({"meta", "br", "hr", "img", "input", "link"})

    def __init__(self) -> None:
        super().__init__()
        self.stack: list[str] = []
        self.tags: list[str] = []
        self.errors: list[str] = []

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        self.tags.append(tag)
        if tag not in self.VOID:
            self.stack.append(tag)

    def handle_endtag(self, tag: str) -> None:
        if not self.stack or self.stack.pop() != tag:
            self.errors.append(tag)


def test_page_is_a_complete_balanced_html5_document() -> None:
    page = markdown_to_html_page("# Note\n\nText.\n\n| a | b |\n|---|---|\n| 1 | 2 |\n", title="Draft note")
    assert page.startswith('<!DOCTYPE html>\n<html lang="en">\n<head>\n<meta charset="utf-8">\n')
    assert page.endswith("</main>\n</body>\n</html>\n")
    assert "<title>Draft note</title>" in page
    checker = _TagBalance()
    checker.feed(page)
    assert checker.errors == [] and checker.stack == []
    assert checker.tags.count("table") == 1 and checker.tags.count("style") == 1


def test_body_is_the_markdown_rendered() -> None:
    page = markdown_to_html_page("## Data used\n\nSodium **138** mmol/L\n", title="t")
    assert body_of(page) == "<h2>Data used</h2>\n<p>Sodium <strong>138</strong> mmol/L</p>\n"


def test_script_in_a_paragraph_is_escaped() -> None:
    page = markdown_to_html_page(f"Label: {SCRIPT}\n", title="t")
    assert body_of(page) == f"<p>Label: {ESCAPED_SCRIPT}</p>\n"
    assert "<script" not in page


def test_script_in_a_table_cell_is_escaped() -> None:
    page = markdown_to_html_page(f"| Item | Note |\n|---|---|\n| med | {SCRIPT} |\n", title="t")
    assert f"<td>{ESCAPED_SCRIPT}</td>" in page
    assert "<script" not in page


def test_raw_html_block_is_shown_not_interpreted() -> None:
    page = markdown_to_html_page('<div onclick="x()">hi</div>\n\n<img src=x onerror=alert(1)>\n', title="t")
    assert "<div" not in body_of(page) and "<img" not in page
    assert "&lt;div onclick=&quot;x()&quot;&gt;hi&lt;/div&gt;" in page


def test_title_is_escaped() -> None:
    page = markdown_to_html_page("x", title=f'Note {SCRIPT} & "quotes"')
    assert f"<title>Note {ESCAPED_SCRIPT} &amp; &quot;quotes&quot;</title>" in page
    assert "<script" not in page


def test_template_braces_in_text_appear_literally() -> None:
    page = markdown_to_html_page("Label: {{ 7*7 }} and {% raw %}\n", title="{{ 7*7 }}")
    assert "<p>Label: {{ 7*7 }} and {% raw %}</p>" in page
    assert "<title>{{ 7*7 }}</title>" in page
    assert "49" not in page


def test_page_loads_nothing_from_outside() -> None:
    source = "![chart](https://example.org/chart.png)\n\n[ref](https://example.org)\n"
    page = markdown_to_html_page(source, title="t")
    assert re.search(r"\bsrc=", page) is None
    assert "<link" not in page and "@import" not in page and "url(" not in page
    assert "<p>chart</p>" in page  # an image is shown as its alt text
    assert '<a href="https://example.org">ref</a>' in page  # a link is fetched only when followed


def test_script_links_are_not_made_links() -> None:
    page = markdown_to_html_page("[click](javascript:alert(1))\n", title="t")
    assert "href" not in body_of(page)


def test_critical_banner_gets_its_class_and_other_quotes_do_not() -> None:
    page = markdown_to_html_page(
        "> **Critical values:** pH 7.62.\n\n> A plain quotation.\n\n> **Note:** not a banner.\n", title="t"
    )
    assert body_of(page).count("<blockquote") == 3
    assert body_of(page).count(f'<blockquote class="{CRITICAL_BANNER_CLASS}">') == 1
    assert f'<blockquote class="{CRITICAL_BANNER_CLASS}">\n<p><strong>Critical values:</strong>' in page
    assert f"blockquote.{CRITICAL_BANNER_CLASS}" in page  # styled by the inline stylesheet


def test_stylesheet_has_print_rules() -> None:
    page = markdown_to_html_page("x", title="t")
    assert "@media print" in page


printable_text = st.text(
    alphabet=st.characters(codec="ascii", categories=["L", "N", "P", "S", "Zs"]) | st.sampled_from("µ≥é"),
    max_size=60,
)


@given(printable_text)
def test_escaped_user_text_shows_literally_in_the_page(raw: str) -> None:
    expected = " ".join(raw.split())
    body = body_of(markdown_to_html_page("Label: " + escape_markdown(raw), title="t"))
    match = re.fullmatch(r"<p>(.*)</p>\n", body, re.S)
    assert match, body
    assert "<" not in match.group(1)  # no tag of any kind came from the value
    assert html.unescape(match.group(1)) == f"Label: {expected}".rstrip()


@given(printable_text)
def test_escaped_user_text_stays_in_one_html_table_cell(raw: str) -> None:
    expected = " ".join(raw.split())
    page = markdown_to_html_page(f"| Label | Value |\n|---|---|\n| {escape_markdown(raw)} | 7 |\n", title="t")
    cells = re.findall(r"<td>(.*?)</td>", page, re.S)
    assert [html.unescape(cell) for cell in cells] == [expected, "7"]
