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
    width: int = 80
    ascii_only: bool = False
