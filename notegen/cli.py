"""The `notegen` command line: parses arguments, calls the library, prints, maps errors to exit status.

Exit status: 0 drafted; 2 bad input, rule pack, template or usage; 1 anything else.
Only the note goes to standard output; every diagnostic goes to standard error.
"""

from __future__ import annotations

import sys
from collections.abc import Iterator
from contextlib import contextmanager
from enum import Enum
from pathlib import Path
from typing import Annotated

import typer

from .errors import NotegenError, UsageError

app = typer.Typer(
    name="notegen",
    help="Draft the acid-base assessment section of a clinical note from lab values and context.\n\n"
    "Example: notegen draft samples/thiazide_and_vomiting.yaml",
    context_settings={"help_option_names": ["-h", "--help"]},
    add_completion=False,
    no_args_is_help=True,
    pretty_exceptions_enable=False,
    rich_markup_mode=None,
)


class OutputFormat(str, Enum):
    markdown = "markdown"
    text = "text"
    html = "html"
    json = "json"


class SchemaKind(str, Enum):
    case = "case"
    output = "output"


def _say(message: str) -> None:
    typer.echo(f"notegen: {message}", err=True)


@contextmanager
def _reported_errors() -> Iterator[None]:
    """Turn library errors into a message on stderr and the error's exit status, never a traceback."""
    try:
        yield
    except NotegenError as error:
        _say(str(error))
        raise typer.Exit(error.exit_code) from None
    except typer.Exit:
        raise
    except KeyboardInterrupt:
        raise typer.Exit(130) from None
    except Exception as error:  # noqa: BLE001 - the last line of defence: one line, exit 1
        _say(f"unexpected error ({type(error).__name__}): {error}. Please report this with the input that caused it.")
        raise typer.Exit(1) from None


def _write_output(text: str, output: Path | None) -> None:
    if output is None:
        sys.stdout.write(text)
        sys.stdout.flush()
        return
    from .batch import write_atomically

    write_atomically(output, text)


@app.command()
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
    output_format: Annotated[OutputFormat, typer.Option("--format", "-f", help="Output format.")] = OutputFormat.markdown,
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
        float, typer.Option("--window-hours", min=0.5, help="Results older than this are not mixed into the latest set.")
    ] = 24.0,
) -> None:
    """Draft the assessment section for a case and print it.

    Example: notegen draft samples/thiazide_and_vomiting.yaml --format text
    """
    with _reported_errors():
        from .drafting import DraftOptions, Drafter

        options = DraftOptions(
            output_format=output_format.value,
            explain=explain,
            brief=brief,
            width=width,
            ascii_only=ascii_only,
        )
        drafter = Drafter(rules_dirs=tuple(rules or ()), template=template)
        sources = list(cases or [])
        if jsonl or out_dir is not None or len(sources) > 1 or any(Path(s).is_dir() for s in sources if s != "-"):
            from .batch import run_batch

            if paste is not None or assignments:
                raise UsageError("--paste and --set apply to a single case, not to a batch")
            code = run_batch(sources, drafter, options, out_dir=out_dir, jsonl=jsonl, window_hours=window_hours)
            raise typer.Exit(code)
        from .intake import read_case

        needs_stdin = "-" in sources or paste == "-"
        case = read_case(
            sources[0] if sources else None,
            paste=paste,
            overrides=tuple(assignments or ()),
            stdin=sys.stdin.buffer.read() if needs_stdin else None,
            window_hours=window_hours,
        )
        _write_output(drafter.draft(case, options), output)


@app.command()
def schema(
    kind: Annotated[SchemaKind, typer.Argument(help="case: the case file; output: the JSON output.")] = SchemaKind.case,
) -> None:
    """Print the JSON Schema of the case file or of the JSON output.

    Example: notegen schema output > note.schema.json
    """
    with _reported_errors():
        from .schemas import schema_text

        typer.echo(schema_text(kind.value), nl=False)


@app.command("new-case")
def new_case(
    output: Annotated[Path | None, typer.Option("--output", "-o", help="Write to this file instead of stdout.")] = None,
) -> None:
    """Print a commented blank case file to start from.

    Example: notegen new-case -o bed12.yaml
    """
    with _reported_errors():
        from .resources import templates_dir

        text = (templates_dir() / "new_case.yaml").read_text(encoding="utf-8")
        if output is not None and output.exists():
            raise UsageError(f"{output} exists already; choose another name")
        _write_output(text, output)


@app.command("check-pack")
def check_pack(
    folders: Annotated[list[Path], typer.Argument(help="Rule-pack folders, laid over the shipped pack in order.")],
) -> None:
    """Check a service's rule pack and report every problem with its file and line.

    Example: notegen check-pack ./our-rules
    """
    with _reported_errors():
        from .drafting import check_rule_folders

        problems = check_rule_folders(tuple(folders))
        for problem in problems:
            typer.echo(problem, err=True)
        if problems:
            _say(f"{len(problems)} problem(s) found")
            raise typer.Exit(2)
        typer.echo("rule pack is consistent")


def main() -> None:
    app(prog_name="notegen")
