"""The library's front door, and the only place that knows the order of the stages.

    note = notegen.draft("samples/gastric_suction.yaml")       # one case: a mapping, a path or case-file text
    drafter = Drafter(rules_dirs=(Path("service"),))           # many cases, rules loaded once
    for path in paths:
        print(drafter.note(path).text(width=72))

case -> validated case (intake, case) -> calculations -> acid-base reading (acidbase) -> rule walk
(workup) -> assessment (assess) -> note (note, render).
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from functools import cached_property
from os import PathLike
from pathlib import Path
from typing import TYPE_CHECKING, Any

from notegen.acidbase.calculations import compute_calculations
from notegen.acidbase.model import AcidBaseReading
from notegen.acidbase.reading import read_acid_base
from notegen.assess.model import Assessment
from notegen.assess.warnings import collect_warnings
from notegen.case.model import Case
from notegen.case.trend import build_trend
from notegen.knowledge.settings import AcidBaseSettings, load_acid_base_settings
from notegen.note.document import Note
from notegen.note.options import DraftOptions, OutputFormat

if TYPE_CHECKING:
    from notegen.engine import RulePack

__all__ = ["CaseLike", "DraftOptions", "Drafter", "Note", "OutputFormat", "check_rule_folders", "draft"]

CaseLike = Case | Mapping[str, Any] | str | PathLike[str]
"""A validated case, plain case data, a case file's path, or the text of a case file (YAML or JSON)."""


@dataclass
class Drafter:
    """Holds the loaded settings, rule pack and templates; reuse one for many cases."""

    rules_dirs: tuple[Path, ...] = ()
    template: Path | None = None
    _cache: dict[str, object] = field(default_factory=dict, repr=False)

    @cached_property
    def settings(self) -> AcidBaseSettings:
        return load_acid_base_settings(list(self.rules_dirs))

    @cached_property
    def alkalosis_pack(self) -> RulePack:
        from notegen.workup.alkalosis import load_alkalosis_pack

        return load_alkalosis_pack(self.rules_dirs)

    def assess(self, case: Case, *, explain: bool = False) -> Assessment:
        """Run every stage on a validated case and gather the results.

        case -> calculations -> acid-base reading -> rule walk (when there is a metabolic alkalosis).
        The shipped rule pack is loaded, and the rule engine imported, only when a case first needs
        them; a service's pack (`rules_dirs`) is loaded for every case, so its errors always show.
        """
        if self.rules_dirs:
            self.alkalosis_pack  # noqa: B018 - load and check the service's pack now
        calculations = compute_calculations(case, self.settings)
        reading = read_acid_base(case, self.settings)
        rules = None
        if _alkalosis_to_work_up(reading):
            from notegen.workup.alkalosis import evaluate_alkalosis

            rules = evaluate_alkalosis(case, reading, self.alkalosis_pack, calculations=calculations, explain=explain)
        assessment = Assessment(
            case=case,
            acid_base=reading,
            alerts=reading.alerts,
            calculations=calculations,
            chloride_class=rules.chloride_class if rules is not None else None,
            chloride_notes=rules.chloride_notes if rules is not None else (),
            generation=rules.generation if rules is not None else (),
            differential=rules.differential if rules is not None else (),
            maintenance=rules.maintenance if rules is not None else (),
            next_tests=rules.next_tests if rules is not None else (),
            trace=rules.trace if rules is not None else (),
            warnings=collect_warnings(case, reading, calculations),
            trend=build_trend(case),
        )
        from notegen.note.writer import complete_assessment

        return complete_assessment(assessment, rules_dirs=self.rules_dirs)

    def draft(self, case: Case, options: DraftOptions | None = None) -> str:
        from notegen.note.writer import render_note

        options = options or DraftOptions()
        return render_note(self.assess(case, explain=options.explain), options, template=self.template)

    def note(self, case: CaseLike, *, brief: bool = False, worksheet: bool = False) -> Note:
        """Draft one case into a `Note`, whose formats render on request; `worksheet` adds the working."""
        return Note(self.assess(as_case(case)), brief=brief, template=self.template, worksheet=worksheet)

    def draft_json_line(self, case: Case, *, explain: bool = False) -> str:
        """The JSON output on one line, for JSON Lines: the content of `draft` in JSON, without indentation.

        Written straight from the assessment; parsing the indented JSON again to compact it would
        cost more than drafting the note.
        """
        return self.assess(case, explain=explain).model_dump_json(by_alias=True) + "\n"


def _alkalosis_to_work_up(reading: AcidBaseReading) -> bool:
    """Whether the alkalosis pack applies: the same test `evaluate_alkalosis` makes, without importing the engine."""
    return "metabolic_alkalosis" in reading.disorders or "metabolic_alkalosis" in reading.possible_disorders


# What makes a folder a rule pack: at least one of these (a service may override any subset).
PACK_FILES = ("acid_base.yaml", "management.yaml", "alkalosis/*.yaml")


def _holds_pack_files(folder: Path) -> bool:
    return any(any(folder.glob(pattern)) for pattern in PACK_FILES)


def check_rule_folders(folders: tuple[Path, ...]) -> list[str]:
    """Every problem of the shipped pack with these service folders laid over it, as `file:line: message`."""
    from notegen.errors import RulePackError
    from notegen.knowledge.settings import load_acid_base_settings
    from notegen.workup.alkalosis import check_alkalosis_pack

    lines: list[str] = []
    missing = [f for f in folders if not Path(f).is_dir()]
    if missing:
        return [f"{f}: no such folder" for f in missing]
    empty = [f for f in folders if not _holds_pack_files(Path(f))]
    if empty:
        return [f"{f}: no rule-pack file here ({', '.join(PACK_FILES)})" for f in empty]
    settings = None
    try:
        settings = load_acid_base_settings(list(folders))
    except RulePackError as error:
        lines.extend(str(error).splitlines())
    pack_problems = check_alkalosis_pack(folders)
    for filename, line, message in pack_problems:
        lines.append(f"{filename}:{line}: {message}" if line is not None else f"{filename}: {message}")
    if settings is not None and not pack_problems:
        # one severity vocabulary: a word shared by the alerts and the pack means one threshold
        from notegen.knowledge.severity import severity_problems
        from notegen.workup.alkalosis import load_alkalosis_pack

        lines.extend(severity_problems(settings, load_alkalosis_pack(folders).settings))
    return lines


def as_case(case: CaseLike) -> Case:
    """A validated case from any form `CaseLike` allows; a string with a line break or a brace is case-file text."""
    from notegen.intake.read import read_case, read_case_data, read_case_text

    if isinstance(case, Case):
        return case
    if isinstance(case, Mapping):
        return read_case_data(case)
    if isinstance(case, str) and ("\n" in case or case.lstrip().startswith("{")):
        return read_case_text(case)
    if isinstance(case, str | PathLike):
        return read_case(str(Path(case)))
    from notegen.errors import InputError

    raise InputError(f"a case is a mapping, a path or the text of a case file, not {type(case).__name__}")


def draft(
    case: CaseLike,
    *,
    rules: str | PathLike[str] | None = None,
    template: str | PathLike[str] | None = None,
    brief: bool = False,
    worksheet: bool = False,
) -> Note:
    """Draft one case in one call; `rules` is a service's rule folder, `template` its note layout,
    `worksheet` adds the values, calculations and causes weighed after the chart note.

    For many cases, hold one `Drafter` so that the rules and templates load once.
    """
    drafter = Drafter(
        rules_dirs=(Path(rules),) if rules is not None else (),
        template=Path(template) if template is not None else None,
    )
    return drafter.note(case, brief=brief, worksheet=worksheet)
