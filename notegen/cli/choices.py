"""The `draft` command's choices checked together: the format a file name implies, and options that
do not apply to the chosen format (an error that says why, never silently ignored)."""

from __future__ import annotations

import math
from pathlib import Path
from typing import TYPE_CHECKING

from notegen.errors import UsageError

if TYPE_CHECKING:
    from notegen.knowledge.settings import DateOrder

__all__ = ["FORMAT_BY_SUFFIX", "check_choices", "check_window", "date_order_choice", "format_for"]

FORMAT_BY_SUFFIX = {".md": "markdown", ".markdown": "markdown", ".txt": "text", ".html": "html", ".htm": "html",
                    ".json": "json"}  # fmt: skip
DEFAULT_FORMAT = "markdown"
MAX_WINDOW_HOURS = 100_000  # about eleven years: any longer window is a typing slip
MIN_WINDOW_HOURS = 0.5


def check_window(window_hours: float) -> None:
    if math.isfinite(window_hours) and window_hours < MIN_WINDOW_HOURS:
        raise UsageError(f"--window-hours {window_hours:g}: give at least {MIN_WINDOW_HOURS:g} hours")
    if not math.isfinite(window_hours) or not MIN_WINDOW_HOURS <= window_hours <= MAX_WINDOW_HOURS:
        raise UsageError(f"--window-hours must be a number of hours from {MIN_WINDOW_HOURS:g} to "
                         f"{MAX_WINDOW_HOURS:,}, not {window_hours}")


def date_order_choice(value: str | None) -> DateOrder | None:
    """`--date-order`: how a pasted 03/04/2026 reads, checked here whichever parser read it."""
    if value is None:
        return None
    for order in ("day-first", "month-first"):
        if value == order:
            return order
    raise UsageError(f"--date-order {value}: give day-first (03/04/2026 is 3 April) or month-first (4 March)")


def format_for(output_format: str | None, output: Path | None) -> str:
    """The format to write: the one asked for, else the one `-o FILE`'s suffix names, else Markdown.

    A suffix that names another format than the one asked for is refused: `-o note.html --format
    text` would leave a page that no browser shows as written.
    """
    implied = FORMAT_BY_SUFFIX.get(output.suffix.lower()) if output is not None else None
    if output_format is None:
        return implied or DEFAULT_FORMAT
    if implied is not None and implied != output_format:
        raise UsageError(
            f"--output {output} names a {implied} file but --format is {output_format}; "
            f"change the file's suffix or leave out --format"
        )
    return output_format


def check_choices(
    output_format: str,
    *,
    brief: bool = False,
    explain: bool = False,
    worksheet: bool = False,
    width: int | None = None,
    ascii_only: bool = False,
    template: Path | None = None,
) -> None:
    """Refuse an option that would be silently ignored with the others given."""
    problems: list[str] = []
    if output_format != "text":
        if width is not None:
            problems.append(f"--width sets the line width of plain text; it does nothing for {output_format}")
        if ascii_only:
            problems.append(f"--ascii folds plain text to ASCII; it does nothing for {output_format}")
    if output_format == "json":
        if brief:
            problems.append("--brief shortens the printed note; the JSON always carries the whole assessment")
        if worksheet:
            problems.append("--worksheet adds the working to the printed note; the JSON always carries it")
        if template is not None:
            problems.append("--template lays out the printed note; the JSON has no layout")
    if brief and explain:
        problems.append("--explain adds the rule walk to the full note; --brief leaves all but the paragraph out")
    if brief and worksheet:
        problems.append("--worksheet follows the full note; --brief leaves all but the paragraph out")
    if problems:
        raise UsageError("; ".join(problems))
