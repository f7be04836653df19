"""The assessment paragraph: the acid-base reading and the alkalosis work-up as clinical prose.

`draft_paragraph` reads only the `Assessment`. It returns plain text, not Markdown: the note
templates escape it with the `md` filter, and the JSON output carries it as written. Every
sentence is built for the combination at hand (one cause or several, none, missing gas or
urine, a venous sample, values that do not agree), so no clause is left dangling.
"""

from __future__ import annotations

import re
from collections.abc import Sequence

from notegen._format import join_words, ph_text, sentence_case, trimmed_number
from notegen.acidbase.calculations import Calculation
from notegen.acidbase.model import AcidBaseReading, Disorder, ExpectedRange
from notegen.assess.model import Assessment
from notegen.note.acidosis_paragraph import acidosis_sentences, acidosis_test_labels
from notegen.workup.model import CauseEntry, Evidence, FactorEntry

__all__ = ["draft_paragraph"]

WORDS: dict[str, str] = {
    "metabolic_alkalosis": "metabolic alkalosis",
    "metabolic_acidosis": "metabolic acidosis",
    "respiratory_acidosis": "respiratory acidosis",
    "respiratory_alkalosis": "respiratory alkalosis",
}
_STRENGTH_ORDER = {"strong": 0, "moderate": 1, "weak": 2}
_COUNT_WORDS = {2: "Two", 3: "Three", 4: "Four", 5: "Five", 6: "Six"}
# Eponyms keep their capital when a finding or label moves into the middle of a sentence.
_KEEP_CAPITAL = frozenset({"Addison", "Bartter", "Conn", "Cushing", "Gitelman", "Henderson", "Liddle", "Winter"})
_FIRST_WORD = re.compile(r"[A-Za-z]+")
_HEDGE = re.compile(r"^(?:probable|possible|likely) ")
# Two-letter words that are English, not element symbols such as Na, Mg or Cl.
_SHORT_WORDS = frozenset({"A", "An", "As", "At", "By", "If", "In", "Is", "It", "No", "Of", "On", "Or", "To", "Up"})
FINDINGS_PER_CAUSE = 2
AGAINST_CAUSES = 2
POSSIBLE_CAUSES_NAMED = 3
# Facts the chloride sentence has already stated (names of the alkalosis pack's facts).
CHLORIDE_FACTS = frozenset({"chloride_class", "urine_cl"})


def draft_paragraph(assessment: Assessment) -> str:
    """The assessment paragraph, as plain text in one paragraph."""
    reading = assessment.acid_base
    said: set[str] = set()  # disorders already named, so none is announced twice
    sentences: list[str] = []
    sentences += _consistency(reading)
    primary, gap_said = _primary(reading, said, assessment.calculations.get("expected_pco2"))
    sentences += primary
    sentences += _anion_gap(reading, said, gap_said)
    sentences += _other_disorders(reading, said)
    sentences += _alkalosis(assessment)
    sentences += acidosis_sentences(assessment)  # the acidosis work-up, after the alkalosis one
    sentences += _next_tests(assessment)
    return _with_reported_kpa(" ".join(sentence for sentence in sentences if sentence), assessment)


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
    shown = f"{trimmed_number(reported[-1].reported_value, 2)} kPa ({_mmhg(reading.pco2)})"
    for name in ("PaCO2", "PvCO2", "PCO2"):
        text = text.replace(f"({name} {_mmhg(reading.pco2)},", f"({name} {shown},", 1)
        text = text.replace(f", {name} {_mmhg(reading.pco2)},", f", {name} {shown},", 1)
    return text


# Numbers ---------------------------------------------------------------------------------------


def _mmhg(value: float) -> str:
    return f"{trimmed_number(value)} mmHg"


def _mmol(value: float) -> str:
    return f"{trimmed_number(value)} mmol/L"


def _span(low: float, high: float, unit: str) -> str:
    return f"{trimmed_number(low)}\u2013{trimmed_number(high)} {unit}"


def _range(expected: ExpectedRange) -> str:
    return _span(expected.low, expected.high, expected.unit)


def _by_rule(rule: str) -> str:
    return rule if rule.startswith("Winter") else f"the {rule}"


# Words -----------------------------------------------------------------------------------------


def _inline(text: str) -> str:
    """Text placed mid-sentence: an ordinary capitalised first word loses its capital."""
    text = text.strip()
    match = _FIRST_WORD.match(text)
    if match and match.start() == 0:
        word = match.group()
        ordinary = (len(word) >= 3 and word[1:].islower()) or word in _SHORT_WORDS
        if ordinary and word[0].isupper() and word not in _KEEP_CAPITAL:
            return text[0].lower() + text[1:]
    return text


def _clause(text: str) -> str:
    """A sentence turned into a clause for a parenthesis or a list."""
    return _inline(text).rstrip().rstrip(".").rstrip()


def _sentence(text: str) -> str:
    text = text.strip()
    if not text:
        return ""
    text = sentence_case(text)
    return text if text[-1] in ".!?" else text + "."


def _article(word: str) -> str:
    return "an" if word[:1].lower() in "aeiou" else "a"


# The gas ---------------------------------------------------------------------------------------


def _pco2_name(reading: AcidBaseReading) -> str:
    return "PvCO2" if reading.sample == "venous" else "PaCO2"


def _gas_values(reading: AcidBaseReading) -> str:
    parts: list[str] = []
    if reading.ph is not None:
        # Inside "The venous gas (...)" the pH is already named venous; the PCO2 is named PvCO2.
        parts.append(("calculated pH " if reading.ph_source == "calculated" else "pH ") + ph_text(reading.ph))
    if reading.pco2 is not None:
        parts.append(f"{_pco2_name(reading)} {_mmhg(reading.pco2)}")
    if reading.hco3 is not None:
        name = {"calculated": "calculated HCO3", "panel": "panel total CO2"}.get(reading.hco3_source or "", "HCO3")
        parts.append(f"{name} {_mmol(reading.hco3)}")
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
        f"{reading.calculated_ph:.2f}; the values should be rechecked, or the gas repeated, before this "
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
        _, _, tail = reading.primary_reason.partition("; ")
        return [_sentence(f"{text}; {tail}" if tail else text)], False
    gas = _gas(reading)
    if primary == "none":
        return [f"{gas} lies within the reference ranges, with no acid-base disorder on these values."], False
    if primary == "undetermined":
        if len(reading.disorders) >= 2 and "mixed" in reading.primary_reason:
            # Two processes pulling the pH back to normal: name both rather than a primary.
            said.update(reading.disorders)
            words = join_words([WORDS[d] for d in reading.disorders])
            return [
                f"{gas} shows a mixed {words} that offset each other, leaving the pH within range; which came "
                "first cannot be told from the gas."
            ], False
        return [f"{gas} does not show a clear primary disorder ({_clause(reading.primary_reason)})."], False
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
            reference = _span(*reading.anion_gap_reference, "mmol/L")
            sentences = [
                f"{gas} looks close to normal, but the {adjective}anion gap of {_mmol(used)} (reference "
                f"{reference}) shows a high anion gap {word}."
            ]
            sentences += _winters_fit(reading, expected_pco2)
            return sentences, True
        return [f"{gas} shows a primary {word}."], False
    assert reading.pco2 is not None
    rule, span = _by_rule(expected.rule), _range(expected)
    pco2 = f"{_pco2_name(reading)} of {_mmhg(reading.pco2)}"
    side = "above" if reading.pco2 > expected.high else "below"
    added = _added(reading, ("respiratory_acidosis", "respiratory_alkalosis"))
    if reading.compensation == "appropriate":
        return [
            f"{gas} shows a primary {word} with appropriate respiratory compensation (expected PaCO2 {span} by {rule})."
        ], False
    if reading.compensation == "inappropriate" and added is not None and added not in reading.disorders:
        said.add(added)  # only possible: the gas is internally inconsistent
        return [
            f"{gas} shows a primary {word}; the {pco2} is {side} the {span} that {rule} predicts, which "
            f"would add a {WORDS[added]} if a repeat gas confirms these values."
        ], False
    if reading.compensation == "inappropriate" and added is not None:
        said.add(added)
        return [
            f"{gas} shows a primary {word} with an added {WORDS[added]}: the {pco2} is {side} the {span} "
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
            f"{gas} shows a primary {word}; the {pco2} is {side} the {span} that {rule} predicts, but {why}, "
            f"so an added {WORDS[added]} is possible, not established."
        ], False
    if added is not None and reading.pco2 < expected.low:
        said.add(added)
        # Below a range that runs past what ventilation usually delivers (about 55 mmHg, Galla 2000).
        return [
            f"{gas} shows a primary {word}; the {pco2} is below the {span} that {rule} predicts, but "
            f"near the usual ceiling of respiratory compensation, so an added {WORDS[added]} is possible, "
            "not established."
        ], False
    if added is not None:
        said.add(added)
        return [
            f"{gas} shows a primary {word}; the {pco2} lies within the {span} that {rule} predicts, "
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
    span = _span(expected_pco2.low, expected_pco2.high, "mmHg")
    return [f"The PaCO2 of {_mmhg(reading.pco2)} fits the {span} that Winter's formula predicts."]


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
    both = f"the acute ({_range(acute)}) and chronic ({_range(chronic)}) ranges"
    hco3 = _mmol(reading.hco3)
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
        "chronic": f"with appropriate renal compensation for a chronic process (expected HCO3 {_range(chronic)} "
        f"by {_by_rule(chronic.rule)})",
        "acute": f"whose bicarbonate fits an acute process (expected HCO3 {_range(acute)} by {_by_rule(acute.rule)})",
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


def _anion_gap(reading: AcidBaseReading, said: set[str], gap_said: bool) -> list[str]:
    metabolic = {"metabolic_alkalosis", "metabolic_acidosis"}
    relevant = bool(metabolic & {*reading.disorders, *reading.possible_disorders, reading.primary})
    used, adjective = _gap_used(reading)
    sentences: list[str] = []
    if used is None or reading.anion_gap_status is None:
        if relevant and reading.hco3 is not None:
            sentences.append("The anion gap cannot be calculated without exact sodium and chloride values.")
        elif relevant:
            sentences.append(
                "The anion gap cannot be calculated without exact sodium, chloride and bicarbonate values."
            )
        return sentences
    reference = _span(*reading.anion_gap_reference, "mmol/L")
    if reading.anion_gap_status == "high" and not gap_said:
        text = f"The {adjective}anion gap is high at {_mmol(used)} (reference {reference})"
        if reading.primary == "metabolic_acidosis":
            text += ", so this is a high anion gap acidosis"
        elif "metabolic_acidosis" not in reading.disorders and reading.gas_panel_agreement == "disagree":
            said.add("metabolic_acidosis")
            text += (
                ", which would add a high anion gap metabolic acidosis, but the gas and the panel disagree "
                "about the bicarbonate, so both are worth repeating together before relying on it"
            )
        else:
            said.add("metabolic_acidosis")
            text += ", which adds a high anion gap metabolic acidosis"
            if reading.ph_status == "alkalemia" and used <= reading.anion_gap_reference[1] + 4:
                text += ", though alkalemia itself raises the gap by a few mmol/L"
        sentences.append(text + ".")
    elif reading.anion_gap_status == "normal" and used < reading.anion_gap_reference[0]:
        sentences.append(
            f"The {adjective}anion gap is below the reference range at {_mmol(used)} ({reference}); "
            "unmeasured cations (a high calcium or magnesium, lithium, a paraprotein) or a laboratory error "
            "would explain it."
        )
    elif reading.anion_gap_status == "normal":
        if reading.primary == "metabolic_acidosis":
            sentences.append(
                f"The {adjective}anion gap is normal at {_mmol(used)}, so this is a normal anion gap "
                "(hyperchloremic) acidosis."
            )
        elif relevant:
            sentences.append(f"The {adjective}anion gap is normal at {_mmol(used)}.")
    sentences += _delta_ratio(reading, said)
    return sentences


def _delta_ratio(reading: AcidBaseReading, said: set[str]) -> list[str]:
    meaning = reading.delta_ratio_interpretation
    if meaning is None:
        return []
    ratio = reading.delta_ratio
    shown = f"The delta ratio of {ratio:.1f}" if ratio is not None else ""
    verdict = reading.delta_ratio_verdict
    if verdict in ("metabolic_alkalosis_too", "metabolic_alkalosis_or_respiratory_compensation"):
        said.add("metabolic_alkalosis")
        other = (
            " or the compensation of a respiratory acidosis"
            if verdict == "metabolic_alkalosis_or_respiratory_compensation"
            else ""
        )
        if ratio is None:
            return [
                "The bicarbonate has not fallen although the gap is high, which points to a concurrent "
                f"metabolic alkalosis{other}."
            ]
        fall = reading.delta_gap / ratio if reading.delta_gap is not None and ratio > 0 else None
        if fall is not None and fall < 2:
            # A ratio over a fall of 1-2 mmol/L is unstable (Rastegar 2007): give the two changes instead.
            return [
                f"The gap has risen by {_mmol(reading.delta_gap or 0)} while the bicarbonate has barely fallen, "
                f"which points to a concurrent metabolic alkalosis{other}."
            ]
        return [
            f"{shown} shows that the bicarbonate has fallen far less than the gap has risen, which points to "
            f"a concurrent metabolic alkalosis{other}."
        ]
    if ratio is None:
        return [_sentence(meaning)]
    if verdict == "normal_gap_acidosis_too":
        return [f"{shown} points to a normal anion gap acidosis alongside it."]
    if verdict == "mixed_possible":
        return [f"{shown} leaves room for a normal anion gap component as well."]
    if verdict == "high_gap_alone":
        return [f"{shown} fits a high anion gap acidosis alone."]
    return [f"{shown} suggests {_clause(meaning)}."]


def _other_disorders(reading: AcidBaseReading, said: set[str]) -> list[str]:
    sentences: list[str] = []
    for basis in reading.disorder_basis:
        if basis.disorder in said or basis.disorder == reading.primary:
            continue
        said.add(basis.disorder)
        word = WORDS[basis.disorder]
        if basis.certainty == "established":
            sentences.append(f"There is also {_article(word)} {word} ({_clause(basis.basis)}).")
        else:
            sentences.append(f"{sentence_case(_article(word))} {word} may also be present ({_clause(basis.basis)}).")
    return sentences


# The alkalosis work-up -------------------------------------------------------------------------


def _alkalosis(assessment: Assessment) -> list[str]:
    reading = assessment.acid_base
    if assessment.chloride_class is None:
        if "metabolic_alkalosis" in reading.disorders:
            return ["The causes of the alkalosis have not been weighed in this draft."]
        if "metabolic_alkalosis" in reading.possible_disorders:
            return [
                "Whether a metabolic alkalosis is also present is uncertain on these values, so no "
                "alkalosis differential was drawn."
            ]
        if reading.ph is None or reading.pco2 is None:
            return [
                "Without a gas, a metabolic alkalosis can be neither confirmed nor excluded, so no alkalosis "
                "differential was drawn."
            ]
        if reading.primary == "respiratory_acidosis" and reading.chronicity in ("chronic", "between"):
            return [
                "The raised bicarbonate is compensation rather than a metabolic alkalosis, so no alkalosis "
                "differential applies."
            ]
        if reading.primary == "undetermined":
            return ["No metabolic alkalosis is established on these values, so no alkalosis differential was drawn."]
        # Nothing to say: the reading has named the disorder (or found none), and the note's
        # differential section says why no alkalosis work-up follows; the pasted paragraph stays about the patient.
        return []
    return [
        *_chloride(assessment),
        *_causes(assessment.differential, assessment.maintenance),
        *_against(assessment.differential),
        *_maintenance(assessment.maintenance),
    ]


def _urine_chloride(assessment: Assessment) -> str | None:
    value = assessment.case.urine.cl
    if value is None:
        return None
    qualifier = None
    for measurement in assessment.case.measurements:
        if measurement.field == "urine.cl" and measurement.value == value:
            qualifier = measurement.qualifier
    if qualifier == "<":
        return f"A urine chloride below {_mmol(value)}"
    if qualifier == ">":
        return f"A urine chloride above {_mmol(value)}"
    return f"The urine chloride of {_mmol(value)}"


def _chloride(assessment: Assessment) -> list[str]:
    """The chloride class: the rule pack's own sentences when it gives them, else ours."""
    notes = [_sentence(note) for note in assessment.chloride_notes if note.strip()]
    if notes:
        return notes
    chloride = _urine_chloride(assessment)
    cls = assessment.chloride_class
    if chloride is None:
        if cls in ("responsive", "resistant"):
            return [f"The alkalosis reads as chloride-{cls}."]
        return ["Without a urine chloride, the alkalosis cannot yet be classed as chloride-responsive or resistant."]
    if cls in ("responsive", "resistant"):
        return [f"{chloride} makes the alkalosis chloride-{cls}."]
    if cls == "indeterminate":
        return [f"{chloride} falls between the chloride-responsive and chloride-resistant ranges."]
    return [f"{chloride} cannot be used to class the alkalosis."]


def _strongest(evidence: Sequence[Evidence], limit: int) -> list[Evidence]:
    """The findings that carry a cause: strongest first, weak ones only when nothing firmer is there."""
    ranked = sorted(evidence, key=lambda item: _STRENGTH_ORDER.get(item.strength, 3))
    firm = [item for item in ranked if item.strength != "weak"]
    return (firm or ranked)[:limit]


def _new_to_the_reader(evidence: Sequence[Evidence]) -> list[Evidence]:
    """Findings the paragraph has not already given: the chloride sentence states the class and the
    urine chloride, so a finding resting on those alone is dropped when the cause has others."""
    fresh = [item for item in evidence if not (item.facts and set(item.facts) <= CHLORIDE_FACTS)]
    return fresh or list(evidence)


def _findings(evidence: Sequence[Evidence], limit: int = FINDINGS_PER_CAUSE) -> str:
    """The strongest findings as clauses joined by semicolons (they may hold commas)."""
    chosen = _strongest(_new_to_the_reader(evidence), limit)
    return "; ".join(_clause(item.text) for item in chosen if item.text.strip())


def _with_findings(label: str, evidence: Sequence[Evidence]) -> str:
    """A cause and, in parentheses, the one or two findings that carry it."""
    findings = _findings(evidence)
    return f"{label} ({findings})" if findings else label


def _list(items: Sequence[str], conj: str = "and") -> str:
    """An English list. Items holding their own commas or semicolons are kept apart by semicolons;
    items holding "and" or "or" get a serial comma, so "chloride and volume depletion" stays whole."""
    if len(items) > 2 and any(mark in item for item in items for mark in (",", ";")):
        return f"{'; '.join(items[:-1])}; {conj} {items[-1]}"
    if len(items) > 2 and any(f" {word} " in item for item in items for word in ("and", "or")):
        return f"{', '.join(items[:-1])}, {conj} {items[-1]}"
    if len(items) == 2 and not items[0].endswith(")") and any(f" {word} " in items[0] for word in ("and", "or")):
        return f"{items[0]}, {conj} {items[1]}"
    return join_words(items, conj)


def _causes(differential: Sequence[CauseEntry], maintenance: Sequence[FactorEntry] = ()) -> list[str]:
    likely = [cause for cause in differential if cause.tier == "likely"]
    # A possible cause that is also a present maintenance factor (reduced GFR) is said once, there.
    maintaining = {factor.factor for factor in maintenance if factor.status == "present"}
    possible = [cause for cause in differential if cause.tier == "possible"]
    if likely:
        possible = [cause for cause in possible if cause.cause not in maintaining]
    sentences: list[str] = []
    if len(likely) == 1:
        sentences.append(f"The likely cause is {_with_findings(_inline(likely[0].label), likely[0].supporting)}.")
    elif likely:
        count = _COUNT_WORDS.get(len(likely), str(len(likely)))
        items = [_with_findings(_inline(cause.label), cause.supporting) for cause in likely]
        sentences.append(f"{count} causes are likely, probably acting together: {_list(items)}.")
    named = possible[:POSSIBLE_CAUSES_NAMED]
    rest = len(possible) - len(named)
    others = [f"{rest} other{'s' if rest > 1 else ''}"] if rest else []
    labels = [_inline(cause.label) for cause in named] + others
    if likely and possible:
        verb = "is" if len(possible) == 1 else "are"
        sentences.append(f"{sentence_case(_list(labels))} {verb} also possible.")
    elif len(possible) == 1:
        only = possible[0]
        findings = _findings(only.supporting)
        sentences.append(
            f"No cause is clearly supported, though {_inline(only.label)} remains possible"
            + (f" ({findings})." if findings else ".")
        )
    elif possible:
        sentences.append(f"No cause is clearly supported; {_list(labels)} remain possible.")
    elif not likely:
        sentences.append("The findings do not yet point to any of the usual causes.")
    return sentences


def _against(differential: Sequence[CauseEntry]) -> list[str]:
    """The alternatives argued against most firmly, in one sentence.

    Unlikely causes with a firm finding against them; those that also had something for them come
    first (they were real contenders), then the firmest finding, then the order of the differential.
    Two causes refuted by the same finding share it.
    """
    candidates = [
        cause
        for cause in differential
        if cause.tier == "unlikely" and any(e.strength != "weak" for e in cause.opposing)
    ]
    ranked = sorted(
        candidates,
        key=lambda cause: (not cause.supporting, min(_STRENGTH_ORDER.get(e.strength, 3) for e in cause.opposing)),
    )
    chosen = ranked[:AGAINST_CAUSES]
    if not chosen:
        return []
    reasons = [_clause(_strongest(cause.opposing, 1)[0].text) for cause in chosen]
    labels = [_inline(cause.label) for cause in chosen]
    if len(chosen) == 1:
        return [f"{sentence_case(labels[0])} is unlikely ({reasons[0]})."]
    if reasons[0] == reasons[1]:
        return [f"{sentence_case(labels[0])} and {labels[1]} are unlikely ({reasons[0]})."]
    return [f"{sentence_case(labels[0])} is unlikely ({reasons[0]}), as is {labels[1]} ({reasons[1]})."]


def _maintenance(factors: Sequence[FactorEntry]) -> list[str]:
    present = [_inline(factor.label) for factor in factors if factor.status == "present"]
    # "whether probable X contributes" hedges twice; the open question is X itself.
    open_ = [_HEDGE.sub("", _inline(factor.label)) for factor in factors if factor.status == "undetermined"]
    if present and open_:
        return [
            f"The alkalosis is maintained by {_list(present)}; whether {_list(open_, 'or')} also contributes "
            "cannot be judged from these values."
        ]
    if present:
        return [f"The alkalosis is maintained by {_list(present)}."]
    if open_:
        return [f"Whether {_list(open_, 'or')} maintains the alkalosis cannot be judged from these values."]
    return []


def _next_tests(assessment: Assessment) -> list[str]:
    labels = [_inline(test.label) for test in assessment.next_tests] + acidosis_test_labels(assessment)
    if not labels:
        return []
    noun = "test" if len(labels) == 1 else "tests"
    return [f"Next {noun} to consider: {_list(labels)}."]
