"""The one pydantic base of the stages' results: frozen, strict about unknown keys."""

from __future__ import annotations

from pydantic import BaseModel, ConfigDict

__all__ = ["FrozenModel"]


class FrozenModel(BaseModel):
    """A result no later stage may change; a misspelt key fails loudly; fields may be given by name or alias."""

    model_config = ConfigDict(frozen=True, extra="forbid", populate_by_name=True)
