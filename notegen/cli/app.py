"""The `notegen` command line: parses arguments, calls the library, prints, maps errors to exit status.

Exit status: 0 drafted; 2 bad input, rule pack, template or usage; 1 anything else.
Only the note goes to standard output; every diagnostic goes to standard error.

The commands are typer commands (`app`). A plain `draft` call, the common one in a dictation pipe,
is parsed here with the standard library instead, and runs the same function, so a single note does
not pay for importing and setting up the CLI framework (about 25 ms). Anything else it does not
recognise outright (help, a bad or repeated value, an unknown option, another command) goes to typer,
which parses and reports as before.
"""

from __future__ import annotations

import functools
import gc
import os
import re
import sys
from collections.abc import Callable, Sequence
from enum import StrEnum
from pathlib import Path
from typing import TYPE_CHECKING, Annotated, Any

from notegen.errors import NotegenError, UsageError

if TYPE_CHECKING:
    import typer

APP_HELP = (
    "Draft the acid-base assessment section of a clinical note from lab values and context.\n\n"
    "Example: notegen draft samples/thiazide_and_vomiting.yaml"
)


class OutputFormat(StrEnum):
    markdown = "markdown"
    text = "text"
    html = "html"
    json = "json"


class SchemaKind(StrEnum):
    case = "case"
    output = "output"


def _say(message: str) -> None:
    import typer  # only when there is something to say; echo strips terminal codes off a pipe

    typer.echo(f"notegen: {message}", err=True)


def _reported(action: Callable[[], int]) -> int:
    """Run a command's body; a library error becomes a message on stderr and its exit status, never a traceback."""
    try:
        return action()
    except NotegenError as error:
        _say(str(error))
        return error.exit_code
    except KeyboardInterrupt:
        return 130
    except Exception as error:  # noqa: BLE001 - the last line of defence: one line, exit 1
        _say(f"unexpected error ({type(error).__name__}): {error}. Please report this with the input that caused it.")
        return 1


def _exit_on_failure(code: int) -> None:
    if code:
        raise typer.Exit(code)


def _write_output(text: str, output: Path | None) -> None:
    if output is None:
        sys.stdout.write(text)
        sys.stdout.flush()
        return
    from notegen.cli.batch import write_atomically

    write_atomically(output, text)


def _draft(
    cases: Sequence[str],
    *,
    paste: str | None = None,
    assignments: Sequence[str] = (),
    output_format: str = "markdown",
    output: Path | None = None,
    out_dir: Path | None = None,
    jsonl: bool = False,
    rules: Sequence[Path] = (),
    template: Path | None = None,
    explain: bool = False,
    brief: bool = False,
    width: int = 80,
    ascii_only: bool = False,
    window_hours: float = 24.0,
    jobs: int = 1,
) -> int:
    """The body of `notegen draft`, whichever parser read the arguments; returns the exit status."""
    from notegen.pipeline import Drafter, DraftOptions

    options = DraftOptions(
        output_format=output_format,
        explain=explain,
        brief=brief,
        width=width,
        ascii_only=ascii_only,
    )
    drafter = Drafter(rules_dirs=tuple(rules), template=template)
    sources = list(cases)
    if _is_batch(sources, jsonl=jsonl, out_dir=out_dir):
        from notegen.cli.batch import run_batch

        if paste is not None or assignments:
            raise UsageError("--paste and --set apply to a single case, not to a batch")
        if output is not None:
            raise UsageError("--output writes one note; for several cases give --out FOLDER (one note per case)")
        return run_batch(
            sources, drafter, options, out_dir=out_dir, jsonl=jsonl, window_hours=window_hours, jobs=jobs
        )
    from notegen.intake.files import MAX_BYTES
    from notegen.intake.read import read_case

    needs_stdin = "-" in sources or paste == "-"
    case = read_case(
        sources[0] if sources else None,
        paste=paste,
        overrides=tuple(assignments),
        stdin=sys.stdin.buffer.read(MAX_BYTES + 1) if needs_stdin else None,  # one byte past the limit refuses
        window_hours=window_hours,
    )
    _write_output(drafter.draft(case, options), output)
    return 0


def _is_batch(sources: Sequence[str], *, jsonl: bool, out_dir: Path | None) -> bool:
    return jsonl or out_dir is not None or len(sources) > 1 or any(Path(s).is_dir() for s in sources if s != "-")


def draft(
    cases: Annotated[
        list[str] | None,
        typer.Argument(help="Case files (YAML, JSON or FHIR JSON), folders of them, or - for standard input."),
    ] = None,
    paste: Annotated[
        str | None, typer.Option("--paste", help="A pasted lab block (a file, or - for standard input).")
    ] = None,
    assignments: Annotated[
        list[str] | None,
        typer.Option("--set", help="Set a case value by its dotted name, e.g. --set chem.k=2.9 (repeatable)."),
    ] = None,
    output_format: Annotated[
        OutputFormat, typer.Option("--format", "-f", help="Output format.")
    ] = OutputFormat.markdown,
    output: Annotated[Path | None, typer.Option("--output", "-o", help="Write the note to this file.")] = None,
    out_dir: Annotated[
        Path | None, typer.Option("--out", help="Batch: write one note per case into this folder.")
    ] = None,
    jsonl: Annotated[bool, typer.Option("--jsonl", help="Read cases as JSON Lines (one case per line).")] = False,
    rules: Annotated[
        list[Path] | None, typer.Option("--rules", help="A service's rule-pack folder, laid over the shipped one.")
    ] = None,
    template: Annotated[
        Path | None, typer.Option("--template", help="A service's own note template (Jinja2, sandboxed).")
    ] = None,
    explain: Annotated[bool, typer.Option("--explain", help="Add the trace of the rule walk.")] = False,
    brief: Annotated[bool, typer.Option("--brief", help="Only the assessment paragraph and the alerts.")] = False,
    width: Annotated[int, typer.Option("--width", min=30, max=400, help="Line width of plain text.")] = 80,
    ascii_only: Annotated[bool, typer.Option("--ascii", help="Plain text in ASCII only.")] = False,
    window_hours: Annotated[
        float,
        typer.Option("--window-hours", min=0.5, help="Results older than this are not mixed into the latest set."),
    ] = 24.0,
    jobs: Annotated[
        int,
        typer.Option("--jobs", "-j", min=0, help="Batch: draft on this many processes (0: one per core)."),
    ] = 1,
) -> None:
    """Draft the assessment section for a case and print it.

    Example: notegen draft samples/thiazide_and_vomiting.yaml --format text
    """
    code = _reported(
        lambda: _draft(
            cases or (),
            paste=paste,
            assignments=assignments or (),
            output_format=output_format.value,
            output=output,
            out_dir=out_dir,
            jsonl=jsonl,
            rules=rules or (),
            template=template,
            explain=explain,
            brief=brief,
            width=width,
            ascii_only=ascii_only,
            window_hours=window_hours,
            jobs=jobs,
        )
    )
    _exit_on_failure(code)


def schema(
    kind: Annotated[SchemaKind, typer.Argument(help="case: the case file; output: the JSON output.")] = SchemaKind.case,
) -> None:
    """Print the JSON Schema of the case file or of the JSON output.

    Example: notegen schema output > note.schema.json
    """

    def body() -> int:
        from notegen.schemas import schema_text

        typer.echo(schema_text(kind.value), nl=False)
        return 0

    _exit_on_failure(_reported(body))


def new_case(
    output: Annotated[Path | None, typer.Option("--output", "-o", help="Write to this file instead of stdout.")] = None,
) -> None:
    """Print a commented blank case file to start from.

    Example: notegen new-case -o bed12.yaml
    """

    def body() -> int:
        from notegen.resources import templates_dir

        text = (templates_dir() / "new_case.yaml").read_text(encoding="utf-8")
        if output is not None and output.exists():
            raise UsageError(f"{output} exists already; choose another name")
        _write_output(text, output)
        return 0

    _exit_on_failure(_reported(body))


def check_pack(
    folders: Annotated[list[Path], typer.Argument(help="Rule-pack folders, laid over the shipped pack in order.")],
) -> None:
    """Check a service's rule pack and report every problem with its file and line.

    Example: notegen check-pack ./our-rules
    """

    def body() -> int:
        from notegen.pipeline import check_rule_folders

        problems = check_rule_folders(tuple(folders))
        for problem in problems:
            typer.echo(problem, err=True)
        if problems:
            _say(f"{len(problems)} problem(s) found")
            return 2
        typer.echo("rule pack is consistent")
        return 0

    _exit_on_failure(_reported(body))


@functools.cache
def _typer_app() -> typer.Typer:
    """The typer application, built on first use: importing typer is most of what a plain call avoids."""
    global typer  # the command signatures above name `typer.Option`; typer reads them from this module
    import typer

    application = typer.Typer(
        name="notegen",
        help=APP_HELP,
        context_settings={"help_option_names": ["-h", "--help"]},
        add_completion=False,
        no_args_is_help=True,
        pretty_exceptions_enable=False,
        rich_markup_mode=None,
    )
    application.command()(draft)
    application.command()(schema)
    application.command("new-case")(new_case)
    application.command("check-pack")(check_pack)
    return application


def __getattr__(name: str) -> Any:
    if name == "app":  # `from notegen.cli.app import app` builds it
        return _typer_app()
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


# A plain `draft` call, parsed without typer ---------------------------------------------------

_FLAGS = {"--jsonl": "jsonl", "--explain": "explain", "--brief": "brief", "--ascii": "ascii_only"}
_VALUES = {
    "--paste": "paste",
    "--format": "output_format",
    "-f": "output_format",
    "--output": "output",
    "-o": "output",
    "--out": "out_dir",
    "--template": "template",
    "--width": "width",
    "--window-hours": "window_hours",
    "--jobs": "jobs",
    "-j": "jobs",
}
_REPEATED = {"--set": "assignments", "--rules": "rules"}
_PATHS = ("output", "out_dir", "template")
_WHOLE_NUMBER = re.compile(r"[0-9]{1,4}")
_DECIMAL = re.compile(r"[0-9]{1,6}(\.[0-9]{1,6})?")


def _plain_draft_arguments(argv: Sequence[str]) -> dict[str, Any] | None:
    """The arguments of a `draft` call that needs no typer to read; None for anything else.

    Only unmistakable forms are taken: known options once each, values that are plainly valid.
    Help, errors and every unusual form are left to typer, so its messages stay the only ones.
    """
    if not argv or argv[0] != "draft":
        return None
    cases: list[str] = []
    found: dict[str, Any] = {"assignments": [], "rules": []}
    position = 1
    while position < len(argv):
        word = argv[position]
        position += 1
        if word == "-" or not word.startswith("-"):
            cases.append(word)
            continue
        if word in _FLAGS:
            if _FLAGS[word] in found:
                return None
            found[_FLAGS[word]] = True
            continue
        name, equals, value = word.partition("=")
        if name not in _VALUES and name not in _REPEATED:
            return None  # --help, --, -fjson, an unknown option...
        if not equals:
            if position == len(argv):
                return None
            value = argv[position]
            position += 1
        if not value or (value.startswith("-") and value != "-"):
            return None
        if name in _REPEATED:
            found[_REPEATED[name]].append(value)
        elif _VALUES[name] in found:
            return None
        else:
            found[_VALUES[name]] = value
    if found.get("output_format", "markdown") not in {member.value for member in OutputFormat}:
        return None
    if "width" in found:
        if not _WHOLE_NUMBER.fullmatch(found["width"]) or not 30 <= int(found["width"]) <= 400:
            return None
        found["width"] = int(found["width"])
    if "jobs" in found:
        if not _WHOLE_NUMBER.fullmatch(found["jobs"]):
            return None
        found["jobs"] = int(found["jobs"])
    if "window_hours" in found:
        if not _DECIMAL.fullmatch(found["window_hours"]) or float(found["window_hours"]) < 0.5:
            return None
        found["window_hours"] = float(found["window_hours"])
    for key in _PATHS:
        if key in found:
            found[key] = Path(found[key])
    found["rules"] = [Path(folder) for folder in found["rules"]]
    return {"cases": cases, **found}


def main(argv: Sequence[str] | None = None) -> int:
    """The `notegen` command; returns the exit status (typer's path exits by itself)."""
    arguments = list(sys.argv[1:] if argv is None else argv)
    plain = _plain_draft_arguments(arguments)
    if plain is None:
        _typer_app()(args=arguments, prog_name="notegen")
        return 0
    cases = plain.pop("cases")
    # One note in a process of its own (not a caller's process, not a batch): its few short-lived
    # objects need no cyclic collection while it runs, and the objects built on the way (pydantic
    # validators, templates, the pack) are frozen before exit, so the interpreter's closing full
    # collections skip them. Together about a fifth of a single note's CPU time (bench/README.md).
    own_process = argv is None and not _is_batch(cases, jsonl=plain.get("jsonl", False), out_dir=plain.get("out_dir"))
    if own_process:
        gc.disable()
        # Skips pydantic's scan of every installed distribution for plugins (about 10 ms of CPU);
        # only here, never in a caller's process, and a value the user set is kept.
        os.environ.setdefault("PYDANTIC_DISABLE_PLUGINS", "__all__")
    try:
        return _reported(lambda: _draft(cases, **plain))
    finally:
        if own_process:
            gc.freeze()
            gc.enable()
