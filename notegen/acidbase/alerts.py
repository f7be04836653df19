"""Severity alerts of the acid-base reading: pH, potassium, sodium, glucose, calcium, magnesium, hypoventilation.

Thresholds come from `AcidBaseSettings`; each message is a sentence for the clinician, phrased as
considerations, never doses.
"""

from __future__ import annotations

from notegen._format import decimals_beside, format_number, format_value, format_value_beside, join_words, ph_text
from notegen.acidbase.alert import Alert, AlertLevel
from notegen.acidbase.calculations import usable
from notegen.acidbase.critical_values import (
    calcium_alerts,
    lactate_salicylate_alerts,
    pco2_alerts,
    sodium_glucose_alerts,
)
from notegen.acidbase.kidney_alerts import creatinine_alerts
from notegen.case.model import Case
from notegen.knowledge.settings import AcidBaseSettings


def _alert(code: str, level: AlertLevel, *parts: str, finding: str | None = None) -> list[Alert]:
    """One alert; `finding` is its message without the advice, for a note whose management carries it."""
    return [Alert(code=code, level=level, message=" ".join(parts), finding=finding)]


def _ph_alerts(ph: float | None, calculated: bool, s: AcidBaseSettings, venous: bool = False) -> list[Alert]:
    if ph is None:
        return []
    limits = (s.alkalemia_critical.value, s.alkalemia_warning.value, s.acidemia_critical.value,
              s.acidemia_warning.value)
    # as reported (7.485 stays 7.485), and with enough decimals for the comparison to hold as printed:
    # 7.5999 is not shown as 7.60 beside "marked"
    reported = len(ph_text(ph).partition(".")[2])
    shown = format_number(ph, max(reported, decimals_beside(ph, limits, 2)))
    shown += (" (calculated)" if calculated else "") + (" (venous)" if venous else "")
    if ph >= s.alkalemia_critical.value:
        return _alert(
            "severe_alkalemia", "critical",
            f"pH {shown} is at or above {format_value(s.alkalemia_critical.value)}: severe alkalemia,",
            "which carries a high mortality (Anderson & Henrich 1987);",
            "consider urgent review and monitoring for arrhythmia.",
        )  # fmt: skip
    if ph >= s.alkalemia_warning.value:
        return _alert(
            "severe_alkalemia", "warning",
            f"pH {shown} is at or above {format_value(s.alkalemia_warning.value)}: marked alkalemia;",
            "consider prompt review of its cause and of potassium and ionized calcium.",
        )  # fmt: skip
    if ph <= s.acidemia_critical.value:
        return _alert(
            "severe_acidemia", "critical",
            f"pH {shown} is at or below {format_value(s.acidemia_critical.value)}: severe acidemia;",
            "consider urgent review.",
        )  # fmt: skip
    if ph <= s.acidemia_warning.value:
        return _alert(
            "severe_acidemia", "warning",
            f"pH {shown} is at or below {format_value(s.acidemia_warning.value)}: marked acidemia;",
            "consider prompt review of its cause.",
        )  # fmt: skip
    return []


def _potassium_alerts(k: float | None, s: AcidBaseSettings, *, magnesium_measured: bool = False) -> list[Alert]:
    if not usable(k):
        return []
    assert k is not None
    shown = format_value_beside(k, (s.potassium_low_critical.value, s.potassium_low_warning.value,
                                    s.potassium_high_critical.value, s.potassium_high_warning.value), "mmol/L")
    # Asking for magnesium only when it was not measured; and no word of an alkalosis here, since
    # hypokalemia also comes with acidoses (the maintenance section says what sustains an alkalosis).
    magnesium = () if magnesium_measured else ("a magnesium level",)
    if k < s.potassium_low_critical.value:
        return _alert(
            "severe_hypokalemia", "critical",
            f"Potassium {shown} is below {format_value(s.potassium_low_critical.value, 'mmol/L')}:",
            "severe hypokalemia; consider",
            f"{join_words(('an ECG', 'cardiac monitoring', 'prompt repletion', *magnesium))}.",
        )  # fmt: skip
    if k < s.potassium_low_warning.value:
        below = f"Potassium {shown} is below {format_value(s.potassium_low_warning.value, 'mmol/L')}:"
        # magnesium is named once, by the considerations or the suggested tests, not here as well
        return _alert("hypokalemia", "warning", below, "hypokalemia; consider repletion.",
                      finding=f"{below} hypokalemia.")  # fmt: skip
    if k >= s.potassium_high_critical.value:
        return _alert(
            "severe_hyperkalemia", "critical",
            f"Potassium {shown} is at or above {format_value(s.potassium_high_critical.value, 'mmol/L')}:",
            "severe hyperkalemia; consider an ECG and urgent treatment, after excluding a hemolyzed sample.",
        )  # fmt: skip
    if k >= s.potassium_high_warning.value:
        return _alert(
            "hyperkalemia", "warning",
            f"Potassium {shown} is at or above {format_value(s.potassium_high_warning.value, 'mmol/L')}:",
            "hyperkalemia; consider an ECG and repeating the sample.",
        )  # fmt: skip
    return []


def _calcium_alerts(ionized: float | None, alkalemic: bool, s: AcidBaseSettings) -> list[Alert]:
    if not usable(ionized):
        return []
    assert ionized is not None
    shown = format_value_beside(ionized, (s.ionized_ca_low_critical.value, s.ionized_ca_low_warning.value), "mmol/L")
    why = ("Alkalemia lowers ionized calcium further.",) if alkalemic else ()
    if ionized < s.ionized_ca_low_critical.value:
        return _alert(
            "low_ionized_calcium", "critical",
            f"Ionized calcium {shown} is below {format_value(s.ionized_ca_low_critical.value, 'mmol/L')}:",
            "severe hypocalcemia; consider cardiac monitoring and urgent review.", *why,
        )  # fmt: skip
    if ionized < s.ionized_ca_low_warning.value:
        return _alert(
            "low_ionized_calcium", "warning",
            f"Ionized calcium {shown} is below {format_value(s.ionized_ca_low_warning.value, 'mmol/L')};",
            "consider watching for tetany and arrhythmia.", *why,
        )  # fmt: skip
    return []


def _magnesium_alerts(mg: float | None, s: AcidBaseSettings) -> list[Alert]:
    if not usable(mg):
        return []
    assert mg is not None
    shown = format_value_beside(mg, (s.magnesium_low_warning.value, s.magnesium_low.value), "mg/dL")
    if mg < s.magnesium_low_warning.value:
        below = f"Magnesium {shown} is below {format_value(s.magnesium_low_warning.value, 'mg/dL')}"
        return _alert("hypomagnesemia", "warning", f"{below}:",
                      "severe hypomagnesemia; potassium is hard to replete until magnesium is restored.",
                      finding=f"{below}: severe hypomagnesemia.")  # fmt: skip
    if mg < s.magnesium_low.value:
        below = f"Magnesium {shown} is below {format_value(s.magnesium_low.value, 'mg/dL')}"
        return _alert("hypomagnesemia", "info", f"{below};", "low magnesium hinders potassium repletion.",
                      finding=f"{below}: hypomagnesemia.")  # fmt: skip
    return []


def _hypoventilation_alert(
    hco3: float | None, pco2: float | None, venous: bool, s: AcidBaseSettings
) -> list[Alert]:
    if hco3 is None or pco2 is None:
        return []
    if hco3 < s.bicarbonate_very_high.value or pco2 < s.hypoventilation_pco2.value:
        return []
    kind = "PvCO2" if venous else "PaCO2"
    return _alert(
        "high_bicarbonate_hypoventilation", "warning",
        f"Bicarbonate {format_value(hco3, 'mmol/L')} with {kind} {format_value(pco2, 'mmHg')}:",
        "hypoventilation with a very high bicarbonate, past the usual limit of respiratory compensation;",
        "consider an added respiratory acidosis, and review oxygen targets and sedating drugs.",
    )  # fmt: skip


def severity_alerts(
    case: Case,
    s: AcidBaseSettings,
    *,
    ph: float | None,
    ph_calculated: bool,
    pco2: float | None,
    hco3: float | None,
    alkalemic: bool,
    venous: bool,
    compensating_low_pco2: bool = False,
    chronic_hypercapnia: bool = False,
) -> list[Alert]:
    """Alerts for dangerous values, in a fixed order.

    pH, PCO2, potassium, sodium and glucose, lactate and salicylate, calcium, magnesium, ventilation,
    a creatinine that is not steady.
    """
    alerts: list[Alert] = []
    alerts += _ph_alerts(ph, ph_calculated, s, venous)
    alerts += pco2_alerts(pco2, venous, s, ph, compensating=compensating_low_pco2, chronic=chronic_hypercapnia)
    alerts += _potassium_alerts(case.chem.k, s, magnesium_measured=usable(case.chem.mg))
    alerts += sodium_glucose_alerts(case, s)
    alerts += lactate_salicylate_alerts(case, s)
    alerts += _calcium_alerts(case.chem.ionized_ca, alkalemic, s)
    alerts += calcium_alerts(case, s)
    alerts += _magnesium_alerts(case.chem.mg, s)
    alerts += _hypoventilation_alert(hco3, pco2, venous, s)
    alerts += creatinine_alerts(case, s)
    return alerts
