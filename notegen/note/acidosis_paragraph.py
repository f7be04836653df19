"""The metabolic-acidosis work-up as sentences of the assessment paragraph.

`acidosis_sentences` gives the sentences that follow the alkalosis work-up's in the paragraph, so
that a case with both (a triple disorder) reads as one story: the reading, the alkalosis, then
the acidosis, then one list of next tests. Plain text, like the rest of the paragraph.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from notegen._format import join_words, sentence_case
from notegen.assess.model import Assessment
from notegen.note.worksheet import plain_source
from notegen.workup.acidosis_model import AcidosisTest
from notegen.workup.model import CauseEntry, Evidence, SuggestedTest

__all__ = ["acidosis_conditional_tests", "acidosis_context", "acidosis_sentences", "acidosis_test_labels"]

KIND_WORDS = {
    "high_gap": "the high anion gap acidosis",
    "normal_gap": "the normal anion gap acidosis",
    "mixed": "the acidosis, with its high-gap and normal-gap parts,",
}
_STRENGTH_ORDER = {"strong": 0, "moderate": 1, "weak": 2}
_COUNT_WORDS = {2: "two", 3: "three", 4: "four", 5: "five", 6: "six", 7: "seven"}
FINDINGS_PER_CAUSE = 2
POSSIBLE_NAMED = 3
_KEEP_CAPITAL = ("D-", "eGFR", "BUN")


def _inline(text: str) -> str:
    """Text moved mid-sentence: an ordinary capitalised first word loses its capital."""
    text = text.strip()
    first = text.split(" ", 1)[0]
    if text.startswith(_KEEP_CAPITAL) or (first != "A" and (len(first) < 2 or not first[1:].islower())):
        return text
    return text[0].lower() + text[1:]


def _clause(text: str) -> str:
    return _inline(text).rstrip().rstrip(".").rstrip()


def _findings(evidence: Sequence[Evidence]) -> str:
    """The one or two firmest findings, as clauses joined by semicolons."""
    ranked = sorted(evidence, key=lambda item: _STRENGTH_ORDER.get(item.strength, 3))
    firm = [item for item in ranked if item.strength != "weak"]
    return "; ".join(_clause(item.text) for item in (firm or ranked)[:FINDINGS_PER_CAUSE])


def _with_findings(cause: CauseEntry) -> str:
    findings = _findings(cause.supporting)
    label = _inline(cause.label)
    return f"{label} ({findings})" if findings else label


def _causes(subject: str, differential: Sequence[CauseEntry]) -> list[str]:
    likely = [cause for cause in differential if cause.tier == "likely"]
    possible = [cause for cause in differential if cause.tier == "possible"]
    named = [_inline(cause.label) for cause in possible[:POSSIBLE_NAMED]]
    if len(possible) > POSSIBLE_NAMED:
        rest = len(possible) - POSSIBLE_NAMED
        named.append(f"{rest} other{'s' if rest > 1 else ''}")
    sentences: list[str] = []
    if len(likely) == 1:
        sentences.append(f"For {subject} the likely cause is {_with_findings(likely[0])}.")
    elif likely:
        items = [_with_findings(cause) for cause in likely]
        count = _COUNT_WORDS.get(len(likely), "several")
        sentences.append(f"For {subject} {count} causes are likely together: {'; and '.join(items)}.")
    if likely and possible:
        verb = "is" if len(possible) == 1 else "are"
        sentences.append(f"{sentence_case(join_words(named))} {verb} also possible.")
    elif possible:
        verb = "remains" if len(possible) == 1 else "remain"
        sentences.append(f"For {subject} no cause is clearly supported yet; {join_words(named)} {verb} possible.")
    elif not likely:
        sentences.append(f"For {subject} these values do not yet point to one of the usual causes.")
    return sentences


def _contenders_against(differential: Sequence[CauseEntry]) -> list[str]:
    """A cause that had something for it but was argued down, with the firmest finding against it."""
    refuted = [c for c in differential if c.tier == "unlikely" and c.supporting and c.opposing]
    if not refuted:
        return []
    cause = refuted[0]
    strongest = sorted(cause.opposing, key=lambda item: _STRENGTH_ORDER.get(item.strength, 3))[0]
    return [f"{sentence_case(_inline(cause.label))} is unlikely ({_clause(strongest.text)})."]


def acidosis_sentences(assessment: Assessment) -> list[str]:
    """The acidosis work-up in a few sentences; none when it did not run."""
    workup = assessment.acidosis
    if workup is None:
        return []
    subject = KIND_WORDS[workup.kind]
    sentences = _causes(subject, workup.differential)
    sentences += _contenders_against(workup.differential)
    if workup.ammonium == "unreadable":
        sentences += list(workup.notes[:1])
    return sentences


def acidosis_test_labels(assessment: Assessment) -> list[str]:
    """The acidosis work-up's tests due now, for the paragraph's one list of next tests."""
    tests: Sequence[SuggestedTest] = assessment.acidosis.next_tests if assessment.acidosis is not None else ()
    return [_inline(test.label) for test in tests if not test.conditional]


def acidosis_conditional_tests(assessment: Assessment) -> list[tuple[str, list[str]]]:
    """The tests kept only on an undecided condition: (the pack's "if ..." clause, their labels), in order."""
    tests: Sequence[SuggestedTest] = assessment.acidosis.next_tests if assessment.acidosis is not None else ()
    groups: dict[str, list[str]] = {}
    for test in tests:
        if test.conditional:
            groups.setdefault(test.conditional_says, []).append(_inline(test.label))
    return list(groups.items())


def _in_order(tests: Sequence[AcidosisTest]) -> list[AcidosisTest]:
    """The tests due now first, then the conditional ones, each in the pack's order."""
    return [t for t in tests if not t.conditional] + [t for t in tests if t.conditional]


# The note's acidosis section -------------------------------------------------------------------

KIND_LABELS = {
    "high_gap": "high anion gap",
    "normal_gap": "normal anion gap",
    "mixed": "high and normal anion gap together",
}


def _evidence_rows(evidence: Sequence[Evidence]) -> list[dict[str, str]]:
    ranked = sorted(evidence, key=lambda item: _STRENGTH_ORDER.get(item.strength, 3))
    return [{"text": e.text, "strength": e.strength, "source": plain_source(e.source)} for e in ranked]


def _decides(test: AcidosisTest) -> str:
    """What the result would settle or bear on, in one sentence; the purpose stays in the worksheet and JSON."""
    parts = []
    if test.settles:
        parts.append(f"settle the {join_words(test.settles)}")
    if test.bears_on:
        parts.append(f"bear on {join_words([_inline(label) for label in test.bears_on])}")
    decides = f"Would {' and '.join(parts)}." if parts else test.why
    return _if(test, decides)


def _if(test: AcidosisTest, decides: str) -> str:
    """A conditional test's sentence opens with the pack's clause: "If ..., it would bear on ..."."""
    if not test.conditional:
        return decides
    for opening in ("Would ", "It would "):
        if decides.startswith(opening):
            return f"{sentence_case(test.conditional_says)}, it would {decides.removeprefix(opening)}"
    return f"{sentence_case(test.conditional_says)}: {decides}"


def _short_reason(test: AcidosisTest) -> str:
    """The note's shorter reason: the purpose, then what the result would settle and bear on (the JSON keeps `why`)."""
    parts = []
    if test.settles:
        parts.append(f"settle the {join_words(test.settles)}")
    if test.bears_on:
        parts.append(f"bear on {join_words([_inline(label) for label in test.bears_on])}")
    decides = _if(test, f"It would {' and '.join(parts)}.") if parts else ""
    if not decides and test.conditional:
        decides = f"{sentence_case(test.conditional_says)}."
    return " ".join(text for text in (test.purpose, decides) if text) or test.why


def acidosis_context(assessment: Assessment) -> dict[str, Any] | None:
    """What `templates/parts/acidosis.md.j2` reads, as plain data; None when the work-up did not run."""
    workup = assessment.acidosis
    if workup is None:
        return None
    return {
        "kind": workup.kind,
        "kind_words": KIND_LABELS[workup.kind],
        "notes": list(workup.notes),
        "differential": [
            {
                "cause": cause.cause,
                "label": sentence_case(cause.label),
                "name": _inline(cause.label),
                "tier": cause.tier,
                "supporting": _evidence_rows(cause.supporting),
                "opposing": _evidence_rows(cause.opposing),
                "undecided": list(cause.undecided),
            }
            for cause in workup.differential
        ],
        "next_tests": [
            {
                "test": t.test,
                "label": sentence_case(t.label),
                "why": t.why,
                "reason": _short_reason(t),
                "decides": _decides(t),  # the chart note's one sentence: what the result would bear on
                "conditional": t.conditional,
            }
            for t in _in_order(workup.next_tests)
        ],
        # The walk, step by step, when the draft was asked to explain itself (empty otherwise).
        "trace": [
            {
                "kind": step.kind,
                "id": step.id,
                "condition": step.condition,
                "seen": "; ".join(f"{name} = {value}" for name, value in step.values.items()) or "none",
                "outcome": step.outcome,
                "goes_to": step.goes_to or "",
                "source": step.source,
            }
            for step in workup.trace
        ],
    }
