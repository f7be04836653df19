"""Writing a batch's notes into `--out FOLDER` without keeping every written path in memory.

Two cases of one run must never write the same note file (`a.yaml` and `a.json` both make
`a.md`). The check lives on the file system, not in a set that grows with the batch: before a
note is written, a marker named after the note is created exclusively (`O_CREAT | O_EXCL`) in a
hidden folder of this run inside FOLDER; the marker holds the case's label. A second case whose
marker already exists is refused, naming the first. A note left by an earlier run is replaced, as
before (only this run's markers count), and the markers' folder is removed when the run ends.
The note itself is written to a temporary name and renamed, so an interrupted batch leaves no
half-written note.

On a file system that folds case (`A.md` and `a.md` are one file), the markers fold the same way
as the notes, so such a pair is caught too.
"""

from __future__ import annotations

import os
import shutil
import tempfile
from pathlib import Path
from types import TracebackType

from notegen.errors import InputError, UsageError

__all__ = ["NoteFolder"]

MARKERS_PREFIX = ".notegen-run-"


class NoteFolder:
    """The notes of one batch run in `folder`: `claim` a note's name for a case, then `write` it.

    Use as a context manager; leaving it removes this run's markers.
    """

    def __init__(self, folder: Path) -> None:
        self.folder = Path(folder)
        self.markers: Path | None = None

    def __enter__(self) -> NoteFolder:
        try:
            self.markers = Path(tempfile.mkdtemp(prefix=MARKERS_PREFIX, dir=self.folder))
        except OSError as exc:
            raise UsageError(f"--out {self.folder}: cannot write in the folder ({exc.strerror})") from None
        return self

    def __exit__(
        self, kind: type[BaseException] | None, error: BaseException | None, traceback: TracebackType | None
    ) -> None:
        self.close()

    def close(self) -> None:
        if self.markers is not None:
            shutil.rmtree(self.markers, ignore_errors=True)
            self.markers = None

    def claim(self, name: str, label: str) -> Path:
        """The path of note `name` for the case `label`; InputError if another case of this run has it."""
        if self.markers is None:
            raise RuntimeError("NoteFolder.claim outside its `with` block")
        marker = self.markers / name
        try:
            handle = os.open(marker, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600)
        except FileExistsError:
            first = marker.read_text(encoding="utf-8", errors="replace")
            raise InputError(
                f"{label}: its note would overwrite the note of {first} ({name}); rename one of the two cases"
            ) from None
        except OSError as exc:
            raise UsageError(f"cannot write {self.folder / name}: {exc.strerror}") from None
        with os.fdopen(handle, "w", encoding="utf-8", errors="surrogateescape") as stream:
            stream.write(label)
        return self.folder / name
