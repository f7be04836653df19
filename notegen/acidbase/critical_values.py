"""Calcium, sodium, glucose, lactate, salicylate and PCO2 read against their thresholds, so none is missed.

Calcium is read as ionized calcium when measured, else as total calcium corrected for albumin
(Payne et al., BMJ 1973), else as total calcium. Thresholds live in `rules/acid_base.yaml`; each
is common practice, since laboratories set their own critical values.
"""

from __future__ import annotations

from typing import Literal

from notegen._format import format_value, ph_text, round_half_up
from notegen.acidbase.alert import Alert
from notegen.acidbase.calculations import usable
from notegen.acidbase.formulas import corrected_calcium
from notegen.case.model import Case
from notegen.knowledge.settings import AcidBaseSettings

CalciumBasis = Literal["ionized", "corrected_total", "total"]


def calcium_for_reading(case: Case, s: AcidBaseSettings) -> tuple[CalciumBasis, float] | None:
    """The total calcium to read (mg/dL), corrected for albumin when albumin is given."""
    chem = case.chem
    if not usable(chem.ca):
        return None
    assert chem.ca is not None
    if usable(chem.albumin):
        assert chem.albumin is not None
        value = corrected_calcium(chem.ca, chem.albumin, s.normal_albumin.value, s.calcium_albumin_factor.value)
        return "corrected_total", value
    return "total", chem.ca


def hypercalcemia(case: Case, s: AcidBaseSettings) -> bool | None:
    """Whether the calcium is high; None when no calcium was measured.

    Ionized calcium, when given, decides: alkalemia shifts calcium onto albumin, so a total
    calcium can mislead either way.
    """
    if usable(case.chem.ionized_ca):
        assert case.chem.ionized_ca is not None
        return case.chem.ionized_ca > s.ionized_ca_high.value
    total = calcium_for_reading(case, s)
    if total is None:
        return None
    return total[1] > s.calcium_high.value


def _calcium_words(basis: CalciumBasis, value: float) -> str:
    shown = format_value(round_half_up(value, 1), "mg/dL")
    return {"corrected_total": f"Calcium corrected for albumin {shown}", "total": f"Total calcium {shown}"}.get(
        basis, shown
    )


def calcium_alerts(case: Case, s: AcidBaseSettings) -> list[Alert]:
    """High calcium (ionized or corrected total) and a severely low corrected total calcium."""
    alerts: list[Alert] = []
    ionized = case.chem.ionized_ca
    if usable(ionized):
        assert ionized is not None
        if ionized > s.ionized_ca_high.value:
            alerts.append(
                Alert(
                    code="hypercalcemia",
                    level="warning",
                    message=(
                        f"Ionized calcium {format_value(ionized, 'mmol/L')} is above "
                        f"{format_value(s.ionized_ca_high.value, 'mmol/L')}: hypercalcemia; consider its cause "
                        "(calcium and alkali intake, parathyroid hormone, malignancy) and the volume status."
                    ),
                )
            )
        return alerts  # ionized calcium decides; its low alerts are in `alerts`
    total = calcium_for_reading(case, s)
    if total is None:
        return alerts
    basis, value = total
    words = _calcium_words(basis, value)
    if value >= s.calcium_high_critical.value:
        alerts.append(
            Alert(
                code="hypercalcemia",
                level="critical",
                message=(
                    f"{words} is at or above {format_value(s.calcium_high_critical.value, 'mg/dL')}: severe "
                    "hypercalcemia; consider urgent review, an ionized calcium and the volume status."
                ),
            )
        )
    elif value > s.calcium_high.value:
        alerts.append(
            Alert(
                code="hypercalcemia",
                level="warning",
                message=(
                    f"{words} is above {format_value(s.calcium_high.value, 'mg/dL')}: hypercalcemia; consider "
                    "an ionized calcium and its cause (calcium and alkali intake, parathyroid hormone, malignancy)."
                ),
            )
        )
    elif value < s.calcium_low_critical.value:
        alerts.append(
            Alert(
                code="severe_hypocalcemia",
                level="critical",
                message=(
                    f"{words} is below {format_value(s.calcium_low_critical.value, 'mg/dL')}: severe "
                    "hypocalcemia unless the ionized calcium says otherwise; consider an ionized calcium, "
                    "cardiac monitoring and urgent review. Alkalemia lowers ionized calcium further."
                ),
            )
        )
    return alerts


def sodium_glucose_alerts(case: Case, s: AcidBaseSettings) -> list[Alert]:
    """Sodium and glucose beyond their critical values (common practice; laboratories set their own)."""
    alerts: list[Alert] = []
    na, glucose = case.chem.na, case.chem.glucose
    if usable(na):
        assert na is not None
        shown = format_value(na, "mmol/L")
        if na < s.sodium_low_critical.value:
            alerts.append(
                Alert(
                    code="severe_hyponatremia",
                    level="critical",
                    message=(
                        f"Sodium {shown} is below {format_value(s.sodium_low_critical.value, 'mmol/L')}: severe "
                        "hyponatremia; consider urgent review, with attention to symptoms and to the rate of "
                        "correction."
                    ),
                )
            )
        elif na > s.sodium_high_critical.value:
            alerts.append(
                Alert(
                    code="severe_hypernatremia",
                    level="critical",
                    message=(
                        f"Sodium {shown} is above {format_value(s.sodium_high_critical.value, 'mmol/L')}: severe "
                        "hypernatremia; consider urgent review of water balance and the rate of correction."
                    ),
                )
            )
    if usable(glucose):
        assert glucose is not None
        shown = format_value(glucose, "mg/dL")
        if glucose < s.glucose_low_critical.value:
            alerts.append(
                Alert(
                    code="hypoglycemia",
                    level="critical",
                    message=(
                        f"Glucose {shown} is below {format_value(s.glucose_low_critical.value, 'mg/dL')}: "
                        "hypoglycemia; consider urgent treatment and review."
                    ),
                )
            )
        elif glucose > s.glucose_high_critical.value:
            alerts.append(
                Alert(
                    code="severe_hyperglycemia",
                    level="critical",
                    message=(
                        f"Glucose {shown} is above {format_value(s.glucose_high_critical.value, 'mg/dL')}: severe "
                        "hyperglycemia; consider urgent review for ketoacidosis or a hyperosmolar state."
                    ),
                )
            )
    return alerts


def lactate_salicylate_alerts(case: Case, s: AcidBaseSettings) -> list[Alert]:
    """A lactate or a salicylate at a level to act on now: each a critical value of its own.

    The acidosis work-up may name lactic acidosis or salicylate poisoning as the cause; these
    alerts stand at the top of the note whatever the work-up says.
    """
    checks = (
        ("high_lactate", "Lactate", case.chem.lactate, s.lactate_critical, "mmol/L",
         ": consider urgent review for hypoperfusion, and for the other causes of a high lactate."),
        ("toxic_salicylate", "Salicylate", case.chem.salicylate, s.salicylate_critical, "mg/dL",
         ", a toxic level: consider urgent discussion with poison control or toxicology, per local protocol."),
    )  # fmt: skip
    alerts: list[Alert] = []
    for code, label, value, threshold, unit, advice in checks:
        if value is not None and usable(value) and value >= threshold.value:
            at = f"{label} {format_value(value, unit)} is at or above {format_value(threshold.value, unit)}"
            alerts.append(Alert(code=code, level="critical", message=at + advice))
    return alerts


def pco2_alerts(
    pco2: float | None,
    venous: bool,
    s: AcidBaseSettings,
    ph: float | None = None,
    *,
    compensating: bool = False,
    chronic: bool = False,
) -> list[Alert]:
    """A PCO2 beyond its critical limits (common practice: about <20 and >70 mmHg on laboratory lists).

    `compensating`: the reading finds a metabolic acidosis and no respiratory alkalosis, so a low PCO2 is
    its expected compensation, already named in the paragraph, and not flagged again as a danger of its
    own. `chronic`: the respiratory acidosis fits a chronic process, so an acidemia within the critical
    limits is its usual, incompletely compensated pH rather than an acute failure.

    A venous PCO2 is never converted: it is read against the limits moved up by the mean
    venous-arterial difference (`venous_pco2_offset`, Bloom et al. 2014), as the reading reads it
    against the reference range, and the alert says it is venous and that an arterial gas would
    confirm it, since the two differ by as much as about 20 mmHg either way.
    """
    if pco2 is None or not usable(pco2):
        return []
    shift = s.venous_pco2_offset.value if venous else 0.0
    low, high = s.pco2_low_critical.value + shift, s.pco2_high_critical.value + shift
    name = "Venous PCO2" if venous else "PaCO2"
    if pco2 > high:
        code, words, limit = "severe_hypercapnia", "above", high
        advice = "severe hypercapnia; consider urgent review of ventilation and whether ventilatory support is needed."
    elif pco2 < low and not compensating:
        code, words, limit = "severe_hypocapnia", "below", low
        advice = "severe hypocapnia; consider urgent review of its cause, and of ventilator settings if ventilated."
    elif pco2 < low or chronic:
        return []
    else:
        return _hypercapnic_acidemia(pco2, ph, s, venous)
    text = f"{name} {format_value(pco2, 'mmHg')} is {words} {format_value(limit, 'mmHg')}"
    if venous:
        # 70 + 4.4 is shown as its two settings, not as a figure of its own
        arterial, offset = format_value(limit - shift, "mmHg"), format_value(shift, "mmHg")
        text = (
            f"{name} {format_value(pco2, 'mmHg')} is {words} the arterial limit of {arterial} plus the mean "
            f"venous-arterial difference of {offset}"
        )
        advice = advice.replace("; consider ", "; consider an arterial gas to confirm it, and ", 1)
    return [Alert(code=code, level="critical", message=f"{text}: {advice}")]


def _hypercapnic_acidemia(pco2: float, ph: float | None, s: AcidBaseSettings, venous: bool) -> list[Alert]:
    """A PCO2 above the range with an acidemic pH: an acute or acute-on-chronic respiratory acidosis.

    A high PCO2 beside acidemia is never compensation. A venous PCO2 is read against the range moved
    up by `venous_pco2_offset` and is only a warning, which an arterial gas would confirm: the two
    differ by as much as about 20 mmHg either way (Bloom et al. 2014).
    """
    shift = s.venous_pco2_offset.value if venous else 0.0
    if ph is None or not usable(ph) or pco2 <= s.pco2_high.value + shift or ph >= s.ph_low.value:
        return []
    critical = not venous and ph < s.hypercapnic_acidemia_critical.value
    urgency = "urgent" if critical else "prompt"
    name, sample = ("Venous PCO2", " if an arterial gas confirms it") if venous else ("PaCO2", "")
    return [
        Alert(
            code="hypercapnic_acidemia",
            level="critical" if critical else "warning",
            message=(
                f"{name} {format_value(pco2, 'mmHg')} with pH {ph_text(ph)}: hypercapnia with acidemia, an "
                f"acute or acute-on-chronic respiratory acidosis{sample}; consider {urgency} review of ventilation "
                "and whether ventilatory support is needed."
            ),
        )
    ]
