"""A plain `notegen draft` call is read without typer, with the same result as typer's reading of it."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest
from typer.testing import CliRunner

from notegen.cli.app import _plain_draft_arguments, app, main

ROOT = Path(__file__).resolve().parents[2]
SAMPLE = str(ROOT / "samples" / "gastric_suction.yaml")
OTHER = str(ROOT / "samples" / "thiazide_and_vomiting.yaml")
runner = CliRunner()

PLAIN_CALLS = [
    ["draft", SAMPLE],
    ["draft", SAMPLE, "--format", "text", "--width", "60"],
    ["draft", SAMPLE, "-f", "html"],
    ["draft", SAMPLE, "--format=json", "--explain"],
    ["draft", SAMPLE, "--brief", "--ascii", "-f", "text"],
    ["draft", "--set", "chem.k=2.9", SAMPLE, "--window-hours", "12.5"],
    ["draft", "--set", "gas.ph=7.5", "--set", "gas.pco2=48", "--set", "gas.hco3=36"],
    ["draft", SAMPLE, "--width", "0080", "-f", "text"],
    ["draft", SAMPLE, OTHER, "-f", "json"],
    ["draft", SAMPLE, "--set", "chem.k=99"],
    ["draft", "no-such-case.yaml"],
    ["draft"],
    ["draft", SAMPLE, OTHER, "--paste", "labs.txt"],
    ["draft", SAMPLE, "--rules", "/no/such/folder"],
    ["draft", SAMPLE, "--template", "/no/such/template.md.j2"],
]


@pytest.mark.parametrize("argv", PLAIN_CALLS, ids=[" ".join(a[1:]).replace(str(ROOT), "") for a in PLAIN_CALLS])
def test_the_plain_reading_matches_typer(argv: list[str], capsys: pytest.CaptureFixture[str]) -> None:
    assert _plain_draft_arguments(argv) is not None  # this call takes the plain path
    status = main(argv)
    plain = capsys.readouterr()
    through_typer = runner.invoke(app, argv)
    assert (status, plain.out, plain.err) == (
        through_typer.exit_code,
        through_typer.stdout,
        through_typer.stderr,
    )


@pytest.mark.parametrize(
    "argv",
    [
        [],
        ["--help"],
        ["schema"],
        ["draft", "--help"],
        ["draft", "-h"],
        ["draft", SAMPLE, "-fjson"],  # attached short value: typer's to read
        ["draft", SAMPLE, "--format", "xml"],
        ["draft", SAMPLE, "--format", "text", "--format", "json"],
        ["draft", SAMPLE, "--width", "80.0"],
        ["draft", SAMPLE, "--window-hours", "1e3"],
        ["draft", SAMPLE, "--output"],
        ["draft", SAMPLE, "--output", "--brief"],
        ["draft", SAMPLE, "--explain", "--explain"],
        ["draft", SAMPLE, "--no-explain"],
        ["draft", "--", SAMPLE],
        ["draft", SAMPLE, "--output="],
    ],
)
def test_anything_unusual_is_left_to_typer(argv: list[str]) -> None:
    assert _plain_draft_arguments(argv) is None


def test_a_plain_call_reads_every_option() -> None:
    argv = ["draft", "a.yaml", "-", "--paste", "labs.txt", "--set", "chem.k=3", "--set", "gas.ph=7.5", "-f", "text",
            "-o", "note.txt", "--out", "notes", "--jsonl", "--rules", "r1", "--rules", "r2", "--template", "t.md.j2",
            "--explain", "--brief", "--width", "72", "--ascii", "--window-hours", "6"]  # fmt: skip
    assert _plain_draft_arguments(argv) == {
        "cases": ["a.yaml", "-"],
        "paste": "labs.txt",
        "assignments": ["chem.k=3", "gas.ph=7.5"],
        "output_format": "text",
        "output": Path("note.txt"),
        "out_dir": Path("notes"),
        "jsonl": True,
        "rules": [Path("r1"), Path("r2")],
        "template": Path("t.md.j2"),
        "explain": True,
        "brief": True,
        "width": 72,
        "ascii_only": True,
        "window_hours": 6.0,
    }


def test_a_plain_call_imports_no_cli_framework() -> None:
    code = (
        "import sys\n"
        "from notegen.cli.app import main\n"
        f"status = main(['draft', {SAMPLE!r}, '--format', 'text'])\n"
        "loaded = sorted(m for m in sys.modules if m.split('.')[0] in {'typer', 'click', 'rich'})\n"
        "print(status, loaded, file=sys.stderr)\n"
    )
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert result.stdout.startswith("ACID-BASE ASSESSMENT")
    assert result.stderr == "0 []\n"


@pytest.mark.parametrize("argv", [["draft", SAMPLE, "--format", "text"], ["draft", SAMPLE, "--set", "chem.k=99"]])
def test_the_command_in_its_own_process_prints_what_typer_would(argv: list[str]) -> None:
    # main() without arguments is the console script: the path that also tunes the garbage collector
    code = (
        "import gc, sys\n"
        "from notegen.cli.app import main\n"
        f"sys.argv = ['notegen', *{argv!r}]\n"
        "status = main()\n"
        "print(status, gc.isenabled(), file=sys.stderr)\n"
    )
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    through_typer = runner.invoke(app, argv)
    assert result.stdout == through_typer.stdout
    assert result.stderr == through_typer.stderr + f"{through_typer.exit_code} True\n"


def test_an_out_of_range_number_is_refused_alike_by_both_parsers() -> None:
    # the range is checked once, in the command's body, so the plain parser takes these forms
    for argv, message in (
        (["draft", SAMPLE, "--width", "20"], "--width 20: give a line width from 30 to 400"),
        (["draft", SAMPLE, "--window-hours", "0.1"], "--window-hours 0.1: give at least 0.5 hours"),
    ):
        assert _plain_draft_arguments(argv) is not None
        result = CliRunner().invoke(app, argv)
        assert result.exit_code == 2 and message in result.stderr


def test_the_plain_option_table_is_the_typer_commands() -> None:
    """One table of `draft`'s options (`cli/plain.DRAFT_OPTIONS`): every spelling, parameter and kind the
    typer command declares is in it and nothing else, so the two parsers cannot drift apart."""
    import typer.main

    from notegen.cli.plain import DRAFT_OPTIONS

    draft = typer.main.get_command(app).commands["draft"]  # type: ignore[attr-defined]
    declared = set()
    for param in draft.params:
        if getattr(param, "param_type_name", "") != "option" or param.name == "help":
            continue
        kind = "flag" if param.is_flag else "repeated" if param.multiple else "value"
        declared.add((tuple(sorted(param.opts)), param.name, kind))
    table = {(tuple(sorted(flags)), dest, kind) for flags, dest, kind in DRAFT_OPTIONS}
    assert table == declared
