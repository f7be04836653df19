"""The assessment paragraph: the acid-base reading and the alkalosis work-up as clinical prose.

`draft_paragraph` reads only the `Assessment`. It returns plain text, not Markdown: the note
templates escape it with the `md` filter, and the JSON output carries it as written. Every
sentence is built for the combination at hand (one cause or several, none, missing gas or
urine, a venous sample, values that do not agree), so no clause is left dangling.
"""

from __future__ import annotations

from collections.abc import Sequence

from notegen._format import format_number, join_words, ph_text, sentence_case, trimmed_number
from notegen.acidbase.calculations import Calculation
from notegen.acidbase.model import AcidBaseReading, Disorder, ExpectedRange
from notegen.assess.model import Assessment
from notegen.note.acidosis_paragraph import acidosis_sentences
from notegen.note.prose import (
    WORDS,
    article,
    by_rule,
    clause,
    expected_range,
    mmhg,
    mmol,
    sentence,
    span,
)
from notegen.note.workup_prose import alkalosis_sentences, next_test_sentences

__all__ = ["draft_paragraph"]

# Without a gas, what a total CO2 outside its range leaves open.
_NO_GAS_BICARBONATE = {
    "no_gas_high_bicarbonate": "; the high total CO2 fits a metabolic alkalosis or the compensation of a "
    "respiratory acidosis, which only a gas can tell apart",
    "no_gas_low_bicarbonate": "; the low total CO2 fits a metabolic acidosis or the compensation of a "
    "respiratory alkalosis, which only a gas can tell apart",
}


def draft_paragraph(assessment: Assessment, *, name_next_tests: bool = True) -> str:
    """The assessment paragraph, as plain text in one paragraph.

    `name_next_tests=False` leaves out the closing "Next tests to consider" sentence, for a note
    that lists the tests in a section of their own.
    """
    reading = assessment.acid_base
    said: set[str] = set()  # disorders already named, so none is announced twice
    sentences: list[str] = []
    sentences += _consistency(reading)
    primary, gap_said = _primary(reading, said, assessment.calculations.get("expected_pco2"))
    sentences += primary
    # a gap input reported only as a bound ("<10") leaves the gap uncomputed, and the sentence says why
    bounded = any(
        m.qualifier is not None and m.field in ("chem.na", "chem.cl", "chem.tco2", "gas.hco3")
        for m in assessment.case.measurements
    )
    sentences += _anion_gap(reading, said, gap_said, bounded)
    sentences += _other_disorders(reading, said)
    sentences += alkalosis_sentences(assessment)
    sentences += acidosis_sentences(assessment)  # the acidosis work-up, after the alkalosis one
    if name_next_tests:
        sentences += next_test_sentences(assessment)
    return _with_reported_kpa(" ".join(text for text in sentences if text), assessment)


def _with_reported_kpa(text: str, assessment: Assessment) -> str:
    """Where the PCO2 was reported in kPa, the gas values give it as reported, then in mmHg."""
    reading = assessment.acid_base
    if reading.pco2 is None:
        return text
    reported = [
        m
        for m in assessment.case.measurements
        if m.field == "gas.pco2" and m.reported_unit == "kPa" and abs(m.value - reading.pco2) < 0.05
    ]
    if not reported:
        return text
    shown = f"{trimmed_number(reported[-1].reported_value, 2)} kPa ({mmhg(reading.pco2)})"
    for name in ("PaCO2", "PvCO2", "PCO2"):
        text = text.replace(f"({name} {mmhg(reading.pco2)},", f"({name} {shown},", 1)
        text = text.replace(f", {name} {mmhg(reading.pco2)},", f", {name} {shown},", 1)
    return text


# The gas ---------------------------------------------------------------------------------------


def _pco2_name(reading: AcidBaseReading) -> str:
    return "PvCO2" if reading.sample == "venous" else "PaCO2"


def _gas_values(reading: AcidBaseReading) -> str:
    parts: list[str] = []
    if reading.ph is not None:
        parts.append(("calculated pH " if reading.ph_source == "calculated" else "pH ") + ph_text(reading.ph))
    if reading.pco2 is not None:
        parts.append(f"{_pco2_name(reading)} {mmhg(reading.pco2)}")
    if reading.hco3 is not None:
        name = {"calculated": "calculated HCO3", "panel": "panel total CO2"}.get(reading.hco3_source or "", "HCO3")
        parts.append(f"{name} {mmol(reading.hco3)}")
    return ", ".join(parts)


def _gas(reading: AcidBaseReading) -> str:
    values = _gas_values(reading)
    if reading.sample == "venous":
        return f"The venous gas ({values})"
    if reading.sample == "unstated":
        return f"The gas ({values}; sample type not stated, so read as arterial)"
    return f"The arterial gas ({values})"


def _consistency(reading: AcidBaseReading) -> list[str]:
    if reading.consistency != "inconsistent" or reading.ph is None or reading.calculated_ph is None:
        return []
    return [
        f"Of note, the reported pH of {ph_text(reading.ph)} does not agree with the PaCO2 and HCO3, which give "
        f"{format_number(reading.calculated_ph, 2)}; the values should be rechecked, or the gas repeated, before this "
        "reading is relied on."
    ]


def _added(reading: AcidBaseReading, candidates: Sequence[Disorder]) -> Disorder | None:
    for disorder in (*reading.disorders, *reading.possible_disorders):
        if disorder in candidates and disorder != reading.primary:
            return disorder
    return None


def _primary(
    reading: AcidBaseReading, said: set[str], expected_pco2: Calculation | None = None
) -> tuple[list[str], bool]:
    """Sentences naming the primary disorder and its compensation; True when the gap was stated."""
    primary = reading.primary
    if reading.ph is None or reading.pco2 is None:
        text = "There is no blood gas with a pH and PaCO2, so the primary disorder cannot be determined"
        return [sentence(text + _NO_GAS_BICARBONATE.get(reading.primary_basis or "", ""))], False
    gas = _gas(reading)
    if primary == "none":
        return [f"{gas} lies within the reference ranges, with no acid-base disorder on these values."], False
    if primary == "undetermined":
        if len(reading.disorders) >= 2 and reading.primary_basis == "offsetting_mixed":
            # Two processes pulling the pH back to normal: name both rather than a primary.
            said.update(reading.disorders)
            words = join_words([WORDS[d] for d in reading.disorders])
            return [
                f"{gas} shows a mixed {words} that offset each other, leaving the pH within range; which came "
                "first cannot be told from the gas."
            ], False
        return [f"{gas} does not show a clear primary disorder ({clause(reading.primary_reason)})."], False
    said.add(primary)
    if primary in ("metabolic_alkalosis", "metabolic_acidosis"):
        return _metabolic_primary(reading, gas, said, expected_pco2)
    return _respiratory_primary(reading, gas, said), False


def _metabolic_primary(
    reading: AcidBaseReading, gas: str, said: set[str], expected_pco2: Calculation | None
) -> tuple[list[str], bool]:
    word = WORDS[reading.primary]
    expected = reading.expected
    if expected is None or reading.compensation == "not_applicable":
        used, adjective = _gap_used(reading)
        if reading.anion_gap_status == "high" and used is not None:
            reference = span(*reading.anion_gap_reference, "mmol/L")
            sentences = [
                f"{gas} looks close to normal, but the {adjective}anion gap of {mmol(used)} (reference "
                f"{reference}) shows a high anion gap {word}."
            ]
            sentences += _winters_fit(reading, expected_pco2)
            return sentences, True
        return [f"{gas} shows a primary {word}."], False
    assert reading.pco2 is not None
    rule, predicted = by_rule(expected.rule), expected_range(expected)
    pco2 = f"{_pco2_name(reading)} of {mmhg(reading.pco2)}"
    side = "above" if reading.pco2 > expected.high else "below"
    added = _added(reading, ("respiratory_acidosis", "respiratory_alkalosis"))
    if reading.compensation == "appropriate":
        return [
            f"{gas} shows a primary {word} with appropriate respiratory compensation (expected PaCO2 "
            f"{predicted} by {rule})."
        ], False
    if reading.compensation == "inappropriate" and added is not None and added not in reading.disorders:
        said.add(added)  # only possible: the gas is internally inconsistent
        return [
            f"{gas} shows a primary {word}; the {pco2} is {side} the {predicted} that {rule} predicts, which "
            f"would add a {WORDS[added]} if a repeat gas confirms these values."
        ], False
    if reading.compensation == "inappropriate" and added is not None:
        said.add(added)
        return [
            f"{gas} shows a primary {word} with an added {WORDS[added]}: the {pco2} is {side} the {predicted} "
            f"that {rule} predicts."
        ], False
    if reading.sample == "venous":
        # Never set against the arterial prediction (Bloom 2014; Kelly 2016): the reading leaves it unjudged.
        return [
            f"{gas} shows a primary {word}.",
            "Respiratory compensation is not assessable on a venous sample, since a venous PCO2 differs from "
            "the arterial value by a few mmHg on average and far more in some patients; an arterial gas "
            "would settle it if that matters.",
        ], False
    if added is not None and reading.compensation_edge in ("near_edge", "other_form"):
        said.add(added)
        why = (
            "only just, where published forms of the rule differ"
            if reading.compensation_edge == "near_edge"
            else "inside the range another published form of the rule gives"
        )
        return [
            f"{gas} shows a primary {word}; the {pco2} is {side} the {predicted} that {rule} predicts, but {why}, "
            f"so an added {WORDS[added]} is possible, not established."
        ], False
    if added is not None and reading.pco2 < expected.low:
        said.add(added)
        # Below a range that runs past what ventilation usually delivers (about 55 mmHg, Galla 2000).
        return [
            f"{gas} shows a primary {word}; the {pco2} is below the {predicted} that {rule} predicts, but "
            f"near the usual ceiling of respiratory compensation, so an added {WORDS[added]} is possible, "
            "not established."
        ], False
    if added is not None:
        said.add(added)
        return [
            f"{gas} shows a primary {word}; the {pco2} lies within the {predicted} that {rule} predicts, "
            f"but respiratory compensation this high is uncommon, so an added {WORDS[added]} is possible."
        ], False
    return [f"{gas} shows a primary {word}; whether compensation fits cannot be judged."], False


def _winters_fit(reading: AcidBaseReading, expected_pco2: Calculation | None) -> list[str]:
    """With a near-normal bicarbonate the reading leaves compensation unjudged; say when Winter's fits."""
    if expected_pco2 is None or expected_pco2.low is None or expected_pco2.high is None or reading.pco2 is None:
        return []
    if "Winter" not in f"{expected_pco2.note} {expected_pco2.source}" or reading.sample == "venous":
        return []
    if not expected_pco2.low <= reading.pco2 <= expected_pco2.high:
        return []
    predicted = span(expected_pco2.low, expected_pco2.high, "mmHg")
    return [f"The PaCO2 of {mmhg(reading.pco2)} fits the {predicted} that Winter's formula predicts."]


def _respiratory_ranges(reading: AcidBaseReading) -> tuple[ExpectedRange | None, ExpectedRange | None]:
    acute = next((e for e in reading.expected_alternatives if e.rule.startswith("acute")), None)
    chronic = next((e for e in reading.expected_alternatives if e.rule.startswith("chronic")), None)
    return acute, chronic


def _respiratory_primary(reading: AcidBaseReading, gas: str, said: set[str]) -> list[str]:
    word = WORDS[reading.primary]
    expected = reading.expected
    acute, chronic = _respiratory_ranges(reading)
    if expected is None or acute is None or chronic is None or reading.hco3 is None:
        return [f"{gas} shows a primary {word}."]
    if reading.sample == "venous":
        return [
            f"{gas} shows a primary {word}; its compensation and chronicity are not assessable on a venous "
            "sample, since the rules take an arterial PaCO2; an arterial gas would settle them if that matters."
        ]
    both = f"the acute ({expected_range(acute)}) and chronic ({expected_range(chronic)}) ranges"
    hco3 = mmol(reading.hco3)
    outside = not (min(acute.low, chronic.low) <= reading.hco3 <= max(acute.high, chronic.high))
    added = _added(reading, ("metabolic_alkalosis", "metabolic_acidosis"))
    if outside and added is not None:
        said.add(added)
        side = "above" if reading.hco3 > max(acute.high, chronic.high) else "below"
        if added not in reading.disorders:  # only possible: the gas is internally inconsistent
            return [
                f"{gas} shows a primary {word}; the HCO3 of {hco3} is {side} {both}, which would add a "
                f"{WORDS[added]} if a repeat gas confirms these values."
            ]
        return [f"{gas} shows a primary {word} with an added {WORDS[added]}: the HCO3 of {hco3} is {side} {both}."]
    fits = {
        "chronic": "with appropriate renal compensation for a chronic process (expected HCO3 "
        f"{expected_range(chronic)} by {by_rule(chronic.rule)})",
        "acute": f"whose bicarbonate fits an acute process (expected HCO3 {expected_range(acute)} "
        f"by {by_rule(acute.rule)})",
        "indeterminate": f"whose bicarbonate fits both {both}, which overlap at this PaCO2, so its duration "
        "cannot be read from the gas",
        "between": f"whose bicarbonate of {hco3} lies between {both}, as in a process some days old or an "
        "acute rise on a chronic one",
    }
    return [f"{gas} shows a primary {word} {fits[reading.chronicity or 'indeterminate']}."]


# The anion gap ---------------------------------------------------------------------------------


def _gap_used(reading: AcidBaseReading) -> tuple[float | None, str]:
    if reading.anion_gap_corrected is not None:
        return reading.anion_gap_corrected, "albumin-corrected "
    return reading.anion_gap, ""


def _anion_gap(
    reading: AcidBaseReading, said: set[str], gap_said: bool, bounded: bool = False
) -> list[str]:
    metabolic = {"metabolic_alkalosis", "metabolic_acidosis"}
    relevant = bool(metabolic & {*reading.disorders, *reading.possible_disorders, reading.primary})
    used, adjective = _gap_used(reading)
    sentences: list[str] = []
    if used is None or reading.anion_gap_status is None:
        if relevant and reading.hco3 is not None:
            exact = "exact " if bounded else ""
            sentences.append(f"The anion gap cannot be calculated without {exact}sodium and chloride values.")
        elif relevant:
            exact = "exact " if bounded else ""
            sentences.append(
                f"The anion gap cannot be calculated without {exact}sodium, chloride and bicarbonate values."
            )
        return sentences
    reference = span(*reading.anion_gap_reference, "mmol/L")
    if reading.anion_gap_status == "high" and not gap_said:
        text = f"The {adjective}anion gap is high at {mmol(used)} (reference {reference})"
        if reading.primary == "metabolic_acidosis":
            text += ", so this is a high anion gap acidosis"
        elif "metabolic_acidosis" not in reading.disorders and reading.gas_panel_agreement == "disagree":
            said.add("metabolic_acidosis")
            text += (
                ", which would add a high anion gap metabolic acidosis, but the gas and the panel disagree "
                "about the bicarbonate, so both are worth repeating together before relying on it"
            )
        elif reading.anion_gap_within_alkalemia_rise:
            said.add("metabolic_acidosis")
            text += (
                ", a rise alkalemia itself can cause, so an added high anion gap acidosis is possible, not "
                "established; a lactate would help"
            )
        else:
            said.add("metabolic_acidosis")
            text += ", which adds a high anion gap metabolic acidosis"
        sentences.append(text + ".")
    elif reading.anion_gap_status == "normal" and reading.anion_gap_below_range == "beyond_variation":
        sentences.append(
            f"The {adjective}anion gap is below the reference range at {mmol(used)} ({reference}); "
            "unmeasured cations (a high calcium or magnesium, lithium, a paraprotein) or a laboratory error "
            "would explain it."
        )
    elif reading.anion_gap_status == "normal" and reading.anion_gap_below_range == "within_variation":
        text = (
            f"The {adjective}anion gap of {mmol(used)} is just below the reference range ({reference}), "
            "within the variation of a calculated gap"
        )
        if reading.primary == "metabolic_acidosis":
            text += ", so this is a normal anion gap (hyperchloremic) acidosis"
        sentences.append(text + ".")
    elif reading.anion_gap_status == "normal":
        if reading.primary == "metabolic_acidosis":
            sentences.append(
                f"The {adjective}anion gap is normal at {mmol(used)}, so this is a normal anion gap "
                "(hyperchloremic) acidosis."
            )
        elif relevant:
            sentences.append(f"The {adjective}anion gap is normal at {mmol(used)}.")
    sentences += _delta_ratio(reading, said)
    return sentences


def _delta_ratio(reading: AcidBaseReading, said: set[str]) -> list[str]:
    meaning = reading.delta_ratio_meaning
    if meaning is None:
        return []
    ratio = reading.delta_ratio
    shown = f"The delta ratio of {format_number(ratio, 1)}" if ratio is not None else ""
    if not reading.delta_ratio_interpretable and reading.bicarbonate_fall is not None and reading.delta_gap is not None:
        # Over a fall of a mmol/L or two the ratio's number means little; the two changes are compared instead.
        fall = mmol(reading.bicarbonate_fall)
        if meaning == "metabolic_alkalosis_too":
            said.add("metabolic_alkalosis")
            other = " or the compensation of a respiratory acidosis" if reading.delta_ratio_allows_compensation else ""
            return [
                f"The bicarbonate has fallen by only {fall} while the gap has risen by {mmol(reading.delta_gap)}: too "
                "small a fall for the delta ratio to be interpreted, but a rise this far beyond the fall "
                f"suggests a concurrent metabolic alkalosis{other}."
            ]
        return [f"The bicarbonate has fallen by only {fall}, too little for the delta ratio to be interpreted."]
    if meaning == "metabolic_alkalosis_too":
        said.add("metabolic_alkalosis")
        other = " or the compensation of a respiratory acidosis" if reading.delta_ratio_allows_compensation else ""
        if ratio is None:
            return [
                "The bicarbonate has not fallen although the gap is high, which points to a concurrent "
                f"metabolic alkalosis{other}."
            ]
        return [
            f"{shown} shows that the bicarbonate has fallen far less than the gap has risen, which points to "
            f"a concurrent metabolic alkalosis{other}."
        ]
    if ratio is None:
        return []
    if meaning == "normal_gap_acidosis_too":
        return [f"{shown} points to a normal anion gap acidosis alongside it."]
    if meaning == "mixed_gap_possible":
        return [f"{shown} leaves room for a normal anion gap component as well."]
    return [f"{shown} fits a high anion gap acidosis alone."]


def _other_disorders(reading: AcidBaseReading, said: set[str]) -> list[str]:
    sentences: list[str] = []
    for basis in reading.disorder_basis:
        if basis.disorder in said or basis.disorder == reading.primary:
            continue
        said.add(basis.disorder)
        word = WORDS[basis.disorder]
        if basis.certainty == "established":
            sentences.append(f"There is also {article(word)} {word} ({clause(basis.basis)}).")
        else:
            sentences.append(f"{sentence_case(article(word))} {word} may also be present ({clause(basis.basis)}).")
    return sentences


