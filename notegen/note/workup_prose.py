"""The alkalosis work-up in the paragraph: the chloride class, the causes, what argues against the
alternatives, what cannot be assessed for want of a value, what maintains the alkalosis.

Words are chosen from the typed results (tiers, statuses, the values a cause waits on), never by
reading the English of an earlier stage.
"""

from __future__ import annotations

import re
from collections.abc import Sequence

from notegen._format import sentence_case
from notegen.assess.model import Assessment
from notegen.note.prose import clause, inline, mmol, sentence, word_list
from notegen.note.worksheet import missing_tests_text
from notegen.workup.model import CauseEntry, Evidence, FactorEntry

__all__ = ["alkalosis_sentences", "next_test_sentences"]

_STRENGTH_ORDER = {"strong": 0, "moderate": 1, "weak": 2}
_COUNT_WORDS = {2: "Two", 3: "Three", 4: "Four", 5: "Five", 6: "Six"}
_HEDGE = re.compile(r"^(?:probable|possible|likely) ")
FINDINGS_PER_CAUSE = 2
AGAINST_CAUSES = 2
POSSIBLE_CAUSES_NAMED = 3
NOT_ASSESSABLE_NAMED = 2
# Facts the chloride sentence has already stated (names of the alkalosis pack's facts).
CHLORIDE_FACTS = frozenset({"chloride_class", "urine_cl"})
# ...and, when the class is left open because a diuretic is acting, the diuretic's timing.
DIURETIC_TIMING_FACTS = frozenset({"loop_or_thiazide_acting", "loop_or_thiazide_hours"})


def alkalosis_sentences(assessment: Assessment) -> list[str]:
    """The work-up in sentences; when there is none, why, if the reader needs telling."""
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
        *_causes(assessment.differential, assessment.maintenance, _stated_by_chloride(assessment)),
        *_against(assessment.differential),
        *_not_assessable(assessment.differential, assessment.maintenance),  # only when no cause is likely
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
        return f"A urine chloride below {mmol(value)}"
    if qualifier == ">":
        return f"A urine chloride above {mmol(value)}"
    return f"The urine chloride of {mmol(value)}"


def _chloride(assessment: Assessment) -> list[str]:
    """The chloride class: the rule pack's own sentences when it gives them, else ours."""
    notes = [sentence(note) for note in assessment.chloride_notes if note.strip()]
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


def _stated_by_chloride(assessment: Assessment) -> frozenset[str]:
    """The facts the chloride sentence has already given the reader."""
    if assessment.chloride_class == "indeterminate" and assessment.chloride_notes:
        return CHLORIDE_FACTS | DIURETIC_TIMING_FACTS
    return CHLORIDE_FACTS


def _new_to_the_reader(evidence: Sequence[Evidence], stated: frozenset[str] = CHLORIDE_FACTS) -> list[Evidence]:
    """Findings the paragraph has not already given: the chloride sentence states the class and the
    urine chloride, so a finding resting on those alone is dropped when the cause has others."""
    fresh = [item for item in evidence if not (item.facts and set(item.facts) <= stated)]
    return fresh or list(evidence)


def _findings(
    evidence: Sequence[Evidence], limit: int = FINDINGS_PER_CAUSE, stated: frozenset[str] = CHLORIDE_FACTS
) -> str:
    """The strongest findings as clauses joined by semicolons (they may hold commas); a finding whose
    facts the reader already has, from the chloride sentence or a finding before it, is left out."""
    chosen: list[Evidence] = []
    known = set(stated)
    for item in _strongest(_new_to_the_reader(evidence, stated), len(evidence)):
        if len(chosen) == limit:
            break
        if chosen and item.facts and set(item.facts) <= known:
            continue
        chosen.append(item)
        known |= set(item.facts)
    return "; ".join(clause(item.text) for item in chosen if item.text.strip())


def _with_findings(label: str, evidence: Sequence[Evidence], stated: frozenset[str] = CHLORIDE_FACTS) -> str:
    """A cause and, in parentheses, the one or two findings that carry it."""
    findings = _findings(evidence, stated=stated)
    return f"{label} ({findings})" if findings else label


def _causes(
    differential: Sequence[CauseEntry],
    maintenance: Sequence[FactorEntry] = (),
    stated: frozenset[str] = CHLORIDE_FACTS,
) -> list[str]:
    # A likely cause that is a specific form of another (calcium-alkali syndrome of alkali load) is named
    # alone: the general cause is not a second cause "acting together" with it.
    general = {cause.form_of for cause in differential if cause.tier == "likely" and cause.form_of}
    likely = [cause for cause in differential if cause.tier == "likely" and cause.cause not in general]
    # A possible cause that is also a present maintenance factor (reduced GFR) is said once, there.
    maintaining = {factor.factor for factor in maintenance if factor.status == "present"}
    possible = [cause for cause in differential if cause.tier == "possible" and cause.cause not in general]
    if likely:
        possible = [cause for cause in possible if cause.cause not in maintaining]
    sentences: list[str] = []
    if len(likely) == 1:
        sentences.append(
            f"The likely cause is {_with_findings(inline(likely[0].label), likely[0].supporting, stated)}."
        )
    elif likely:
        count = _COUNT_WORDS.get(len(likely), str(len(likely)))
        items = [_with_findings(inline(cause.label), cause.supporting, stated) for cause in likely]
        sentences.append(f"{count} causes are likely, probably acting together: {word_list(items)}.")
    named = possible[:POSSIBLE_CAUSES_NAMED]
    rest = len(possible) - len(named)
    others = [f"{rest} other{'s' if rest > 1 else ''}"] if rest else []
    labels = [inline(cause.label) for cause in named] + others
    if likely and possible:
        verb = "is" if len(possible) == 1 else "are"
        sentences.append(f"{sentence_case(word_list(labels))} {verb} also possible.")
    elif len(possible) == 1:
        only = possible[0]
        findings = _findings(only.supporting, stated=stated)
        sentences.append(
            f"No cause is clearly supported, though {inline(only.label)} remains possible"
            + (f" ({findings})." if findings else ".")
        )
    elif possible:
        sentences.append(f"No cause is clearly supported; {word_list(labels)} remain possible.")
    elif not likely:
        sentences.append("The findings do not yet point to any of the usual causes.")
    return sentences


def _against(differential: Sequence[CauseEntry]) -> list[str]:
    """The alternatives argued against most firmly, in one sentence.

    Unlikely causes with a firm finding against them; those that also had something for them come
    first (they were real contenders), then the firmest finding, then the order of the differential.
    Two causes refuted by the same finding share it.
    """
    # A cause waiting on a missing value is not assessable, never "unlikely" (see `_not_assessable`).
    candidates = [
        cause
        for cause in differential
        if cause.tier == "unlikely"
        and not cause.not_assessable_without
        and any(e.strength != "weak" for e in cause.opposing)
    ]
    ranked = sorted(
        candidates,
        key=lambda cause: (not cause.supporting, min(_STRENGTH_ORDER.get(e.strength, 3) for e in cause.opposing)),
    )
    chosen = ranked[:AGAINST_CAUSES]
    if not chosen:
        return []
    reasons = [clause(_strongest(cause.opposing, 1)[0].text) for cause in chosen]
    labels = [inline(cause.label) for cause in chosen]
    if len(chosen) == 1:
        return [f"{sentence_case(labels[0])} is unlikely ({reasons[0]})."]
    if reasons[0] == reasons[1]:
        return [f"{sentence_case(labels[0])} and {labels[1]} are unlikely ({reasons[0]})."]
    return [f"{sentence_case(labels[0])} is unlikely ({reasons[0]}), as is {labels[1]} ({reasons[1]})."]


def _not_assessable(differential: Sequence[CauseEntry], maintenance: Sequence[FactorEntry]) -> list[str]:
    """Causes the tiers call unlikely while a test that could support them has not been done.

    With a firm finding against, the cause is unlikely but cannot be excluded; without one, it cannot
    be assessed. A cause the maintenance sentence already leaves open (reduced GFR) is not said twice;
    when a cause is likely, the open alternatives stay in the worksheet and are simply not called unlikely.
    """
    if any(cause.tier == "likely" for cause in differential):
        return []  # with a likely cause in hand the open alternatives are left to the worksheet
    open_factors = {factor.factor for factor in maintenance if factor.status == "undetermined"}
    waiting = [
        cause
        for cause in differential
        if cause.tier == "unlikely" and cause.not_assessable_without and cause.cause not in open_factors
    ][:NOT_ASSESSABLE_NAMED]
    sentences = []
    for cause in waiting:
        label = sentence_case(inline(cause.label))
        missing = missing_tests_text(cause.not_assessable_without)
        firm = [item for item in cause.opposing if item.strength != "weak"]
        if firm:
            reason = clause(_strongest(firm, 1)[0].text)
            sentences.append(f"{label} is unlikely ({reason}) but cannot be excluded without {missing}.")
        else:
            sentences.append(f"{label} cannot be assessed without {missing}.")
    return sentences


def _maintenance(factors: Sequence[FactorEntry]) -> list[str]:
    present = [inline(factor.label) for factor in factors if factor.status == "present"]
    # "whether probable X contributes" hedges twice; the open question is X itself.
    open_ = [_HEDGE.sub("", inline(factor.label)) for factor in factors if factor.status == "undetermined"]
    if present and open_:
        return [
            f"The alkalosis is maintained by {word_list(present)}; whether {word_list(open_, 'or')} also contributes "
            "cannot be judged from these values."
        ]
    if present:
        return [f"The alkalosis is maintained by {word_list(present)}."]
    if open_:
        return [f"Whether {word_list(open_, 'or')} maintains the alkalosis cannot be judged from these values."]
    return []


def next_test_sentences(assessment: Assessment) -> list[str]:
    from notegen.note.acidosis_paragraph import acidosis_conditional_tests, acidosis_test_labels

    labels = [inline(test.label) for test in assessment.next_tests if not test.conditional]
    labels += acidosis_test_labels(assessment)
    later: dict[str, list[str]] = {}  # tests kept on an undecided pack condition, grouped by its clause
    for test in assessment.next_tests:
        if test.conditional:
            later.setdefault(test.conditional_says, []).append(inline(test.label))
    for says, names in acidosis_conditional_tests(assessment):
        later.setdefault(says, []).extend(names)
    if not labels:
        return [f"Tests to consider {says}: {word_list(names)}." for says, names in later.items()]
    noun = "test" if len(labels) + sum(len(names) for names in later.values()) == 1 else "tests"
    later_words = [f"{says}, {word_list(names)}" for says, names in later.items()]
    return [f"Next {noun} to consider: {word_list(labels)}{''.join(f'; then, {t}' for t in later_words)}."]
