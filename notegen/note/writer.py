"""The note: the assessment rendered as Markdown through Jinja2 templates, then as text, HTML or JSON.

    text = render_note(assessment, DraftOptions(output_format="text", width=72))

Markdown comes from `templates/note.md.j2` (or `brief.md.j2`, or a service's own template run
in the sandbox); plain text and HTML are derived from that Markdown by `notegen.render`, so the
formats never drift apart. JSON is the `Assessment` itself, with the paragraph and the
management considerations filled in.

Templates receive plain data only (dicts, lists, strings and numbers), the same for the shipped
and a service's templates; every piece of text that reaches Markdown goes through the `md`
filter, so a label such as `{{ 7*7 }}` or `<script>` prints as written.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from notegen._format import format_range, sentence_case
from notegen.assess.considerations import consider_all
from notegen.assess.model import Assessment
from notegen.case.model import Case
from notegen.errors import TemplateError, UsageError
from notegen.note.acidosis_paragraph import acidosis_context
from notegen.note.cautions import DISCLAIMER, note_cautions
from notegen.note.options import DraftOptions
from notegen.note.paragraph import draft_paragraph
from notegen.note.worksheet import (
    calculation_row,
    cause_row,
    chloride_class_words,
    context_items,
    differential_note,
    labelled,
    outside_summary,
    split_calculations,
    test_row,
    trace_row,
    trend_row,
    value_row,
)

__all__ = ["complete_assessment", "note_context", "render_markdown", "render_note"]

TITLE = "Acid-base assessment"
NOTE_TEMPLATE = "note.md.j2"
BRIEF_TEMPLATE = "brief.md.j2"
FORMATS = ("markdown", "text", "html", "json")

_BLANK_RUNS = re.compile(r"\n{3,}")


# Completing the assessment ---------------------------------------------------------------------


def complete_assessment(assessment: Assessment, *, rules_dirs: Sequence[Path] = ()) -> Assessment:
    """The assessment with `paragraph`, `management`, `disclaimer` and `cautions` filled from its results.

    `rules_dirs` are a service's rule folders, whose `management.yaml` is laid over the shipped one.
    """
    chosen, withheld = consider_all(assessment, rules_dirs=rules_dirs)
    return assessment.model_copy(
        update={
            "paragraph": draft_paragraph(assessment),
            "management": tuple(item.text for item in chosen),
            "management_withheld": withheld,
            "answered_alerts": tuple(dict.fromkeys(code for item in chosen for code in item.answers_alerts)),
            "disclaimer": DISCLAIMER,
            "cautions": note_cautions(assessment.acid_base),
        }
    )


def _completed(assessment: Assessment) -> Assessment:
    # An assessment completed upstream (with a service's rules) is kept as it is; every note
    # carries the disclaimer and cautions, so they are added when it lacks them.
    if not assessment.paragraph:
        return complete_assessment(assessment)
    if not assessment.disclaimer:
        return assessment.model_copy(update={"disclaimer": DISCLAIMER, "cautions": note_cautions(assessment.acid_base)})
    return assessment


# Rendering -------------------------------------------------------------------------------------


def render_note(assessment: Assessment, options: DraftOptions, *, template: Path | None = None) -> str:
    """The note in `options.output_format`: markdown, text, html or json.

    Fills the paragraph and management first when the assessment has no paragraph yet. JSON is
    the whole assessment whatever `brief`, `explain` or `template` say; the other formats come
    from the Markdown that the template renders.
    """
    fmt = str(options.output_format)
    if fmt not in FORMATS:
        raise UsageError(f"unknown output format {fmt!r}; choose one of {', '.join(FORMATS)}")
    completed = _completed(assessment)
    if fmt == "json":
        return completed.model_dump_json(indent=2, by_alias=True) + "\n"
    markdown = render_markdown(completed, options, template=template)
    if fmt == "markdown":
        return markdown
    if fmt == "text":
        from notegen.render.text import markdown_to_text

        return markdown_to_text(markdown, width=options.width, ascii_only=options.ascii_only)
    from notegen.render.html import markdown_to_html_page

    return markdown_to_html_page(markdown, title=note_title(completed.case), draft_notice=completed.disclaimer)


def render_markdown(assessment: Assessment, options: DraftOptions, *, template: Path | None = None) -> str:
    """The Markdown note from the shipped template, or from a service's template in the sandbox."""
    from notegen.render.templating import make_environment, render_template
    from notegen.resources import templates_dir

    if template is None:
        # The shipped templates do not read `assessment` (the whole dump, ~0.14 ms a note).
        context = note_context(_completed(assessment), options, with_assessment=False)
        env = make_environment([templates_dir()], sandboxed=False)
        text = render_template(env, BRIEF_TEMPLATE if options.brief else NOTE_TEMPLATE, context)
    else:
        path = Path(template)
        if not path.is_file():
            raise TemplateError("template file not found", template=str(template))
        context = note_context(_completed(assessment), options)
        # The service's folder first, then the shipped one, so its template can include our parts.
        env = make_environment([path.resolve().parent, templates_dir()], sandboxed=True)
        text = render_template(env, path, context)
        # Every note carries the shipped disclaimer: a service layout that leaves it out (or replaces
        # the part with its own wording) gets it at the end.
        shipped = make_environment([templates_dir()], sandboxed=False)
        disclaimer = render_template(shipped, "parts/disclaimer_line.md.j2", context).strip()
        if disclaimer not in text:
            text = f"{text.rstrip()}\n\n{disclaimer}\n"
    # Templates may leave runs of blank lines around optional sections; in Markdown they mean nothing.
    return _BLANK_RUNS.sub("\n\n", text).strip("\n") + "\n"


def note_title(case: Case) -> str:
    return f"{TITLE} \u2014 {case.label}" if case.label else TITLE


# The template context --------------------------------------------------------------------------


def note_context(
    assessment: Assessment, options: DraftOptions, *, with_assessment: bool = True
) -> dict[str, Any]:
    """Everything a note template may use, as plain data; text is raw and escaped by the template.

    `with_assessment=False` leaves out `assessment`, the whole assessment as JSON data, for
    templates known not to read it; a service's template always gets it.
    """
    reading = assessment.acid_base
    worked_up = assessment.chloride_class is not None
    shown, others = split_calculations(assessment)
    cautions = assessment.cautions or note_cautions(reading)
    notices = [sentence_case(text) for text in assessment.case.notices]
    context: dict[str, Any] = {
        "title": TITLE,
        "label": assessment.case.label,
        "options": {
            "brief": options.brief,
            "explain": options.explain,
            "worksheet": options.worksheet,
            "format": str(options.output_format),
        },
        "paragraph": assessment.paragraph or draft_paragraph(assessment),
        # the chart note lists the next tests in their own section, so its paragraph does not name them
        "chart_paragraph": (
            draft_paragraph(assessment, name_next_tests=False)
            if assessment.next_tests or (assessment.acidosis is not None and assessment.acidosis.next_tests)
            else assessment.paragraph or draft_paragraph(assessment)
        ),
        "disclaimer": assessment.disclaimer or DISCLAIMER,
        "cautions": list(cautions),
        "critical_alerts": [a.model_dump(mode="json") for a in assessment.alerts if a.level == "critical"],
        # an alert whose advice a printed consideration carries is stated without it
        "other_alerts": [
            {**a.model_dump(mode="json"), "message": a.finding}
            if a.finding is not None and a.code in assessment.answered_alerts
            else a.model_dump(mode="json")
            for a in assessment.alerts
            if a.level != "critical"
        ],
        "values": [value_row(m, assessment.case) for m in assessment.case.measurements],
        "values_have_times": any(m.taken_at is not None for m in assessment.case.measurements),
        "reported_bounds": list(assessment.reported_bounds),
        "trend": [trend_row(t, assessment.case.date_as_written) for t in assessment.trend],
        "context_items": context_items(assessment.case),
        # what is missing (the reading's gaps); what was given but not used is `input_notices`
        "warnings": [w for w in (sentence_case(text) for text in assessment.warnings) if w not in notices],
        # what was given but set aside or read only in part (pasted lines, unknown words, earlier results)
        "input_notices": notices,
        # resources outside an acid-base assessment: one line in the note, each listed in the worksheet
        "outside_summary": outside_summary(assessment.case, listed_below=options.worksheet),
        "outside": [resource.text for resource in assessment.case.outside],
        "calculations": [calculation_row(c) for c in shown],
        "other_calculations": [calculation_row(c) for c in others],
        "alkalosis_worked_up": worked_up,
        "chloride_class": chloride_class_words(assessment.chloride_class),
        "chloride_notes": list(assessment.chloride_notes),
        "differential": [cause_row(c) for c in assessment.differential],
        "differential_note": differential_note(assessment),
        "generation": [labelled(m.model_dump(mode="json")) for m in assessment.generation],
        "maintenance": [labelled(f.model_dump(mode="json")) for f in assessment.maintenance],
        "next_tests": [test_row(t) for t in assessment.next_tests],
        "management": list(assessment.management),
        "management_withheld": [
            {"label": sentence_case(item.id.replace("_", " ")), "reasons": list(item.reasons)}
            for item in assessment.management_withheld
        ],
        "acidosis": acidosis_context(assessment),  # the acidosis work-up, or None
        "reading_steps": list(reading.findings),
        "trace": [trace_row(t.model_dump(mode="json")) for t in assessment.trace],
        "reference": {
            "ph": format_range(*reading.ph_bounds, digits=2, fixed=True),
            "anion_gap": format_range(*reading.anion_gap_reference, unit="mmol/L"),
        },
    }
    if with_assessment:
        context["assessment"] = assessment.model_dump(mode="json", by_alias=True)
    return context


