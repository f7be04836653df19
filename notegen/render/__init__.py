"""Rendering of the Markdown note: plain text, an HTML page, and the template machinery.

Importing this package loads neither markdown-it-py nor Jinja2; each is
imported by the function that first needs it.
"""

from __future__ import annotations

from notegen.render.ascii_fold import fold_to_ascii
from notegen.render.filters import format_number, join_words
from notegen.render.html import CRITICAL_BANNER_CLASS, markdown_to_html_page
from notegen.render.markdown_escape import escape_markdown
from notegen.render.templating import make_environment, render_template
from notegen.render.text import markdown_to_text

__all__ = [
    "CRITICAL_BANNER_CLASS",
    "escape_markdown",
    "fold_to_ascii",
    "format_number",
    "join_words",
    "make_environment",
    "markdown_to_html_page",
    "markdown_to_text",
    "render_template",
]
