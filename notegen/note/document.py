"""A drafted note as a Python object: the assessment, and the note in each format on request."""

from __future__ import annotations

import json
from dataclasses import dataclass
from functools import cached_property
from pathlib import Path
from typing import Any

from notegen.assess.model import Assessment
from notegen.note.options import DraftOptions
from notegen.note.writer import render_note

__all__ = ["Note"]


@dataclass(frozen=True)
class Note:
    """One drafted note. Each format is rendered from the same assessment when first asked for.

        note = notegen.draft({"gas": {"sample": "arterial", "ph": 7.5, "pco2": 48, "hco3": 36}})
        print(note.text(width=72))
    """

    assessment: Assessment
    brief: bool = False
    template: Path | None = None
    worksheet: bool = False  # the chart note, then the values, calculations and causes weighed

    def _render(self, output_format: str, **settings: Any) -> str:
        worksheet = self.worksheet and output_format != "json"  # the JSON always carries all of it
        options = DraftOptions(output_format=output_format, brief=self.brief, worksheet=worksheet, **settings)
        return render_note(self.assessment, options, template=self.template)

    @cached_property
    def markdown(self) -> str:
        """The note as Markdown, as `notegen draft` prints it by default."""
        return self._render("markdown")

    @cached_property
    def html(self) -> str:
        """The note as a standalone printable HTML page."""
        return self._render("html")

    def text(self, width: int = 88, *, ascii_only: bool = False) -> str:
        """The note as plain text wrapped at `width`, for a dictation pipeline or a plain-text chart."""
        return self._render("text", width=width, ascii_only=ascii_only)

    def to_dict(self) -> dict[str, Any]:
        """The same data as `--format json`."""
        data: dict[str, Any] = json.loads(self._render("json"))
        return data

    def __str__(self) -> str:
        return self.markdown
