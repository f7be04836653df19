"""What the metabolic-acidosis work-up finds, as the assessment holds it (no engine import here).

The entries are the alkalosis work-up's own types (`CauseEntry`, `SuggestedTest`), so the JSON
shape of a differential is the same for both packs.
"""

from __future__ import annotations

from typing import Any, Literal

from notegen._model import FrozenModel
from notegen.workup.model import CauseEntry, SuggestedTest, TraceEntry

AcidosisWorkupKind = Literal["high_gap", "normal_gap", "mixed"]

# Stable ids of the shipped acidosis pack (rules/acidosis/causes.yaml), for management.yaml's
# condition check; a test keeps them equal to the pack's.
ACIDOSIS_CAUSE_IDS = frozenset(
    {
        "ketoacidosis",
        "lactic_acidosis",
        "toxic_alcohol",
        "salicylate",
        "kidney_failure",
        "pyroglutamic_acidosis",
        "d_lactic_acidosis",
        "gi_bicarbonate_loss",
        "distal_rta",
        "proximal_rta",
        "hyperkalemic_rta",
        "chloride_load",
        "carbonic_anhydrase_inhibitor",
    }
)


class AcidosisTest(SuggestedTest):
    """A suggested test, with what its result would decide as typed data for the note to word."""

    purpose: str = ""  # the pack's note on how to send it
    settles: tuple[str, ...] = ()  # pack trees whose outcome it could change, e.g. "urine ammonium excretion"
    bears_on: tuple[str, ...] = ()  # labels of the causes whose tier it could change


class AcidosisWorkup(FrozenModel):
    """The acidosis pack's conclusions for one case: the top-level `acidosis` object of the JSON."""

    kind: AcidosisWorkupKind
    differential: tuple[CauseEntry, ...] = ()
    next_tests: tuple[AcidosisTest, ...] = ()
    ammonium: str | None = None  # the urine ammonium reading: adequate, low, unreadable, unknown, not_asked
    notes: tuple[str, ...] = ()  # what the pack's trees said, e.g. why the urine anion gap cannot be read
    trace: tuple[TraceEntry, ...] = ()
    pack: str = ""

    def json_ready(self) -> dict[str, Any]:
        return self.model_dump(mode="json", by_alias=True)
