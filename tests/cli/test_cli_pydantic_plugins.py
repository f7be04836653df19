"""A single note run as the command skips pydantic's plugin look-up; library use never does."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

SAMPLE = str(Path(__file__).resolve().parents[2] / "samples" / "gastric_suction.yaml")
REPORT = "print('plugins:', os.environ.get('PYDANTIC_DISABLE_PLUGINS'), file=sys.stderr)\n"


def _run(code: str, **extra: str) -> str:
    env = {key: value for key, value in os.environ.items() if key != "PYDANTIC_DISABLE_PLUGINS"}
    done = subprocess.run(
        [sys.executable, "-c", f"import os, sys\n{code}{REPORT}"],
        env={**env, **extra},
        capture_output=True,
        text=True,
        check=True,
    )
    return done.stderr.strip().splitlines()[-1]


def test_the_command_turns_plugins_off() -> None:
    code = (
        f"sys.argv = ['notegen', 'draft', {SAMPLE!r}, '--format', 'text']\n"
        "from notegen.cli.app import main\nmain()\n"
    )
    assert _run(code) == "plugins: __all__"


def test_a_value_the_user_set_is_kept() -> None:
    code = f"sys.argv = ['notegen', 'draft', {SAMPLE!r}]\nfrom notegen.cli.app import main\nmain()\n"
    assert _run(code, PYDANTIC_DISABLE_PLUGINS="some_plugin") == "plugins: some_plugin"


def test_a_caller_of_main_or_the_library_keeps_its_plugins() -> None:
    code = (
        f"from notegen.cli.app import main\nmain(['draft', {SAMPLE!r}])\n"
        f"from notegen.pipeline import Drafter\nfrom notegen.intake.read import read_case\n"
        f"Drafter().draft(read_case({SAMPLE!r}))\n"
    )
    assert _run(code) == "plugins: None"
