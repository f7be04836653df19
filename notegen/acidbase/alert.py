"""Alerts raised anywhere in the pipeline: `{code, level, message}`."""

from __future__ import annotations

from typing import Literal

from pydantic import BaseModel, ConfigDict, Field

AlertLevel = Literal["critical", "warning", "info"]


class Alert(BaseModel):
    """One alert. `code` is a stable snake_case id; `message` is a sentence for the clinician."""

    model_config = ConfigDict(frozen=True, extra="forbid")

    code: str
    level: AlertLevel
    message: str
    # The message without its advice ("Potassium 2.9 mmol/L is below 3 mmol/L: hypokalemia."), for a note
    # whose management section carries that advice (a consideration's `answers_alerts`); None: no advice.
    # Not in the JSON, whose alerts stay {code, level, message}.
    finding: str | None = Field(default=None, exclude=True)
