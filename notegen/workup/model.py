"""What the rule walk finds: causes weighed with their evidence, mechanisms, suggested tests, the trace."""

from __future__ import annotations

from typing import Literal

from pydantic import Field

from notegen._model import FrozenModel

ChlorideClass = Literal["responsive", "resistant", "indeterminate", "unknown"]
Tier = Literal["likely", "possible", "unlikely"]

class Evidence(FrozenModel):
    """One finding for or against a cause, as a sentence filled with the case's values."""


    id: str
    strength: Literal["strong", "moderate", "weak"]
    text: str
    facts: dict[str, float | bool | str | None]
    source: str


class CauseEntry(FrozenModel):

    cause: str  # stable id, e.g. "diuretic"
    label: str
    tier: Tier
    supporting: tuple[Evidence, ...] = Field(alias="for")
    opposing: tuple[Evidence, ...] = Field(alias="against")
    undecided: tuple[str, ...] = ()  # what the data could not decide, in words
    # Tests (by label) whose missing result left a finding FOR this cause open: such a cause is
    # never called unlikely on its own; the note says what it cannot be assessed or excluded without.
    not_assessable_without: tuple[str, ...] = ()
    form_of: str | None = None  # the cause id this one is a specific form of (the pack's `form_of`)


class MechanismEntry(FrozenModel):
    """What generates the alkalosis."""


    mechanism: str
    label: str
    status: Literal["present", "undetermined"]
    text: str
    source: str


class FactorEntry(FrozenModel):
    """What maintains the alkalosis."""


    factor: str
    label: str
    status: Literal["present", "undetermined"]
    text: str
    source: str


class SuggestedTest(FrozenModel):

    test: str
    label: str
    why: str
    # Kept only because the pack's `suggest_when` could not be decided: due if the missing facts
    # `conditional_on` (fact ids) turn out to call for it; `conditional_says` is the clause the note shows.
    conditional: bool = False
    conditional_on: tuple[str, ...] = ()
    conditional_says: str = ""


class TraceEntry(FrozenModel):

    kind: str
    id: str
    condition: str
    values: dict[str, str]
    outcome: str
    goes_to: str | None = None
    source: str = ""
