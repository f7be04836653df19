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
import sys
from collections.abc import Callable, Sequence
from enum import StrEnum
from pathlib import Path
from typing import TYPE_CHECKING, Annotated, Any

from notegen.cli.plain import plain_draft_arguments
from notegen.errors import NotegenError, NothingToAssessError, UsageError

if TYPE_CHECKING:
    import typer

DEFAULT_WIDTH = 80
MIN_WIDTH, MAX_WIDTH = 30, 400
APP_HELP = (
    "Draft the acid-base assessment section of a clinical note from lab values and context.\n\n"
    "Example: notegen draft samples/thiazide_and_vomiting.yaml"
)


class OutputFormat(StrEnum):
    markdown = "markdown"
    text = "text"
    html = "html"
    json = "json"


_plain_draft_arguments = plain_draft_arguments  # the name the tests know


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
    except BrokenPipeError:  # the reader went away (`| head -1`): nothing to report to anyone
        _quiet_stdout()
        return 141
    except Exception as error:  # noqa: BLE001 - the last line of defence: one line, exit 1
        _say(f"unexpected error ({type(error).__name__}): {error}. Please report this with the input that caused it.")
        return 1


def _quiet_stdout() -> None:
    from notegen.cli.batch_results import quiet_stdout

    quiet_stdout()


def _utf8_streams() -> None:
    """Standard output in UTF-8 whatever the locale (a note holds µ, – and ≥); standard error too,
    with anything it cannot encode escaped rather than raised."""
    for stream, errors in ((sys.stdout, "strict"), (sys.stderr, "backslashreplace")):
        reconfigure = getattr(stream, "reconfigure", None)
        if reconfigure is not None and (stream.encoding or "").lower().replace("-", "") != "utf8":
            try:
                reconfigure(encoding="utf-8", errors=errors)
            except (ValueError, OSError):  # a stream that cannot change its encoding any more
                pass


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
    output_format: str | None = None,
    output: Path | None = None,
    out_dir: Path | None = None,
    jsonl: bool = False,
    rules: Sequence[Path] = (),
    template: Path | None = None,
    explain: bool = False,
    brief: bool = False,
    worksheet: bool = False,
    width: int | None = None,
    ascii_only: bool = False,
    window_hours: float = 24.0,
    jobs: int = 1,
    date_order: str | None = None,
) -> int:
    """The body of `notegen draft`, whichever parser read the arguments; returns the exit status.

    `output_format` None: the one `output`'s suffix names, else Markdown; `width` None: 80.
    """
    from notegen.cli.choices import check_choices, check_window, date_order_choice, format_for
    from notegen.pipeline import Drafter, DraftOptions

    if width is not None and not MIN_WIDTH <= width <= MAX_WIDTH:
        raise UsageError(f"--width {width}: give a line width from {MIN_WIDTH} to {MAX_WIDTH}")
    check_window(window_hours)
    if jobs < 0:
        raise UsageError(f"--jobs {jobs}: give a number of processes, or 0 for one per core")
    chosen = format_for(output_format, output)
    check_choices(
        chosen, brief=brief, explain=explain, worksheet=worksheet, width=width, ascii_only=ascii_only, template=template
    )
    options = DraftOptions(
        output_format=chosen,
        explain=explain,
        brief=brief,
        worksheet=worksheet,
        width=DEFAULT_WIDTH if width is None else width,
        ascii_only=ascii_only,
    )
    drafter = Drafter(rules_dirs=tuple(rules), template=template)
    sources = list(cases)
    if _is_batch(sources, jsonl=jsonl, out_dir=out_dir):
        from notegen.cli.batch import run_batch

        if paste is not None or assignments or date_order is not None:  # a service sets its date order in --rules
            raise UsageError("--paste, --set and --date-order apply to a single case, not to a batch")
        if output is not None:
            raise UsageError(
                "--output writes one note; for several cases give --output-folder FOLDER (one note per case)"
            )
        return run_batch(sources, drafter, options, out_dir=out_dir, jsonl=jsonl, window_hours=window_hours, jobs=jobs)
    from notegen.intake.files import MAX_BYTES

    if output is not None:
        from notegen.cli.batch_results import refuse_output_over_inputs

        refuse_output_over_inputs(output, [*sources, *([paste] if paste is not None else [])])
    needs_stdin = "-" in sources or paste == "-"
    case = drafter.read_case(
        sources[0] if sources else None,
        paste=paste,
        overrides=tuple(assignments),
        stdin=sys.stdin.buffer.read(MAX_BYTES + 1) if needs_stdin else None,  # one byte past the limit refuses
        window_hours=window_hours,
        date_order=date_order_choice(date_order),
    )
    try:
        note = drafter.draft(case, options)
    except NothingToAssessError as refusal:
        raise refusal.at(sources[0] if sources else "--set", hint=", or --paste a lab block") from None
    for medication in case.context.meds:
        if not medication.recognised:  # in the note too; said here so a pipeline's log shows it
            _say(f"medication {medication.name!r} is not in notegen's vocabulary; it was kept but not reasoned with")
    _write_output(note, output)
    return 0


def _is_batch(sources: Sequence[str], *, jsonl: bool, out_dir: Path | None) -> bool:
    return jsonl or out_dir is not None or len(sources) > 1 or any(Path(s).is_dir() for s in sources if s != "-")


# long: typer reads the options from this signature: one annotated parameter per option of the command
def draft(
    cases: Annotated[
        list[str] | None,
        typer.Argument(metavar="FILE...", hidden=True, show_default=False),
    ] = None,
    paste: Annotated[
        str | None,
        typer.Option("--paste", metavar="FILE|-", help="A pasted lab block (a file, or - for standard input)."),
    ] = None,
    assignments: Annotated[
        list[str] | None,
        typer.Option(
            "--set",
            metavar="NAME=VALUE",
            help="Set a case value by its dotted name, e.g. --set chem.k=2.9 (repeatable).",
            show_default=False,
        ),
    ] = None,
    output_format: Annotated[
        OutputFormat | None,
        typer.Option(
            "--format",
            "-f",
            metavar="FORMAT",
            help="markdown, text, html or json. Default: what --output's suffix names, else markdown.",
            show_default=False,
        ),
    ] = None,
    output: Annotated[
        Path | None,
        typer.Option(
            "--output",
            "-o",
            metavar="FILE",
            help="Write the one note to FILE (.md, .txt, .html or .json sets the format).",
        ),
    ] = None,
    out_dir: Annotated[
        Path | None,
        typer.Option("--output-folder", metavar="FOLDER", help="Write one note per case into FOLDER (several cases)."),
    ] = None,
    old_out_dir: Annotated[
        Path | None, typer.Option("--out", metavar="FOLDER", hidden=True, help="Former name of --output-folder.")
    ] = None,
    jsonl: Annotated[bool, typer.Option("--jsonl", help="Read cases as JSON Lines (one case per line).")] = False,
    rules: Annotated[
        list[Path] | None,
        typer.Option(
            "--rules",
            metavar="FOLDER",
            help="A service's rule-pack folder, laid over the shipped one (repeatable).",
            show_default=False,
        ),
    ] = None,
    template: Annotated[
        Path | None,
        typer.Option("--template", metavar="FILE", help="A service's own note template (Jinja2, sandboxed)."),
    ] = None,
    explain: Annotated[bool, typer.Option("--explain", help="Add the trace of the rule walk.")] = False,
    brief: Annotated[bool, typer.Option("--brief", help="Only the assessment paragraph and the alerts.")] = False,
    worksheet: Annotated[
        bool,
        typer.Option(
            "--worksheet", help="Add the worksheet: values, every calculation with its source, the causes weighed."
        ),
    ] = False,
    width: Annotated[
        int | None,
        typer.Option(
            "--width", metavar="N", help="Line width of plain text, 30 to 400 (default 80).", show_default=False
        ),
    ] = None,
    ascii_only: Annotated[bool, typer.Option("--ascii", help="Plain text in ASCII only.")] = False,
    window_hours: Annotated[
        float,
        typer.Option(
            "--window-hours",
            metavar="HOURS",
            help="Results older than this are not mixed into the latest set (at least 0.5; default 24).",
            show_default=False,
        ),
    ] = 24.0,
    jobs: Annotated[
        int, typer.Option("--jobs", "-j", metavar="N", show_default=False,
                          help="Batch: draft on N processes (0: one per core; default 1).")
    ] = 1,
    date_order: Annotated[
        str | None, typer.Option("--date-order", metavar="ORDER", show_default=False,
                                 help="How a pasted date such as 03/04/2026 reads: day-first or month-first.")
    ] = None,
) -> None:
    """Draft the assessment section for a case and print it.

    FILE: case files (YAML, JSON or FHIR JSON), folders of them, or - for standard input.

    Example: notegen draft samples/thiazide_and_vomiting.yaml --format text
    """
    code = _reported(
        lambda: _draft(
            cases or (),
            paste=paste,
            assignments=assignments or (),
            output_format=None if output_format is None else output_format.value,
            output=output,
            out_dir=_folder_option(out_dir, old_out_dir),
            jsonl=jsonl,
            rules=rules or (),
            template=template,
            explain=explain,
            brief=brief,
            worksheet=worksheet,
            width=width,
            ascii_only=ascii_only,
            window_hours=window_hours,
            jobs=jobs,
            date_order=date_order,
        )
    )
    _exit_on_failure(code)


def _folder_option(new: Path | None, old: Path | None) -> Path | None:
    """--output-folder, or its former name --out (kept working: it only ever names a folder)."""
    if new is not None and old is not None:
        raise UsageError("give --output-folder once (--out is its former name)")
    return new if new is not None else old


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
    output: Annotated[
        Path | None, typer.Option("--output", "-o", metavar="FILE", help="Write to FILE instead of standard output.")
    ] = None,
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
    folders: Annotated[
        list[Path],
        typer.Argument(metavar="FOLDER...", hidden=True, show_default=False),
    ],
) -> None:
    """Check a service's rule pack and report every problem with its file and line.

    Checks acid_base.yaml, the alkalosis/ and acidosis/ packs and management.yaml, as `draft --rules`
    loads them. FOLDER: rule-pack folders, laid over the shipped pack in order.

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


def main(argv: Sequence[str] | None = None) -> int:
    """The `notegen` command; returns the exit status (typer's path exits by itself)."""
    arguments = list(sys.argv[1:] if argv is None else argv)
    if argv is None:  # the console script: the process's own streams
        _utf8_streams()
    plain = plain_draft_arguments(arguments)
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
