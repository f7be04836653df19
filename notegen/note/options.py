"""How a note is to be written: format, length, width."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

OutputFormat = Literal["markdown", "text", "html", "json"]


@dataclass(frozen=True)
class DraftOptions:
    output_format: OutputFormat | str = "markdown"
    explain: bool = False
    brief: bool = False
    # The chart note leaves the values table, every calculation and the causes weighed to a
    # worksheet that follows it on request; JSON always carries all of them.
    worksheet: bool = False
    width: int = 80
    ascii_only: bool = False
