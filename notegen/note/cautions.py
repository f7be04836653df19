"""The disclaimer and cautions every note carries, in every format (JSON included).

One wording, kept here so that the Markdown, text, HTML and JSON notes say the same thing.
"""

from __future__ import annotations

from notegen._format import format_range
from notegen.acidbase.model import AcidBaseReading

__all__ = ["DISCLAIMER", "note_cautions"]

DISCLAIMER = "Draft from the values given, for the responsible clinician to check against the chart, edit and sign."


def note_cautions(reading: AcidBaseReading) -> tuple[str, ...]:
    """The cautions, with the reference ranges this draft used."""
    ph = format_range(*reading.ph_bounds, digits=2, fixed=True)
    gap = format_range(*reading.anion_gap_reference, unit="mmol/L")
    return (
        f"Reference ranges vary by laboratory (this draft used pH {ph} and an anion gap of {gap}); "
        "adults only; local protocols take precedence.",
    )
