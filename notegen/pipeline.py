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
from dataclasses import dataclass
from functools import cached_property
from os import PathLike
from pathlib import Path
from typing import TYPE_CHECKING, Any

from notegen.acidbase.calculations import compute_calculations
from notegen.acidbase.model import AcidBaseReading
from notegen.acidbase.reading import read_acid_base
from notegen.assess.model import Assessment
from notegen.assess.warnings import collect_warnings
from notegen.case.bounds import bound_notices
from notegen.case.model import Case
from notegen.case.trend import build_trend
from notegen.errors import NothingToAssessError
from notegen.knowledge import Knowledge, shipped_knowledge
from notegen.knowledge.settings import AcidBaseSettings, DateOrder
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

    @cached_property
    def knowledge(self) -> Knowledge:
        """Everything read from the shipped rules and `rules_dirs`; the shipped one is shared by the process."""
        return Knowledge(self.rules_dirs) if self.rules_dirs else shipped_knowledge()

    @property
    def settings(self) -> AcidBaseSettings:
        return self.knowledge.settings

    @property
    def date_order(self) -> DateOrder | None:
        """How the service reads a pasted 03/04/2026 (`date_order` in its acid_base.yaml); None: refused."""
        setting = self.settings.date_order
        return setting.value if setting is not None else None

    def read_case(self, source: str | None, **how: Any) -> Case:
        """`notegen.intake.read.read_case` (same arguments), a pasted date read in the service's date order
        unless the case file (`dates:`) or `date_order=` says otherwise."""
        from notegen.intake.read import read_case

        return read_case(source, service_date_order=self.date_order, **how)

    @property
    def alkalosis_pack(self) -> RulePack:
        return self.knowledge.alkalosis_pack

    @property
    def acidosis_pack(self) -> RulePack:
        return self.knowledge.acidosis_pack

    def assess(self, case: Case, *, explain: bool = False) -> Assessment:
        """Run every stage on a validated case and gather the results.

        case -> calculations -> acid-base reading -> rule walk (when there is a metabolic alkalosis).
        The shipped rule pack is loaded, and the rule engine imported, only when a case first needs
        them; a service's pack (`rules_dirs`) is loaded for every case, so its errors always show.
        A case with no measured value is refused here, on every path (`NothingToAssessError`).
        """
        if not _has_values(case):
            raise NothingToAssessError()
        if self.rules_dirs:
            self.alkalosis_pack  # noqa: B018 - load and check the service's pack now
            self.acidosis_pack  # noqa: B018
        calculations = compute_calculations(case, self.settings)
        reading = read_acid_base(case, self.settings, calculations)
        rules = None
        if _alkalosis_to_work_up(reading):
            from notegen.workup.alkalosis import evaluate_alkalosis

            rules = evaluate_alkalosis(
                case, reading, self.alkalosis_pack, calculations=calculations, explain=explain, settings=self.settings
            )
        acidosis = None
        if _acidosis_to_work_up(reading):
            from notegen.acidbase.calculations import urine_gap_calculations
            from notegen.workup.acidosis import evaluate_acidosis

            calculations = {**calculations, **urine_gap_calculations(case)}
            acidosis = evaluate_acidosis(case, reading, self.acidosis_pack, calculations=calculations, explain=explain)
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
            reported_bounds=tuple(f"{text}." for text in bound_notices(case)),
            trend=build_trend(case),
            acidosis=acidosis,
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


def _has_values(case: Case) -> bool:
    """Whether the case holds a measured value: read from a file, or set on a `Case` built in code."""
    if case.measurements:
        return True
    return any(value is not None for section in (case.gas, case.chem, case.urine)
               for name, value in section if name not in ("taken_at", "sample"))


def _alkalosis_to_work_up(reading: AcidBaseReading) -> bool:
    """Whether the alkalosis pack applies: the same test `evaluate_alkalosis` makes, without importing the engine."""
    return "metabolic_alkalosis" in reading.disorders or "metabolic_alkalosis" in reading.possible_disorders


def _acidosis_to_work_up(reading: AcidBaseReading) -> bool:
    """Whether the acidosis pack applies: the test `evaluate_acidosis` makes, without importing the engine."""
    return "metabolic_acidosis" in reading.disorders and reading.metabolic_acidosis_kind is not None


# What makes a folder a rule pack: at least one of these (a service may override any subset).
PACK_FILES = ("acid_base.yaml", "management.yaml", "alkalosis/*.yaml", "acidosis/*.yaml")


def _holds_pack_files(folder: Path) -> bool:
    return any(any(folder.glob(pattern)) for pattern in PACK_FILES)


def check_rule_folders(folders: tuple[Path, ...]) -> list[str]:
    """Every problem of the shipped rules with these service folders laid over them, as `file:line: message`.

    The same `Knowledge` that `Drafter(rules_dirs=folders)` loads (settings, vocabularies, tables,
    the alkalosis and acidosis packs), then the considerations, checked against the packs these same
    folders make (a cause a service adds can be named in its management.yaml), as `draft --rules`
    loads them; then the one severity vocabulary (a word shared by alerts and pack means one threshold).
    """
    from notegen.assess.considerations import check_considerations
    from notegen.knowledge.severity import severity_problems

    knowledge = Knowledge(tuple(Path(f) for f in folders))
    missing = [f for f in knowledge.rules_dirs if not f.is_dir()]
    if missing:
        return [f"{f}: no such folder" for f in missing]
    empty = [f for f in knowledge.rules_dirs if not _holds_pack_files(f)]
    if empty:
        return [f"{f}: no rule-pack file here ({', '.join(PACK_FILES)})" for f in empty]
    problems = knowledge.problems()
    problems += check_considerations(knowledge.rules_dirs)
    lines = [f"{name}:{line}: {text}" if line is not None else f"{name}: {text}" for name, line, text in problems]
    if not problems:
        lines.extend(severity_problems(knowledge.settings, knowledge.alkalosis_pack.settings))
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
