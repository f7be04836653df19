"""Every command is documented in the README and helped with an example (as sqlite-utils checks its docs)."""

from __future__ import annotations

from pathlib import Path

import pytest
from typer.testing import CliRunner

from notegen.cli.app import app

README = Path(__file__).resolve().parent.parent / "README.md"
COMMANDS = sorted(command.name or command.callback.__name__ for command in app.registered_commands if command.callback)


def test_the_commands_are_the_ones_we_document() -> None:
    assert COMMANDS == ["check-pack", "draft", "new-case", "schema"]


@pytest.mark.parametrize("command", COMMANDS)
def test_command_is_in_the_readme(command: str) -> None:
    assert f"`notegen {command}`" in README.read_text(encoding="utf-8")


@pytest.mark.parametrize("command", COMMANDS)
def test_command_help_has_an_example(command: str) -> None:
    result = CliRunner().invoke(app, [command, "--help"])
    assert result.exit_code == 0, result.output
    assert f"Example: notegen {command}" in result.stdout


def test_readme_opens_with_the_job_and_two_commands() -> None:
    text = README.read_text(encoding="utf-8")
    commands = [line.strip() for line in text.split("## Ways in")[0].splitlines() if line.startswith("    ")]
    assert len(commands) == 2
    assert "notegen draft samples/" in commands[0]
    assert "pytest" in commands[1]


def test_every_sample_the_readme_names_exists() -> None:
    root = README.parent
    for word in README.read_text(encoding="utf-8").split():
        if word.startswith("samples/") and not word.endswith("/"):
            assert (root / word).exists(), word


def test_readme_console_examples_print_what_the_readme_shows(tmp_path: Path) -> None:
    # Each ```console block: "$ notegen ..." then the exact output (stdout and stderr together).
    import shlex

    text = README.read_text(encoding="utf-8")
    blocks = [block.split("```", 1)[0] for block in text.split("```console\n")[1:]]
    assert blocks, "the README shows no example output"
    (tmp_path / "typo.yaml").write_text("chem:\n  creatinine: 130 mg/dL\n", encoding="utf-8")
    for block in blocks:
        command, _, shown = block.partition("\n")
        arguments = shlex.split(command.removeprefix("$ notegen "))
        arguments = [str(README.parent / a) if a.startswith("samples/") else a for a in arguments]
        arguments = [str(tmp_path / a) if a == "typo.yaml" else a for a in arguments]
        result = CliRunner().invoke(app, arguments)
        printed = (result.stdout + result.stderr).replace(str(tmp_path) + "/", "")
        assert printed.rstrip("\n") == shown.rstrip("\n"), command


def test_the_readme_python_example_runs_and_prints_what_it_says(monkeypatch: pytest.MonkeyPatch) -> None:
    import contextlib
    import io

    text = README.read_text(encoding="utf-8")
    code = text.split("## From Python", 1)[1].split("```python\n", 1)[1].split("```", 1)[0]
    monkeypatch.chdir(README.parent)
    printed = io.StringIO()
    with contextlib.redirect_stdout(printed):
        exec(compile(code, "README.md", "exec"), {})  # noqa: S102 - the README's own example
    lines = printed.getvalue().splitlines()
    assert "metabolic alkalosis" in printed.getvalue()
    # the comments in the example say what these lines print
    assert lines[-2:] == ["metabolic_alkalosis", "responsive"]
