"""The one Markdown parser shared by the plain-text and HTML renderers.

Both formats read the same token stream from the same configured parser, so
the text and the page can never disagree about what the Markdown says.
"""

from __future__ import annotations

from collections.abc import Sequence
from functools import cache
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from markdown_it import MarkdownIt
    from markdown_it.token import Token
    from markdown_it.utils import EnvType, OptionsDict


@cache
def markdown_parser() -> MarkdownIt:
    """Return the shared parser: CommonMark plus pipe tables, raw HTML off.

    Built on first use because importing markdown-it-py costs more than the
    rest of the package; `notegen --help` should not pay for it.
    """
    from markdown_it import MarkdownIt

    # html=False: raw HTML in any text (a label, a free-text field) is shown,
    # never interpreted. xhtmlOut=False: the page is HTML5, not XHTML.
    parser = MarkdownIt("commonmark", {"html": False, "xhtmlOut": False}).enable("table")
    parser.add_render_rule("image", _render_image_as_alt_text)
    return parser


def _render_image_as_alt_text(
    self: object, tokens: Sequence[Token], idx: int, options: OptionsDict, env: EnvType
) -> str:
    # A standalone page must not fetch anything; an image becomes its alt text.
    from markdown_it.common.utils import escapeHtml

    children = tokens[idx].children or []
    return escapeHtml("".join(child.content for child in children if child.type in _ALT_TEXT_TYPES))


_ALT_TEXT_TYPES = frozenset({"text", "text_special", "code_inline"})
