"""The bad-input corpus (tests/bad_inputs/): every file gives its exact message and exit status.

Refused input: exit 2, the exact message on stderr, nothing on stdout. Input with values
missing still drafts, and the note states the gap. No run shows a traceback.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pytest
import yaml
from typer.testing import CliRunner

from notegen.cli import app

CORPUS = Path(__file__).parent / "bad_inputs"
MANIFEST: list[dict[str, Any]] = yaml.safe_load((CORPUS / "manifest.yaml").read_text(encoding="utf-8"))
runner = CliRunner()


def _fill(text: str, file: Path | None) -> str:
    return text.replace("{file}", str(file)).replace("{folder}", str(CORPUS))


@pytest.mark.parametrize("entry", MANIFEST, ids=[entry["id"] for entry in MANIFEST])
def test_corpus_entry(entry: dict[str, Any]) -> None:
    file = CORPUS / entry["file"] if "file" in entry else None
    args = ["draft", *([str(file)] if file else []), *(_fill(arg, file) for arg in entry.get("args", []))]
    result = runner.invoke(app, args)
    # typer ends every command with SystemExit; anything else escaped the error handling
    assert result.exception is None or isinstance(result.exception, SystemExit), repr(result.exception)
    assert "Traceback" not in result.stdout + result.stderr
    assert result.exit_code == entry["exit"], result.stderr
    if entry["exit"] != 0:
        assert result.stderr == _fill(entry["stderr"], file)
        assert result.stdout == ""
    else:
        assert result.stderr == _fill(entry.get("stderr", ""), file)
        for text in entry.get("note", []):
            assert text in result.stdout
        for text in entry.get("absent", []):
            assert text not in result.stdout


def test_every_corpus_file_has_an_entry() -> None:
    named = {entry["file"] for entry in MANIFEST if "file" in entry}
    named |= {Path(arg).name for entry in MANIFEST for arg in entry.get("args", []) if "{folder}" in arg}
    on_disk = {path.name for path in CORPUS.iterdir()} - {"manifest.yaml"}
    assert on_disk - named == set()
    assert {name for name in named - on_disk if name != "does_not_exist.yaml"} == set()


def test_ids_are_unique() -> None:
    ids = [entry["id"] for entry in MANIFEST]
    assert len(ids) == len(set(ids))
