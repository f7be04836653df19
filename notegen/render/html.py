"""A standalone, printable HTML page rendered from the Markdown note.

Raw HTML in the Markdown is never interpreted (the shared parser runs with
`html=False`), so `<script>` in a label or free-text field shows as text.
The page loads nothing: styles are inline and images are shown as their alt text.

The critical-values banner is written in Markdown as a block quote whose first
words are in bold and begin with "Critical", e.g. `> **Critical values:** ...`;
the page gives that block quote the class `CRITICAL_BANNER_CLASS`.
"""

from __future__ import annotations

import html
from typing import TYPE_CHECKING

from notegen.render._parser import markdown_parser

if TYPE_CHECKING:
    from markdown_it.token import Token

CRITICAL_BANNER_CLASS = "critical-banner"
DRAFT_NOTICE_CLASS = "draft-notice"
_BANNER_LEAD_WORD = "critical"

# Greys only, so the page prints the same on a black-and-white printer; the
# banner is told apart by a heavy frame and weight rather than by colour.
_STYLESHEET = """\
:root { color-scheme: light; }
body { margin: 0; background: #fff; color: #111;
  font: 11pt/1.45 Georgia, "Times New Roman", serif; }
main { max-width: 46rem; margin: 2rem auto; padding: 0 1.25rem; }
h1, h2, h3, h4 { font-family: "Helvetica Neue", Arial, sans-serif; line-height: 1.25;
  margin: 1.4em 0 0.5em; page-break-after: avoid; break-after: avoid; }
h1 { font-size: 1.45rem; border-bottom: 2px solid #111; padding-bottom: 0.2em; }
h2 { font-size: 1.2rem; border-bottom: 1px solid #888; padding-bottom: 0.15em; }
h3 { font-size: 1.05rem; }
p, ul, ol { margin: 0 0 0.75em; }
li { margin: 0.15em 0; }
table { border-collapse: collapse; margin: 0 0 1em; font-size: 0.95em;
  page-break-inside: auto; }
tr { page-break-inside: avoid; break-inside: avoid; }
th, td { border: 1px solid #999; padding: 0.25em 0.5em; vertical-align: top; }
thead th { background: #ececec; }
code { font-family: Menlo, Consolas, "Courier New", monospace; font-size: 0.92em; }
pre { border: 1px solid #bbb; padding: 0.5em 0.75em; overflow-x: auto; }
blockquote { margin: 0 0 1em; padding: 0.25em 1em; border-left: 3px solid #999; color: #333; }
blockquote.critical-banner { border: 3px solid #111; border-left-width: 10px; background: #f1f1f1;
  color: #000; font-weight: bold; padding: 0.6em 1em;
  -webkit-print-color-adjust: exact; print-color-adjust: exact; }
blockquote.critical-banner p { margin: 0.25em 0; }
p.draft-notice { border: 1px dashed #555; padding: 0.4em 0.75em; font-family: "Helvetica Neue", Arial, sans-serif; }
hr { border: 0; border-top: 1px solid #999; margin: 1.5em 0; }
@media print {
  body { font-size: 10.5pt; }
  main { max-width: none; margin: 0; padding: 0; }
  a { color: inherit; text-decoration: none; }
}
"""


def markdown_to_html_page(markdown: str, *, title: str, draft_notice: str | None = None) -> str:
    """Return a complete HTML5 document showing `markdown`, with `title` escaped.

    `draft_notice`, when given, stands first on the page, so a reader sees it is a draft before
    anything else (the note's own cautions close it).
    """
    parser = markdown_parser()
    env: dict[str, object] = {}
    tokens = parser.parse(markdown, env)
    _mark_critical_banners(tokens)
    body = parser.renderer.render(tokens, parser.options, env)
    return (
        "<!DOCTYPE html>\n"
        '<html lang="en">\n'
        "<head>\n"
        '<meta charset="utf-8">\n'
        '<meta name="viewport" content="width=device-width, initial-scale=1">\n'
        f"<title>{html.escape(title, quote=True)}</title>\n"
        f"<style>\n{_STYLESHEET}</style>\n"
        "</head>\n"
        "<body>\n"
        "<main>\n"
        f"{_notice(draft_notice)}"
        f"{body}"
        "</main>\n"
        "</body>\n"
        "</html>\n"
    )


def _notice(text: str | None) -> str:
    if not text:
        return ""
    return f'<p class="{DRAFT_NOTICE_CLASS}"><strong>{html.escape(text, quote=False)}</strong></p>\n'


def _mark_critical_banners(tokens: list[Token]) -> None:
    for index, token in enumerate(tokens):
        if token.type != "blockquote_open":
            continue
        # blockquote_open, paragraph_open, inline: the banner's first words.
        if index + 2 >= len(tokens) or tokens[index + 2].type != "inline":
            continue
        # The inline parser may leave an empty text token before the bold run.
        inline = tokens[index + 2].children or []
        children = [child for child in inline if child.type != "text" or child.content]
        if len(children) < 2 or children[0].type != "strong_open":
            continue
        lead = children[1].content.strip().casefold()
        if children[1].type == "text" and lead.startswith(_BANNER_LEAD_WORD):
            token.attrSet("class", CRITICAL_BANNER_CLASS)
