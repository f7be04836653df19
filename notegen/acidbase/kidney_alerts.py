"""A creatinine that is not steady: the eGFR formula assumes one, so a rising creatinine is flagged.

CKD-EPI 2021 (Inker et al., NEJM 2021) estimates GFR from a creatinine at steady state. While it
rises, in acute kidney injury, the estimate overstates kidney function, and every reading and
consideration that rests on the eGFR leans the wrong way. KDIGO's definition of acute kidney injury
gives the thresholds (a rise of 0.3 mg/dL within 48 hours, or to 1.5 times a value from the last
seven days; KDIGO AKI guideline, Kidney Int Suppl 2012; from memory), kept in rules/acid_base.yaml.
"""

from __future__ import annotations

from notegen._format import format_value
from notegen.acidbase.alert import Alert
from notegen.acidbase.calculations import usable
from notegen.case.model import Case
from notegen.knowledge.settings import AcidBaseSettings

__all__ = ["creatinine_alerts"]

_EGFR_CAVEAT = "the eGFR assumes a steady creatinine and overstates kidney function while it rises"


def _rise(case: Case, s: AcidBaseSettings) -> tuple[float, float] | None:
    """(earlier, latest) creatinine in mg/dL when they meet either KDIGO rise within its window."""
    latest, when = case.chem.creatinine, case.chem.taken_at
    if latest is None or not usable(latest) or when is None:
        return None
    for earlier in case.earlier_chem:
        value = earlier.creatinine
        if value is None or not usable(value) or earlier.taken_at is None:
            continue
        hours = (when - earlier.taken_at).total_seconds() / 3600
        absolute = latest - value >= s.creatinine_rise_aki.value - 1e-9 and hours <= s.creatinine_rise_hours.value
        ratio = latest >= s.creatinine_ratio_aki.value * value - 1e-9 and hours <= s.creatinine_ratio_hours.value
        if absolute or ratio:
            return value, latest
    return None


def creatinine_alerts(case: Case, s: AcidBaseSettings) -> list[Alert]:
    """A warning when the creatinine is rising (or acute kidney injury is reported) and an eGFR is read."""
    rise = _rise(case, s)
    if rise is not None:
        earlier, latest = rise
        message = (
            f"Creatinine rose from {format_value(earlier, 'mg/dL')} to {format_value(latest, 'mg/dL')} across the "
            f"results given, as in acute kidney injury: {_EGFR_CAVEAT}."
        )
        return [Alert(code="unsteady_creatinine", level="warning", message=message)]
    if "acute_kidney_injury" in case.context.findings and case.chem.creatinine is not None:
        message = f"Acute kidney injury is reported: {_EGFR_CAVEAT}."
        return [Alert(code="unsteady_creatinine", level="warning", message=message)]
    return []
