"""Writing a batch's notes into `--output-folder FOLDER` without keeping every written path in memory.

Two cases of one run must never write the same note file (`a.yaml` and `a.json` both make
`a.md`). The check lives on the file system, not in a set that grows with the batch: before a
note is written, a marker named after the note is made exclusively in a hidden folder of this run
inside FOLDER (a hard link to one empty file of the run: linking fails when the name exists, and
costs a directory entry, where creating a file costs an inode, a quarter of a millisecond on some
disks). Each claimed name and its case's label are appended to a log in the same folder, read
back only to name the first case when a second one is refused. A note left by an earlier run is
replaced, as before (only this run's markers count), and the markers' folder is removed when the
run ends.
The note itself is written to a temporary name and renamed, so an interrupted batch leaves no
half-written note.

On a file system that folds case (`A.md` and `a.md` are one file), the markers fold the same way
as the notes, so such a pair is caught too.
"""

from __future__ import annotations

import contextlib
import json
import os
import shutil
import tempfile
from pathlib import Path
from types import TracebackType
from typing import TextIO

from notegen.errors import InputError, UsageError

__all__ = ["NoteFolder"]

MARKERS_PREFIX = ".notegen-run-"
_SEED = "seed"  # a note's name always has an extension, so neither of these is ever a note's
_LOG = "claims"


class NoteFolder:
    """The notes of one batch run in `folder`: `claim` a note's name for a case, then `write` it.

    Use as a context manager; leaving it removes this run's markers.
    """

    def __init__(self, folder: Path) -> None:
        self.folder = Path(folder)
        self.markers: Path | None = None
        self._log: TextIO | None = None

    def __enter__(self) -> NoteFolder:
        try:
            self.markers = Path(tempfile.mkdtemp(prefix=MARKERS_PREFIX, dir=self.folder))
            (self.markers / _SEED).touch(mode=0o600)
            self._log = (self.markers / _LOG).open("w", encoding="utf-8")
        except OSError as exc:
            self.close()
            raise UsageError(f"--output-folder {self.folder}: cannot write in the folder ({exc.strerror})") from None
        return self

    def __exit__(
        self, kind: type[BaseException] | None, error: BaseException | None, traceback: TracebackType | None
    ) -> None:
        self.close()

    def close(self) -> None:
        if self._log is not None:
            self._log.close()
            self._log = None
        if self.markers is not None:
            _remove_streaming(self.markers)
            self.markers = None

    def claim(self, name: str, label: str) -> Path:
        """The path of note `name` for the case `label`; InputError if another case of this run has it."""
        if self.markers is None or self._log is None:
            raise RuntimeError("NoteFolder.claim outside its `with` block")
        marker = self.markers / name
        try:
            try:
                os.link(self.markers / _SEED, marker)
            except FileExistsError:
                raise
            except OSError:  # a file system without hard links: an empty file, created exclusively
                os.close(os.open(marker, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600))
        except FileExistsError:
            raise InputError(
                f"{label}: its note would overwrite the note of {self._first(name)} ({name}); "
                "rename one of the two cases"
            ) from None
        except OSError as exc:
            raise UsageError(f"cannot write {self.folder / name}: {exc.strerror}") from None
        self._log.write(json.dumps([name, label]) + "\n")
        return self.folder / name

    def claimed(self, name: str) -> bool:
        """Whether a case of this run holds note `name` (so a refused case must not remove that note)."""
        return self.markers is not None and os.path.lexists(self.markers / name)

    def release(self, name: str) -> None:
        """Give up note `name`, claimed by a case whose note could not be written after all."""
        if self.markers is not None:
            with contextlib.suppress(FileNotFoundError):
                os.unlink(self.markers / name)

    def _first(self, name: str) -> str:
        """The label of the case that claimed `name` first, read back from the log (only on a collision)."""
        assert self.markers is not None and self._log is not None
        self._log.flush()
        folded = name.casefold()  # a file system that folds case folds the markers too
        first = "another case"
        with (self.markers / _LOG).open(encoding="utf-8") as log:
            for line in log:
                claimed, label = json.loads(line)
                if claimed == name:
                    return str(label)
                if claimed.casefold() == folded and first == "another case":
                    first = str(label)
        return first


def _remove_streaming(folder: Path) -> None:
    """Remove a flat folder of markers, reading its entries as they come.

    `shutil.rmtree` lists the whole folder first: one entry object per note of the run at once,
    the very memory the markers are there to avoid (about 19 MiB more at 100,000 notes).
    """
    try:
        for _ in range(3):  # entries removed while the folder is read may make a pass miss some
            removed = 0
            with os.scandir(folder) as entries:
                for entry in entries:
                    with contextlib.suppress(FileNotFoundError):
                        os.unlink(entry.path)
                    removed += 1
            if not removed:
                break
        os.rmdir(folder)
    except OSError:
        shutil.rmtree(folder, ignore_errors=True)  # anything unforeseen: the plain way
