"""Notes written to files: atomically, and with the permissions the user's umask gives."""

from __future__ import annotations

import os
import stat
from pathlib import Path

from notegen.cli.batch import write_atomically


def test_written_note_follows_the_umask_and_leaves_no_temporary_file(tmp_path: Path) -> None:
    previous = os.umask(0o022)
    try:
        write_atomically(tmp_path / "note.md", "text\n")
    finally:
        os.umask(previous)
    target = tmp_path / "note.md"
    assert target.read_text(encoding="utf-8") == "text\n"
    assert stat.S_IMODE(target.stat().st_mode) == 0o644
    assert [p.name for p in tmp_path.iterdir()] == ["note.md"]
