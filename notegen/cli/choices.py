"""The `draft` command's choices checked together: the format a file name implies, and options that
do not apply to the chosen format (an error that says why, never silently ignored)."""

from __future__ import annotations

from pathlib import Path

from notegen.errors import UsageError

__all__ = ["FORMAT_BY_SUFFIX", "check_choices", "format_for"]

FORMAT_BY_SUFFIX = {".md": "markdown", ".markdown": "markdown", ".txt": "text", ".html": "html", ".htm": "html",
                    ".json": "json"}  # fmt: skip
DEFAULT_FORMAT = "markdown"


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
