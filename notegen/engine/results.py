"""What a walk returns: tree outcomes, ranked causes, factors, suggested tests, and the trace.

Plain frozen dataclasses: a walk builds dozens of them per case and must stay cheap.
`as_dict()` gives JSON-ready data.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Literal

from notegen.engine.conditions import Truth

Tier = Literal["likely", "possible", "unlikely"]
TIERS: tuple[Tier, ...] = ("likely", "possible", "unlikely")
JsonValue = float | bool | str | None


@dataclass(frozen=True, slots=True)
class TreeOutcome:
    tree: str
    title: str
    outcome: str
    leaf: str
    path: tuple[str, ...]  # node ids from the start to the leaf
    notes: tuple[str, ...]  # filled `says` of the nodes on the path
    consider: tuple[str, ...]  # cause ids the path points to
    undecided: tuple[str, ...]  # facts whose absence sent the walk down an `if_unknown` exit

    def as_dict(self) -> dict[str, Any]:
        return {
            "tree": self.tree,
            "outcome": self.outcome,
            "path": list(self.path),
            "notes": list(self.notes),
            "consider": list(self.consider),
            "undecided": list(self.undecided),
        }


@dataclass(frozen=True, slots=True)
class EvidenceResult:
    """An evidence item whose condition held."""

    id: str
    strength: str
    text: str
    facts: tuple[tuple[str, JsonValue], ...]
    source: str

    def as_dict(self) -> dict[str, Any]:
        return {
            "id": self.id,
            "strength": self.strength,
            "text": self.text,
            "facts": dict(self.facts),
            "source": self.source,
        }


@dataclass(frozen=True, slots=True)
class OpenEvidence:
    """An evidence item the data could not decide."""

    id: str
    supporting: bool
    strength: str
    condition: str
    missing: tuple[str, ...]

    def as_dict(self) -> dict[str, Any]:
        return {
            "id": self.id,
            "direction": "for" if self.supporting else "against",
            "strength": self.strength,
            "condition": self.condition,
            "missing": list(self.missing),
        }


@dataclass(frozen=True, slots=True)
class CauseResult:
    id: str
    label: str
    tier: Tier
    points_for: int
    points_against: int
    supporting: tuple[EvidenceResult, ...]
    opposing: tuple[EvidenceResult, ...]
    open: tuple[OpenEvidence, ...]

    def as_dict(self) -> dict[str, Any]:
        return {
            "cause": self.id,
            "label": self.label,
            "tier": self.tier,
            "for": [e.as_dict() for e in self.supporting],
            "against": [e.as_dict() for e in self.opposing],
            "open": [e.as_dict() for e in self.open],
        }


@dataclass(frozen=True, slots=True)
class FactorResult:
    id: str
    group: str
    label: str
    status: Literal["present", "undetermined"]
    text: str
    facts: tuple[tuple[str, JsonValue], ...]
    missing: tuple[str, ...]
    source: str

    def as_dict(self) -> dict[str, Any]:
        return {
            "factor": self.id,
            "label": self.label,
            "status": self.status,
            "text": self.text,
            "facts": dict(self.facts),
            "missing": list(self.missing),
            "source": self.source,
        }


@dataclass(frozen=True, slots=True)
class Decision:
    """Something a suggested test could settle: a tree's outcome or a cause's tier."""

    kind: Literal["tree", "cause"]
    id: str
    label: str
    now: str
    could_be: tuple[str, ...]


@dataclass(frozen=True, slots=True)
class Suggestion:
    test: str
    label: str
    missing: tuple[str, ...]
    decides: tuple[Decision, ...]
    why: str
    source: str
    # Facts whose absence leaves the test's `suggest_when` undecided: the test is kept, but only
    # conditionally, pending those facts. Empty when the gate held (or the test has none).
    conditional_on: tuple[str, ...] = ()
    # The pack's clause for each of them that has one, in the same order (empty string where none).
    conditional_says: tuple[str, ...] = ()

    @property
    def conditional(self) -> bool:
        return bool(self.conditional_on)

    def as_dict(self) -> dict[str, Any]:
        found: dict[str, Any] = {"test": self.test, "why": self.why}
        if self.conditional_on:
            found["conditional_on"] = list(self.conditional_on)
        return found


@dataclass(frozen=True, slots=True)
class TraceStep:
    """One line of the explanation: what was asked, what values were seen, what came out."""

    kind: Literal["node", "leaf", "evidence", "factor"]
    id: str
    condition: str
    values: tuple[tuple[str, str], ...]
    outcome: Truth | str
    goes_to: str | None = None
    source: str = ""

    def as_dict(self) -> dict[str, Any]:
        outcome = self.outcome.value if isinstance(self.outcome, Truth) else self.outcome
        return {
            "kind": self.kind,
            "id": self.id,
            "condition": self.condition,
            "values": dict(self.values),
            "outcome": outcome,
            "goes_to": self.goes_to,
            "source": self.source,
        }
