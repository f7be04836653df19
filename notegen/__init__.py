"""notegen: drafts the acid-base assessment section of a clinical note.

    import notegen
    note = notegen.draft("samples/gastric_suction.yaml")    # or a mapping, or case-file text
    print(note.text(width=72))

    drafter = notegen.Drafter()                               # many cases, the rules loaded once
    notes = [drafter.note(path) for path in paths]

Names are imported on first use, so `import notegen` stays cheap for the command line.
"""

from __future__ import annotations

from importlib import import_module
from typing import TYPE_CHECKING, Any

__version__ = "0.1.0"

_EXPORTS: dict[str, str] = {
    "AcidBaseReading": "notegen.acidbase.model",
    "AcidBaseSettings": "notegen.knowledge.settings",
    "Alert": "notegen.acidbase.alert",
    "Assessment": "notegen.assess.model",
    "Calculation": "notegen.acidbase.calculations",
    "Case": "notegen.case.model",
    "CaseFileError": "notegen.errors",
    "CaseValueError": "notegen.errors",
    "DraftOptions": "notegen.pipeline",
    "Drafter": "notegen.pipeline",
    "Note": "notegen.note.document",
    "InputError": "notegen.errors",
    "NotegenError": "notegen.errors",
    "PasteError": "notegen.errors",
    "RulePackError": "notegen.errors",
    "TemplateError": "notegen.errors",
    "UsageError": "notegen.errors",
    "check_rule_folders": "notegen.pipeline",
    "draft": "notegen.pipeline",
    "compute_calculations": "notegen.acidbase.calculations",
    "evaluate_alkalosis": "notegen.workup.alkalosis",
    "load_acid_base_settings": "notegen.knowledge.settings",
    "read_acid_base": "notegen.acidbase.reading",
    "read_case": "notegen.intake.read",
    "render_note": "notegen.note.writer",
    "validate_case": "notegen.case.validation",
}

__all__ = [
    "AcidBaseReading",
    "AcidBaseSettings",
    "Alert",
    "Assessment",
    "Calculation",
    "Case",
    "CaseFileError",
    "CaseValueError",
    "DraftOptions",
    "Drafter",
    "InputError",
    "Note",
    "NotegenError",
    "PasteError",
    "RulePackError",
    "TemplateError",
    "UsageError",
    "check_rule_folders",
    "compute_calculations",
    "draft",
    "evaluate_alkalosis",
    "load_acid_base_settings",
    "read_acid_base",
    "read_case",
    "render_note",
    "validate_case",
]

if TYPE_CHECKING:
    from notegen.acidbase.alert import Alert
    from notegen.acidbase.calculations import Calculation, compute_calculations
    from notegen.acidbase.model import AcidBaseReading
    from notegen.acidbase.reading import read_acid_base
    from notegen.assess.model import Assessment
    from notegen.case.model import Case
    from notegen.case.validation import validate_case
    from notegen.errors import (
        CaseFileError,
        CaseValueError,
        InputError,
        NotegenError,
        PasteError,
        RulePackError,
        TemplateError,
        UsageError,
    )
    from notegen.intake.read import read_case
    from notegen.knowledge.settings import AcidBaseSettings, load_acid_base_settings
    from notegen.note.document import Note
    from notegen.note.writer import render_note
    from notegen.pipeline import Drafter, DraftOptions, check_rule_folders, draft
    from notegen.workup.alkalosis import evaluate_alkalosis


def __getattr__(name: str) -> Any:
    module = _EXPORTS.get(name)
    if module is None:
        raise AttributeError(f"module 'notegen' has no attribute {name!r}")
    value = getattr(import_module(module), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted([*globals(), *__all__])
