"""Alerts raised anywhere in the pipeline: `{code, level, message}`."""

from __future__ import annotations

from typing import Literal

from pydantic import BaseModel, ConfigDict

AlertLevel = Literal["critical", "warning", "info"]


class Alert(BaseModel):
    """One alert. `code` is a stable snake_case id; `message` is a sentence for the clinician."""

    model_config = ConfigDict(frozen=True, extra="forbid")

    code: str
    level: AlertLevel
    message: str
