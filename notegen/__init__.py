"""notegen: drafts the acid-base assessment section of a clinical note.

    from notegen import Drafter, read_case
    print(Drafter().draft(read_case("samples/gastric_suction.yaml")))

Names are imported on first use, so `import notegen` stays cheap for the command line.
"""

from __future__ import annotations

from importlib import import_module
from typing import TYPE_CHECKING, Any

__version__ = "0.1.0"

_EXPORTS: dict[str, str] = {
    "AcidBaseReading": "notegen.acidbase_model",
    "AcidBaseSettings": "notegen.acid_base_settings",
    "Alert": "notegen.alerts",
    "Assessment": "notegen.assessment",
    "Calculation": "notegen.calculations",
    "Case": "notegen.case",
    "CaseFileError": "notegen.errors",
    "CaseValueError": "notegen.errors",
    "DraftOptions": "notegen.drafting",
    "Drafter": "notegen.drafting",
    "InputError": "notegen.errors",
    "NotegenError": "notegen.errors",
    "PasteError": "notegen.errors",
    "RulePackError": "notegen.errors",
    "TemplateError": "notegen.errors",
    "UsageError": "notegen.errors",
    "check_rule_folders": "notegen.drafting",
    "compute_calculations": "notegen.calculations",
    "evaluate_alkalosis": "notegen.differential",
    "load_acid_base_settings": "notegen.acid_base_settings",
    "read_acid_base": "notegen.acidbase",
    "read_case": "notegen.intake",
    "render_note": "notegen.note",
    "validate_case": "notegen.validation",
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
    "NotegenError",
    "PasteError",
    "RulePackError",
    "TemplateError",
    "UsageError",
    "check_rule_folders",
    "compute_calculations",
    "evaluate_alkalosis",
    "load_acid_base_settings",
    "read_acid_base",
    "read_case",
    "render_note",
    "validate_case",
]

if TYPE_CHECKING:
    from notegen.acid_base_settings import AcidBaseSettings, load_acid_base_settings
    from notegen.acidbase import read_acid_base
    from notegen.acidbase_model import AcidBaseReading
    from notegen.alerts import Alert
    from notegen.assessment import Assessment
    from notegen.calculations import Calculation, compute_calculations
    from notegen.case import Case
    from notegen.differential import evaluate_alkalosis
    from notegen.drafting import Drafter, DraftOptions, check_rule_folders
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
    from notegen.intake import read_case
    from notegen.note import render_note
    from notegen.validation import validate_case


def __getattr__(name: str) -> Any:
    module = _EXPORTS.get(name)
    if module is None:
        raise AttributeError(f"module 'notegen' has no attribute {name!r}")
    value = getattr(import_module(module), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted([*globals(), *__all__])
