"""The public API and the direction of dependencies."""

from __future__ import annotations

import subprocess
import sys

import notegen


def test_all_is_sorted_and_every_name_resolves() -> None:
    assert notegen.__all__ == sorted(notegen.__all__)
    assert set(notegen.__all__) == set(notegen._EXPORTS)
    for name in notegen.__all__:
        assert getattr(notegen, name) is not None, name


def test_library_path_does_not_import_the_cli_framework() -> None:
    # Drafting a note from Python must not pull in typer or click (the CLI is a thin layer on top).
    code = (
        "import sys\n"
        "from notegen import Drafter, read_case\n"
        "Drafter().draft(read_case('samples/gastric_suction.yaml'))\n"
        "bad = sorted(m for m in sys.modules if m.split('.')[0] in {'typer', 'click', 'rich', 'fhir', 'pint'})\n"
        "print(','.join(bad))\n"
    )
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert result.stdout.strip() == ""


def test_importing_notegen_is_cheap() -> None:
    code = "import sys, notegen\nprint(sorted(m for m in sys.modules if m.startswith('notegen')))"
    result = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert result.stdout.strip() == "['notegen']"
