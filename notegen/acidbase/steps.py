"""Steps of the acid-base reading shared by `notegen.acidbase.reading`: the working draft, compensation, anion gap.

Split from `acidbase.py` along the seam between reading the gas (there) and judging compensation and
the gaps (here). Everything here writes its findings into a `ReadingDraft`.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field

from notegen._format import format_number, format_range, format_value, trimmed_number
from notegen.acidbase.alert import Alert
from notegen.acidbase.calculations import Calculation, gap_bicarbonate, usable
from notegen.acidbase.formulas import (
    Estimate,
    anion_gap,
    corrected_anion_gap,
    delta_gap,
    delta_ratio,
    expected_hco3_acute_respiratory_acidosis,
    expected_hco3_acute_respiratory_alkalosis,
    expected_hco3_chronic_respiratory_acidosis,
    expected_hco3_chronic_respiratory_alkalosis,
    expected_pco2_metabolic_acidosis,
    expected_pco2_metabolic_alkalosis,
)
from notegen.acidbase.model import (
    Certainty,
    Chronicity,
    CompensationEdge,
    CompensationStatus,
    DeltaRatioMeaning,
    Disorder,
    DisorderBasis,
    ExpectedRange,
    GapBelowRange,
    GapStatus,
    PhStatus,
    PrimaryBasis,
    SampleKind,
    ValueSource,
)
from notegen.case.model import Case
from notegen.knowledge.settings import AcidBaseSettings

EPS = 1e-9  # measured values on a range bound count as inside it
WORDS: dict[str, str] = {
    "metabolic_alkalosis": "metabolic alkalosis",
    "metabolic_acidosis": "metabolic acidosis",
    "respiratory_acidosis": "respiratory acidosis",
    "respiratory_alkalosis": "respiratory alkalosis",
}
# Bloom et al., Eur J Emerg Med 2014: mean venous-minus-arterial differences.
VENOUS_PH_OFFSET = 0.033


# Figures in sentences come from the one formatter (`notegen._format`), as the note's tables do.
def mm(value: float) -> str:
    return f"{trimmed_number(value, 1)} mmHg"


def mmol(value: float) -> str:
    return f"{trimmed_number(value, 1)} mmol/L"


def span(low: float, high: float, unit: str) -> str:
    return format_range(low, high, unit)


@dataclass
class ReadingDraft:
    """What the reading accumulates as it goes; turned into the frozen model at the end."""

    s: AcidBaseSettings
    venous: bool
    calcs: Mapping[str, Calculation] = field(default_factory=dict)  # the case's compute_calculations
    gas_panel_checked: bool = False
    edge: CompensationEdge | None = None  # why an added respiratory disorder is only possible
    gas_panel_disagree: bool = False  # the panel total CO2 is not the one the gas predicts
    findings: list[str] = field(default_factory=list)
    missing: list[str] = field(default_factory=list)
    alerts: list[Alert] = field(default_factory=list)
    bases: list[DisorderBasis] = field(default_factory=list)
    primary_basis: PrimaryBasis | None = None

    def add(self, disorder: Disorder, basis: str, certainty: Certainty = "established") -> None:
        for i, known in enumerate(self.bases):
            if known.disorder == disorder:
                if known.certainty == "possible" and certainty == "established":
                    self.bases[i] = DisorderBasis(disorder=disorder, certainty=certainty, basis=basis)
                return
        self.bases.append(DisorderBasis(disorder=disorder, certainty=certainty, basis=basis))

    def has(self, disorder: Disorder) -> bool:
        return any(b.disorder == disorder and b.certainty == "established" for b in self.bases)


@dataclass(frozen=True)
class GasValues:
    sample: SampleKind | None
    ph: float | None
    ph_source: ValueSource | None
    pco2: float | None
    hco3: float | None
    hco3_source: ValueSource | None


def _estimate(done: Calculation | None) -> Estimate | None:
    """A rule's prediction as `compute_calculations` worked it out, when it did."""
    if done is None or done.low is None or done.high is None:
        return None
    return Estimate(done.value, done.low, done.high)


# long: the published rule, its alternative form, the edge and the ceiling checks read as one sequence
def metabolic_compensation(
    primary: Disorder, g: GasValues, w: ReadingDraft
) -> tuple[CompensationStatus, ExpectedRange]:
    s = w.s
    assert g.pco2 is not None and g.hco3 is not None
    done = _estimate(w.calcs.get("expected_pco2"))
    if primary == "metabolic_acidosis":
        est = done or expected_pco2_metabolic_acidosis(g.hco3, s.winters_tolerance.value)
        rule, source = "Winter's formula", "Albert, Dell & Winters, Ann Intern Med 1967"
    else:
        est = done or expected_pco2_metabolic_alkalosis(
            g.hco3,
            s.alkalosis_pco2_slope.value,
            s.alkalosis_pco2_tolerance.value,
            s.pco2_normal.value,
            s.hco3_normal.value,
        )
        rule, source = "0.7 rule", "Berend, de Vries & Gans, NEJM 2014"
    expected = ExpectedRange(
        quantity="pco2",
        value=round(est.value, 2),
        low=round(est.low, 2),
        high=round(est.high, 2),
        unit="mmHg",
        rule=rule,
        source=source,
    )
    pco2_word = "PvCO2" if w.venous else "PaCO2"
    if w.venous:
        # Bloom et al., Eur J Emerg Med 2014; Kelly, Emerg Med J 2016: venous PCO2 runs a few mmHg above
        # arterial with limits of agreement of -20 to +26 mmHg, so it is never set against a prediction
        # made for arterial blood.
        w.findings.append(
            f"Expected PaCO2 for this {WORDS[primary]} is {span(est.low, est.high, 'mmHg')} ({rule}, {source}); "
            f"compensation is not assessable on a venous sample, since the PvCO2 {mm(g.pco2)} differs from "
            "the arterial value by a few mmHg on average and far more in some patients (Bloom 2014; Kelly 2016)."
        )
        return "uncertain", expected
    head = (
        f"Expected PaCO2 for this {WORDS[primary]} is {span(est.low, est.high, 'mmHg')} ({rule}, {source}); "
        f"measured {pco2_word} {mm(g.pco2)}"
    )
    added: Disorder | None = None
    if g.pco2 > est.high + EPS:
        added = "respiratory_acidosis"
    elif g.pco2 < est.low - EPS:
        added = "respiratory_alkalosis"
    if added is None:
        ceiling = s.alkalosis_pco2_ceiling.value
        if primary == "metabolic_alkalosis" and g.pco2 > ceiling:
            w.findings.append(
                f"{head}: within the rule, but compensation above about {mm(ceiling)} is "
                "uncommon (Galla 2000); an added respiratory acidosis is possible."
            )
            w.add("respiratory_acidosis", f"{pco2_word} above the usual ceiling of compensation", "possible")
            w.edge = "ceiling"
            return "uncertain", expected
        w.findings.append(f"{head}: compensation is appropriate.")
        return "appropriate", expected
    side = "above" if added == "respiratory_acidosis" else "below"
    ceiling = s.alkalosis_pco2_ceiling.value
    tolerance = s.alkalosis_pco2_tolerance.value
    if primary == "metabolic_alkalosis" and added == "respiratory_alkalosis" and g.pco2 >= ceiling - tolerance:
        # The 0.7 rule runs past what ventilation usually delivers (about 55 mmHg, Galla 2000): a PaCO2
        # near that ceiling may be maximal compensation rather than an added respiratory alkalosis.
        w.findings.append(
            f"{head}, {side} the range, but the rule runs past the usual ceiling of compensation (about "
            f"{mm(ceiling)}, Galla 2000) and the PaCO2 is near it; an added respiratory alkalosis is possible, "
            "not established."
        )
        w.add(added, f"{pco2_word} {mm(g.pco2)} is near the usual ceiling of compensation", "possible")
        w.edge = "ceiling"
        return "uncertain", expected
    edge = _at_the_edge(primary, g.pco2, g.hco3, est, w)
    if edge is not None:
        w.findings.append(f"{head}, {side} the range but {edge}; an added {WORDS[added]} is possible, not established.")
        w.add(added, f"PaCO2 {mm(g.pco2)} is just {side} the {rule} range for the {WORDS[primary]}", "possible")
        return "uncertain", expected
    w.findings.append(f"{head}, {side} the range: an added {WORDS[added]}.")
    w.add(added, f"PaCO2 {mm(g.pco2)} is {side} the {rule} range for the {WORDS[primary]}")
    return "inappropriate", expected


def _at_the_edge(primary: Disorder, pco2: float, hco3: float, est: Estimate, w: ReadingDraft) -> str | None:
    """Why a PaCO2 just outside the expected range leaves an added disorder only possible, or None.

    Published forms of each rule differ by a few mmHg (shared/CLINICAL.md): within the edge margin of
    the range, or inside another published form's range, the added disorder is not established.
    """
    s = w.s
    margin = s.compensation_edge_margin.value
    if est.low - margin - EPS <= pco2 <= est.high + margin + EPS:
        w.edge = "near_edge"
        return "only just, where published forms of the rule differ"
    if primary == "metabolic_alkalosis":
        alt = s.alkalosis_pco2_slope.value * hco3 + s.alkalosis_pco2_alt_intercept.value
        tol = s.alkalosis_pco2_alt_tolerance.value
        if alt - tol - EPS <= pco2 <= alt + tol + EPS:
            w.edge = "other_form"
            return "inside the range another published form of the rule gives (Kidney360 2022)"
    return None


# long: acute and chronic rules for acidosis and alkalosis, side by side, so they stay symmetrical
def respiratory_compensation(
    primary: Disorder, g: GasValues, w: ReadingDraft
) -> tuple[CompensationStatus, ExpectedRange, tuple[ExpectedRange, ...], Chronicity]:
    s = w.s
    assert g.pco2 is not None and g.hco3 is not None
    tol, n_p, n_h = s.resp_hco3_tolerance.value, s.pco2_normal.value, s.hco3_normal.value
    done_acute = _estimate(w.calcs.get("expected_hco3_acute"))
    done_chronic = _estimate(w.calcs.get("expected_hco3_chronic"))
    if primary == "respiratory_acidosis":
        acute = done_acute or expected_hco3_acute_respiratory_acidosis(
            g.pco2, s.resp_acidosis_acute_slope.value, tol, n_p, n_h
        )
        chronic = done_chronic or expected_hco3_chronic_respiratory_acidosis(
            g.pco2, s.resp_acidosis_chronic_slope.value, tol, n_p, n_h
        )
        sources = (s.resp_acidosis_acute_slope.source, s.resp_acidosis_chronic_slope.source)
    else:
        acute = done_acute or expected_hco3_acute_respiratory_alkalosis(
            g.pco2, s.resp_alkalosis_acute_slope.value, tol, n_p, n_h
        )
        chronic = done_chronic or expected_hco3_chronic_respiratory_alkalosis(
            g.pco2, s.resp_alkalosis_chronic_slope.value, tol, n_p, n_h
        )
        sources = (s.resp_alkalosis_acute_slope.source, s.resp_alkalosis_chronic_slope.source)
    word = WORDS[primary]
    ranges = tuple(
        ExpectedRange(
            quantity="hco3",
            value=round(e.value, 2),
            low=round(e.low, 2),
            high=round(e.high, 2),
            unit="mmol/L",
            rule=f"{kind} {word} rule",
            source=src,
        )
        for kind, e, src in (("acute", acute, sources[0]), ("chronic", chronic, sources[1]))
    )
    in_acute = acute.low - EPS <= g.hco3 <= acute.high + EPS
    in_chronic = chronic.low - EPS <= g.hco3 <= chronic.high + EPS
    lowest = min(acute.low, chronic.low)
    highest = max(acute.high, chronic.high)
    both = ExpectedRange(
        quantity="hco3",
        value=round((acute.value + chronic.value) / 2, 2),
        low=round(lowest, 2),
        high=round(highest, 2),
        unit="mmol/L",
        rule=f"acute to chronic {word} rules",
        source=f"{sources[0]}; {sources[1]}",
    )
    if w.venous:
        # The rules take an arterial PaCO2; a venous PCO2 is not converted (Kelly, Emerg Med J 2016).
        w.findings.append(
            f"Compensation and chronicity are not assessable on a venous sample: the rules for a {word} take "
            f"an arterial PaCO2, and the PvCO2 {mm(g.pco2)} is not converted (Bloom 2014; Kelly 2016)."
        )
        return "uncertain", both, ranges, "indeterminate"
    head = (
        f"Expected bicarbonate for a {word} at this PaCO2: acute {span(acute.low, acute.high, 'mmol/L')}, "
        f"chronic {span(chronic.low, chronic.high, 'mmol/L')}; measured {mmol(g.hco3)}"
    )
    chronicity: Chronicity
    if in_acute and in_chronic:
        chronicity, expected, verdict = "indeterminate", both, "the acute and chronic ranges overlap here"
    elif in_acute:
        chronicity, expected, verdict = "acute", ranges[0], "fits an acute process"
    elif in_chronic:
        chronicity, expected, verdict = "chronic", ranges[1], "fits a chronic process"
    elif lowest < g.hco3 < highest:
        chronicity, expected = "between", both
        verdict = "between the acute and chronic ranges (evolving over hours to days, or acute on chronic)"
    else:
        added: Disorder = "metabolic_alkalosis" if g.hco3 > highest else "metabolic_acidosis"
        side = "above" if added == "metabolic_alkalosis" else "below"
        w.findings.append(
            f"{head}, {side} both ranges: an added {WORDS[added]}; chronicity cannot be read "
            "from the bicarbonate."
        )
        w.add(added, f"bicarbonate {mmol(g.hco3)} is {side} the compensation expected for the {word}")
        return "inappropriate", both, ranges, "indeterminate"
    w.findings.append(f"{head}: {verdict}; compensation is appropriate.")
    return "appropriate", expected, ranges, chronicity


@dataclass
class GapResult:
    value: float | None = None
    corrected: float | None = None
    status: GapStatus | None = None
    bicarbonate: str | None = None
    delta_gap: float | None = None
    delta_ratio: float | None = None
    interpretation: str | None = None
    meaning: DeltaRatioMeaning | None = None
    interpretable: bool = True
    bicarbonate_fall: float | None = None
    allows_compensation: bool = False
    normal_gap_acidosis: bool = False
    within_alkalemia_rise: bool = False
    below_range: GapBelowRange | None = None  # below the reference range: within the gap's variation or beyond


# long: the gap, its albumin correction, the delta ratio and its interpretation read as one sequence
def read_anion_gap(case: Case, ph_status: PhStatus | None, w: ReadingDraft) -> GapResult:
    s, chem, out = w.s, case.chem, GapResult()
    source = gap_bicarbonate(case)
    if not (usable(chem.na) and usable(chem.cl)) or source is None:
        w.missing.append("Anion gap: needs sodium, chloride and a bicarbonate (gas or panel total CO2).")
        return out
    assert chem.na is not None and chem.cl is not None
    hco3, label = source
    out.bicarbonate = label
    done = w.calcs.get("anion_gap")
    out.value = done.value if done is not None else anion_gap(chem.na, chem.cl, hco3)
    used = out.value
    low, high = s.anion_gap_low.value, s.anion_gap_high.value
    text = f"Anion gap {mmol(out.value)} (using the {label})"
    if usable(chem.albumin):
        assert chem.albumin is not None
        done_corrected = w.calcs.get("anion_gap_corrected")
        out.corrected = (
            done_corrected.value
            if done_corrected is not None
            else corrected_anion_gap(out.value, chem.albumin, s.normal_albumin.value, s.albumin_gap_factor.value)
        )
        used = out.corrected
        text += (
            f", {mmol(out.corrected)} corrected for albumin {format_value(chem.albumin, 'g/dL')} "
            f"(Figge 1998, normal albumin {format_value(s.normal_albumin.value, 'g/dL')})"
        )
    else:
        w.missing.append(
            "Albumin: not given, so the anion gap is not corrected; a low albumin can hide a "
            "high-gap acidosis."
        )
    out.status = "high" if used > high + EPS else "normal"
    text += f"; reference {span(low, high, 'mmol/L')}: {out.status}."
    if used < low - EPS:
        text = text[:-1] + " (below range: consider a low albumin or a laboratory error)."
        out.below_range = "beyond_variation" if used < low - s.anion_gap_low_margin.value - EPS else "within_variation"
    w.findings.append(text)
    if out.status != "high":
        return out
    rise = s.alkalemia_gap_rise.value
    # a measured lactate or ketone above normal keeps the acidosis established, whatever the pH
    limits = ((chem.lactate, s.lactate_normal_below.value), (chem.bhb, s.bhb_normal_below.value))
    measured_acid = any(value is not None and usable(value) and value >= limit - EPS for value, limit in limits)
    if ph_status == "alkalemia" and used <= high + rise + EPS and not measured_acid:
        # Madias, Ayus & Adrogue, NEJM 1979 (from memory): alkalemia itself raises the gap a few mmol/L.
        out.within_alkalemia_rise = True
        w.findings.append(
            f"Alkalemia itself raises the anion gap by up to about {mmol(rise)}, so a rise no larger than "
            "this is a possible, not an established, added acidosis, and no delta ratio is read from it; "
            "a lactate would help."
        )
        w.add("metabolic_acidosis", f"anion gap {mmol(used)} is above {mmol(high)}, within alkalemia's own rise",
              "possible")
        return out
    if w.gas_panel_disagree:
        # Kraut & Madias, CJASN 2007;2:162: a gap is only as good as its bicarbonate; with the gas and
        # the panel apart, the gap alone does not carry a diagnosis.
        w.findings.append(
            "The gas and the panel disagree about the bicarbonate, so a metabolic acidosis resting on "
            "this gap alone is possible, not established, until they are repeated together."
        )
        w.add("metabolic_acidosis", f"anion gap {mmol(used)} is above {mmol(high)}", "possible")
    else:
        w.add("metabolic_acidosis", f"anion gap {mmol(used)} is above {mmol(high)}")
    n_gap, n_hco3 = s.anion_gap_normal.value, s.hco3_normal.value
    done_delta = w.calcs.get("delta_gap")
    out.delta_gap = done_delta.value if done_delta is not None else delta_gap(used, n_gap)
    lo, pure, hi = s.delta_ratio_low.value, s.delta_ratio_pure.value, s.delta_ratio_high.value
    resp_acidosis = w.has("respiratory_acidosis")
    out.allows_compensation = resp_acidosis
    if hco3 >= n_hco3:
        out.meaning = "metabolic_alkalosis_too"
        out.interpretation = (
            "bicarbonate has not fallen despite the high gap: a concurrent metabolic "
            "alkalosis" + (" or the compensation of the respiratory acidosis" if resp_acidosis else "")
        )
        w.findings.append(
            f"Bicarbonate {mmol(hco3)} has not fallen below {mmol(n_hco3)} although the gap "
            f"is high: {out.interpretation} (Rastegar 2007)."
        )
        _add_gap_alkalosis(w, "a high anion gap without a fall in bicarbonate")
        return out
    done_ratio = w.calcs.get("delta_ratio")
    out.delta_ratio = done_ratio.value if done_ratio is not None else delta_ratio(used, hco3, n_gap, n_hco3)
    r = out.delta_ratio
    fall = n_hco3 - hco3
    out.bicarbonate_fall = fall
    # Over a fall of a mmol/L or two the ratio swings widely with rounding: the number is not read,
    # though a gap rise far beyond the fall still counts (as when the bicarbonate has not fallen).
    out.interpretable = fall >= s.delta_ratio_min_fall.value - EPS
    if r < lo:
        out.meaning = "normal_gap_acidosis_too"
        out.interpretation = "a normal-gap acidosis accompanies the high-gap acidosis"
        out.normal_gap_acidosis = True
    elif r < pure:
        out.meaning = "mixed_gap_possible"
        out.interpretation = "a mixed high-gap and normal-gap acidosis is possible"
    elif r <= hi:
        out.meaning = "high_gap_alone"
        out.interpretation = "a high-gap acidosis alone"
    else:
        out.meaning = "metabolic_alkalosis_too"
        out.interpretation = "a concurrent metabolic alkalosis" + (
            " or the compensation of a respiratory acidosis" if resp_acidosis else ""
        )
        _add_gap_alkalosis(w, f"delta ratio {format_number(r, 1)}, above {format_value(hi)}")
    w.findings.append(
        f"Delta ratio {format_number(r, 1)} ((gap - {format_value(n_gap)}) / ({format_value(n_hco3)} - "
        f"bicarbonate)): {out.interpretation} (Rastegar 2007)."
    )
    if not out.interpretable:
        w.findings.append(
            f"The bicarbonate has fallen by only {mmol(fall)} (less than {mmol(s.delta_ratio_min_fall.value)}), "
            "so the delta ratio itself is not interpretable."
        )
    return out


def _add_gap_alkalosis(w: ReadingDraft, why: str) -> None:
    # Rastegar 2007: a high ratio also follows a compensated respiratory acidosis. When that acidosis is
    # the primary disorder, its compensation is the likelier source of the bicarbonate, so the alkalosis
    # is only possible; when it is merely a failed compensation of the metabolic acidosis, it is listed.
    # With the gas and panel apart, nothing rests on the gap alone (Kraut & Madias, CJASN 2007).
    resp_primary = bool(w.bases) and w.bases[0].disorder == "respiratory_acidosis"
    w.add("metabolic_alkalosis", why, "possible" if resp_primary or w.gas_panel_disagree else "established")
