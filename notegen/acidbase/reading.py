"""The acid-base reading: consistency, pH status, primary disorder, compensation, gaps, alerts.

`read_acid_base` is pure and deterministic: the same case and settings give the same reading.
Each step adds a short finding in a clinician's words; what a step lacks goes to `missing`.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

from notegen._format import format_number, format_range, format_value, ph_text, round_half_up
from notegen.acidbase.alert import Alert
from notegen.acidbase.alerts import severity_alerts
from notegen.acidbase.calculations import Calculation, compute_calculations, usable, usable_ph
from notegen.acidbase.formulas import expected_total_co2, henderson_hasselbalch_hco3, henderson_hasselbalch_ph
from notegen.acidbase.model import (
    AcidBaseReading,
    AcidosisKind,
    Chronicity,
    CompensationStatus,
    Consistency,
    Disorder,
    DisorderBasis,
    ExpectedRange,
    GapBicarbonate,
    PhStatus,
    Primary,
    SampleKind,
    ValueSource,
)
from notegen.acidbase.steps import (
    EPS,
    VENOUS_PH_OFFSET,
    WORDS,
    GapResult,
    GasValues,
    ReadingDraft,
    metabolic_compensation,
    mm,
    mmol,
    read_anion_gap,
    respiratory_compensation,
)
from notegen.case.bounds import exact_only
from notegen.case.model import Case
from notegen.knowledge import shipped_knowledge
from notegen.knowledge.settings import AcidBaseSettings

__all__ = ["AcidBaseReading", "read_acid_base"]


def _gas_values(case: Case, w: ReadingDraft) -> GasValues:
    s, gas = w.s, case.gas
    pk, sol = s.pk_carbonic.value, s.co2_solubility.value
    ph = gas.ph if usable_ph(gas.ph) else None
    if gas.ph is not None and ph is None:
        w.missing.append(f"pH: {gas.ph!r} cannot be a blood pH and was set aside.")
    pco2 = gas.pco2 if usable(gas.pco2) else None
    hco3 = gas.hco3 if usable(gas.hco3) else None
    ph_source: ValueSource | None = "measured" if ph is not None else None
    hco3_source: ValueSource | None = "measured" if hco3 is not None else None
    if hco3 is None and ph is not None and pco2 is not None:
        hco3, hco3_source = henderson_hasselbalch_hco3(ph, pco2, pk, sol), "calculated"
        w.findings.append(f"The gas gave no bicarbonate; {mmol(hco3)} was calculated from pH and PaCO2.")
    if ph is None and pco2 is not None and hco3 is not None:
        ph, ph_source = henderson_hasselbalch_ph(pco2, hco3, pk, sol), "calculated"
        w.findings.append(f"The gas gave no pH; {format_number(ph, 2)} was calculated from PaCO2 and bicarbonate.")
    if hco3 is None and usable(case.chem.tco2):
        hco3, hco3_source = case.chem.tco2, "panel"
        w.findings.append(
            "No gas bicarbonate: the chemistry panel total CO2 stands in for it "
            "(it runs about 1 mmol/L higher)."
        )
    any_gas = ph is not None or pco2 is not None
    sample: SampleKind | None = (gas.sample or "unstated") if any_gas else None
    return GasValues(sample, ph, ph_source, pco2, hco3, hco3_source)


def _consistency(case: Case, g: GasValues, w: ReadingDraft) -> tuple[Consistency, float | None]:
    s, gas = w.s, case.gas
    pk, sol = s.pk_carbonic.value, s.co2_solubility.value
    if not (usable_ph(gas.ph) and usable(gas.pco2) and usable(gas.hco3)):
        w.missing.append("Consistency check: needs pH, PaCO2 and bicarbonate from the same gas.")
        return "not_checked", None
    assert gas.ph is not None and gas.pco2 is not None and gas.hco3 is not None
    done = w.calcs.get("calculated_ph")
    calc = done.value if done is not None else henderson_hasselbalch_ph(gas.pco2, gas.hco3, pk, sol)
    tol = s.consistency_ph_tolerance.value
    result: Consistency = "consistent"
    if abs(calc - gas.ph) > tol + EPS:
        result = "inconsistent"
        w.alerts.append(
            Alert(
                code="inconsistent_gas",
                level="warning",
                message=(
                    f"The gas values do not agree: PaCO2 {mm(gas.pco2)} and bicarbonate "
                    f"{mmol(gas.hco3)} give a pH of {format_number(calc, 2)} by Henderson-Hasselbalch, against "
                    f"{ph_text(gas.ph)} reported (tolerance {format_value(tol)}). Recheck the values, "
                    "or repeat the gas, before trusting this reading."
                ),
            )
        )
        w.findings.append(
            f"The reported pH {ph_text(gas.ph)} does not match the {ph_text(calc)} that PaCO2 and "
            "bicarbonate give; the reading below goes on but rests on values that need checking."
        )
    else:
        w.findings.append(
            # the calculated pH as the calculations hold it (3 decimals), never rounded a second time
            f"The gas is internally consistent: PaCO2 and bicarbonate give pH {ph_text(calc)} "
            f"(reported {ph_text(gas.ph)}, tolerance {format_value(tol)})."
        )
    if usable(case.chem.tco2):
        assert case.chem.tco2 is not None
        done_tco2 = w.calcs.get("expected_total_co2")
        expected = done_tco2.value if done_tco2 is not None else expected_total_co2(gas.hco3, gas.pco2, sol)
        tco2_tol = s.consistency_tco2_tolerance.value
        w.gas_panel_checked = True
        if abs(expected - case.chem.tco2) > tco2_tol + EPS:
            w.gas_panel_disagree = True
            w.alerts.append(
                Alert(
                    code="gas_panel_mismatch",
                    level="warning",
                    message=(
                        f"The panel total CO2 {mmol(case.chem.tco2)} differs from the {mmol(expected)} "
                        f"the gas predicts by more than {mmol(tco2_tol)}; unless drawn at different "
                        "times, consider repeating one of them."
                    ),
                )
            )
    return result, calc


def _ph_status(ph: float | None, w: ReadingDraft) -> PhStatus | None:
    s = w.s
    low, high = s.ph_low.value, s.ph_high.value
    if ph is None:
        return None
    status: PhStatus = "acidemia" if ph < low else "alkalemia" if ph > high else "normal"
    word = {"acidemia": "acidemic", "alkalemia": "alkalemic", "normal": "within range"}[status]
    w.findings.append(f"pH {ph_text(ph)} is {word} (reference {format_range(low, high, digits=2, fixed=True)}).")
    if w.venous and min(abs(ph - low), abs(ph - high)) <= VENOUS_PH_OFFSET:
        w.findings.append(
            "This venous pH lies within 0.03 of a bound; the arterial pH runs about 0.03 "
            "higher (Bloom 2014) and could fall on the other side."
        )
    return status


def _pco2_word(w: ReadingDraft) -> str:
    """A venous PCO2 is never called arterial."""
    return "PvCO2" if w.venous else "PaCO2"


def _driver(name: Disorder, pco2: float, hco3: float, w: ReadingDraft) -> str:
    """'the high bicarbonate (36 mmol/L)': the value behind a disorder, in words."""
    high = name in ("metabolic_alkalosis", "respiratory_acidosis")
    if name.startswith("metabolic"):
        return f"the {'high' if high else 'low'} bicarbonate ({mmol(hco3)})"
    return f"the {'high' if high else 'low'} {_pco2_word(w)} ({mm(pco2)})"


# long: one decision table, case by case, from the pH and the two values; split, its branches would lose their order
def _primary(g: GasValues, status: PhStatus | None, w: ReadingDraft) -> tuple[Primary, str]:
    s = w.s
    if g.ph is None or g.pco2 is None or g.hco3 is None:
        w.missing.append("Primary disorder: needs a blood gas with pH and PaCO2 (and a bicarbonate).")
        reason = "no blood gas with pH and PaCO2, so the primary disorder cannot be read"
        w.primary_basis = "no_gas"
        if g.hco3 is not None and g.hco3 > s.hco3_high.value:
            w.primary_basis = "no_gas_high_bicarbonate"
            reason += (
                "; the high total CO2 fits a metabolic alkalosis or the compensation of a respiratory "
                "acidosis, which only a gas can tell apart"
            )
        elif g.hco3 is not None and g.hco3 < s.hco3_low.value:
            w.primary_basis = "no_gas_low_bicarbonate"
            reason += (
                "; the low total CO2 fits a metabolic acidosis or the compensation of a respiratory "
                "alkalosis, which only a gas can tell apart"
            )
        return "undetermined", reason
    ph, pco2, hco3 = g.ph, g.pco2, g.hco3
    # A venous PCO2 is read against the arterial range moved up by the mean venous-arterial difference
    # (Bloom 2014), never converted: a PvCO2 of 48 is an ordinary venous value, not hypercapnia.
    shift = s.venous_pco2_offset.value if w.venous else 0.0
    # Each process's share of the pH shift, from Henderson-Hasselbalch: positive pushes toward alkalemia.
    metabolic = math.log10(hco3 / s.hco3_normal.value)
    respiratory = math.log10((s.pco2_normal.value + shift) / pco2)
    met_abnormal = hco3 < s.hco3_low.value or hco3 > s.hco3_high.value
    resp_abnormal = pco2 < s.pco2_low.value + shift or pco2 > s.pco2_high.value + shift
    met_name: Disorder = "metabolic_alkalosis" if metabolic > 0 else "metabolic_acidosis"
    resp_name: Disorder = "respiratory_alkalosis" if respiratory > 0 else "respiratory_acidosis"
    if status == "acidemia":
        direction = -1
    elif status == "alkalemia":
        direction = 1
    else:
        direction = 1 if ph > s.ph_normal.value else -1 if ph < s.ph_normal.value else 0
    shares = [(met_name, metabolic, met_abnormal), (resp_name, respiratory, resp_abnormal)]
    toward = [(n, abs(v), a) for n, v, a in shares if v * direction > 0]
    abnormal_toward = [t for t in toward if t[2]]
    if status == "normal" and not met_abnormal and not resp_abnormal:
        w.primary_basis = "all_normal"
        return "none", f"pH, {_pco2_word(w)} and bicarbonate are all within their reference ranges"
    if abnormal_toward:
        name, _, _ = max(abnormal_toward, key=lambda t: t[1])
        if len(abnormal_toward) == 2:
            reason = (
                f"both the bicarbonate and the {_pco2_word(w)} push the pH the same way; the {WORDS[name]} "
                "accounts for more of the shift"
            )
        elif status == "normal":
            reason = (
                f"the pH is within range but on the {'alkaline' if direction > 0 else 'acid'} side of "
                f"{ph_text(s.ph_normal.value)}, which {_driver(name, pco2, hco3, w)} explains"
            )
        else:
            reason = f"{_driver(name, pco2, hco3, w)} accounts for the {status}"
        w.primary_basis = "both_push_same_way" if len(abnormal_toward) == 2 else "one_value_explains"
        return name, reason
    if status != "normal" and toward:
        name, _, _ = max(toward, key=lambda t: t[1])
        w.primary_basis = "larger_push"
        return name, (
            f"the pH is out of range while {_pco2_word(w)} and bicarbonate sit just inside theirs; the "
            f"{WORDS[name]} is the larger push"
        )
    abnormal = [(n, a) for n, _, a in shares if a]
    if status == "normal" and len(abnormal) == 1:
        name = abnormal[0][0]
        w.primary_basis = "only_abnormal_value"
        return name, "the pH is within range and only this value is abnormal"
    if status == "normal" and len(abnormal) == 2 and metabolic * respiratory < 0:
        w.add(
            met_name,
            f"bicarbonate out of range while the pH is normal, offset by an opposing {WORDS[resp_name]}",
        )
        w.add(
            resp_name,
            f"{_pco2_word(w)} out of range while the pH is normal, offset by an opposing {WORDS[met_name]}",
        )
        w.primary_basis = "offsetting_mixed"
        return "undetermined", (
            f"the pH sits at the mid-point with both {_pco2_word(w)} and bicarbonate abnormal in "
            "opposite directions: a mixed disorder whose first process cannot be told"
        )
    w.primary_basis = "values_disagree"
    return "undetermined", (
        f"the pH does not fit the direction of the {_pco2_word(w)} and bicarbonate; check the gas values"
    )


# long: assembles the reading's ~40 typed fields in the order the reading is made; each step is a function of steps.py
def read_acid_base(
    case: Case,
    settings: AcidBaseSettings | None = None,
    calculations: Mapping[str, Calculation] | None = None,
) -> AcidBaseReading:
    """Read the acid-base status of a validated case. Never raises on a validated case.

    `calculations` is the case's `compute_calculations` result: the reading reads its anion gap,
    delta gap and ratio, expected PaCO2 or bicarbonate and calculated pH rather than working them
    out again. Without it they are computed here.
    """
    s = settings or shipped_knowledge().settings
    case = exact_only(case)  # a reported bound ("<10") is never used as if it were exact
    calcs = compute_calculations(case, s) if calculations is None else calculations
    w = ReadingDraft(s=s, venous=case.gas.sample == "venous", calcs=calcs)
    g = _gas_values(case, w)
    if g.sample == "unstated":
        w.findings.append("The sample type was not stated; it is read as arterial.")
        w.alerts.append(
            Alert(
                code="sample_unstated",
                level="info",
                message="The gas sample type (arterial or venous) was not stated; it was read as arterial.",
            )
        )
    if w.venous:
        w.findings.append(
            "Venous sample: pH and bicarbonate are read as they are, with no adjustment (they track "
            "arterial values outside shock; venous minus arterial averages pH -0.03 and bicarbonate "
            "+1 mmol/L, Bloom 2014; Kelly 2016). Venous PCO2 is not converted (limits of agreement -20 "
            "to +26 mmHg), so the compensation verdict is uncertain."
        )
        w.findings.append(
            "The PvCO2 is read against the arterial PCO2 range moved up by the mean venous-arterial "
            f"difference of {mm(s.venous_pco2_offset.value)} (Bloom 2014), not converted to a PaCO2."
        )
        if g.pco2 is not None and g.pco2 < s.venous_pco2_screen.value:
            w.findings.append(
                f"Venous PCO2 {mm(g.pco2)} is below {mm(s.venous_pco2_screen.value)}, which makes "
                "arterial hypercapnia very unlikely (Kelly 2016)."
            )
    consistency, calc_ph = _consistency(case, g, w)
    ph_status = _ph_status(g.ph, w)
    primary_at = len(w.findings)
    primary, reason = _primary(g, ph_status, w)
    compensation: CompensationStatus = "not_applicable"
    expected: ExpectedRange | None = None
    alternatives: tuple[ExpectedRange, ...] = ()
    chronicity: Chronicity | None = None
    if primary == "metabolic_acidosis" or primary == "metabolic_alkalosis":
        w.add(primary, reason)
        compensation, expected = metabolic_compensation(primary, g, w)
    elif primary == "respiratory_acidosis" or primary == "respiratory_alkalosis":
        w.add(primary, reason)
        compensation, expected, alternatives, chronicity = respiratory_compensation(primary, g, w)
    gap = read_anion_gap(case, ph_status, w)
    established = [b for b in w.bases if b.certainty == "established"]
    if primary == "none" and established:
        primary = established[0].disorder
        reason = (
            "pH, PaCO2 and bicarbonate are within range, but the anion gap shows a metabolic acidosis "
            "that another process offsets"
        )
        w.primary_basis = "gap_offset"
        w.bases[w.bases.index(established[0])] = DisorderBasis(
            disorder=primary, certainty="established", basis=reason
        )
    w.findings.insert(primary_at, _primary_sentence(primary, reason))
    kind = _acidosis_kind(w, gap)
    if w.has("metabolic_acidosis") and gap.status is None:
        w.missing.append("Metabolic acidosis type: needs sodium and chloride for the anion gap.")
    w.alerts += severity_alerts(
        case,
        s,
        ph=g.ph,
        ph_calculated=g.ph_source == "calculated",
        pco2=g.pco2,
        hco3=g.hco3,
        alkalemic=ph_status == "alkalemia",
        venous=w.venous,
        compensating_low_pco2=w.has("metabolic_acidosis")
        and not any(b.disorder == "respiratory_alkalosis" for b in w.bases),
        chronic_hypercapnia=primary == "respiratory_acidosis" and chronicity == "chronic",
    )
    if consistency == "inconsistent":
        _provisional(w, primary)
    ordered = sorted(w.bases, key=lambda b: b.disorder != primary)  # stable: primary first, then as found
    return AcidBaseReading(
        sample=g.sample,
        ph=_r(g.ph, 3),
        ph_source=g.ph_source,
        pco2=_r(g.pco2, 2),
        hco3=_r(g.hco3, 2),
        hco3_source=g.hco3_source,
        calculated_ph=_r(calc_ph, 3),
        consistency=consistency,
        ph_status=ph_status,
        ph_bounds=(s.ph_low.value, s.ph_high.value),
        primary=primary,
        primary_reason=reason,
        primary_basis=w.primary_basis,
        disorders=tuple(b.disorder for b in ordered if b.certainty == "established"),
        possible_disorders=tuple(b.disorder for b in ordered if b.certainty == "possible"),
        disorder_basis=tuple(ordered),
        compensation=compensation,
        compensation_edge=w.edge,
        expected=expected,
        expected_alternatives=alternatives,
        chronicity=chronicity,
        anion_gap=_r(gap.value, 2),
        anion_gap_corrected=_r(gap.corrected, 2),
        anion_gap_status=gap.status,
        anion_gap_reference=(s.anion_gap_low.value, s.anion_gap_high.value),
        anion_gap_within_alkalemia_rise=gap.within_alkalemia_rise,
        anion_gap_below_range=gap.below_range,
        anion_gap_bicarbonate=_gap_label(gap.bicarbonate),
        delta_gap=_r(gap.delta_gap, 2),
        delta_ratio=_r(gap.delta_ratio, 2),
        delta_ratio_interpretation=gap.interpretation,
        gas_panel_agreement=("disagree" if w.gas_panel_disagree else "agree" if w.gas_panel_checked else "not_checked"),
        delta_ratio_meaning=gap.meaning,
        delta_ratio_interpretable=gap.interpretable,
        bicarbonate_fall=_r(gap.bicarbonate_fall, 2),
        delta_ratio_allows_compensation=gap.allows_compensation,
        metabolic_acidosis_kind=kind,
        missing=tuple(w.missing),
        alerts=tuple(w.alerts),
        findings=tuple(w.findings),
    )


def _provisional(w: ReadingDraft, primary: Primary) -> None:
    """An internally inconsistent gas gets no firm mixed disorder: every added disorder is only possible."""
    added = [b for b in w.bases if b.disorder != primary and b.certainty == "established"]
    if not added:
        return
    w.bases = [
        DisorderBasis(disorder=b.disorder, certainty="possible", basis=b.basis) if b in added else b for b in w.bases
    ]
    w.findings.append(
        "Because the gas values do not agree, any added disorder is provisional: repeat the gas before "
        "relying on a mixed disorder."
    )


def _primary_sentence(primary: Primary, reason: str) -> str:
    if primary == "none":
        return f"No acid-base disorder on these values: {reason}."
    if primary == "undetermined":
        return f"Primary disorder not determined: {reason}."
    return f"Primary disorder: {WORDS[primary]}; {reason}."


def _acidosis_kind(w: ReadingDraft, gap: GapResult) -> AcidosisKind | None:
    if not w.has("metabolic_acidosis") or gap.status is None:
        return None
    if gap.status == "normal":
        return "normal_gap"
    return "high_and_normal_gap" if gap.normal_gap_acidosis else "high_gap"


def _gap_label(label: str | None) -> GapBicarbonate | None:
    if label == "gas bicarbonate":
        return "gas bicarbonate"
    if label == "panel total CO2":
        return "panel total CO2"
    return None


def _r(value: float | None, digits: int) -> float | None:
    return None if value is None else round_half_up(value, digits)
