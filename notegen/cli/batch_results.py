"""What a batch says about each case, and what keeps it from losing one.

- One JSON result per input, in order: a drafted case's JSON output with an `input` member
  (file, line, case label) in front, or, for a refused case, the `input` member and an
  `error` object (message, field, line) instead of the note.
- Inputs are never overwritten: an output that is an input file is refused.
- SIGTERM stops a batch as Ctrl-C does, so temporary files are removed and the summary printed;
  a note is written with both signals held back, so a stop never leaves a `.part` file.
"""

from __future__ import annotations

import contextlib
import io
import json
import os
import signal
import sys
import threading
from collections.abc import Iterable, Iterator, Sequence
from dataclasses import dataclass
from pathlib import Path

from notegen.errors import CaseFileError, CaseValueError, NotegenError, UsageError

_HELD = (signal.SIGINT, signal.SIGTERM)


@dataclass(frozen=True)
class BatchInput:
    """Where one case of a batch comes from: its file (`<stdin>` for a pipe) and, for JSON Lines, its line."""

    file: str
    line: int | None = None

    @property
    def label(self) -> str:
        return self.file if self.line is None else f"{self.file}:{self.line}"


def _input_member(where: BatchInput, case_label: str | None) -> str:
    member = {"file": where.file, "line": where.line, "label": case_label}
    return json.dumps(member, ensure_ascii=False, separators=(",", ":"))


def result_line(note_json: str, where: BatchInput, case_label: str | None) -> str:
    """A drafted case's one-line JSON output with `"input": {file, line, label}` as its first member."""
    body = note_json.strip()
    rest = body[1:].lstrip()
    joiner = "" if rest.startswith("}") else ","
    return f'{{"input":{_input_member(where, case_label)}{joiner}{rest}\n'


def unknown_medications_line(label: str, names: Sequence[str]) -> str:
    """One line per input naming the medications not in the vocabulary (kept in the note, not reasoned with)."""
    if len(names) == 1:
        return f"{label}: medication {names[0]!r} is not in notegen's vocabulary; it was kept but not reasoned with"
    shown = ", ".join(repr(name) for name in names)
    return f"{label}: medications {shown} are not in notegen's vocabulary; they were kept but not reasoned with"


def error_line(error: NotegenError, where: BatchInput, case_label: str | None) -> str:
    """A refused case's one-line result: its input and an `error` object (message, field, line)."""
    field = error.problems[0][0] if isinstance(error, CaseValueError) and error.problems else None
    line = error.line if isinstance(error, CaseFileError) and error.line is not None else where.line
    problem = json.dumps({"message": str(error), "field": field, "line": line}, ensure_ascii=False,
                         separators=(",", ":"))
    return f'{{"input":{_input_member(where, case_label)},"error":{problem}}}\n'


def case_label_of(payload: object) -> str | None:
    """The case label of a case not yet validated, when it is plainly one (for a refused case's result)."""
    if isinstance(payload, dict):
        label = payload.get("case")
        if isinstance(label, str) and len(label) <= 500 and label.isprintable():
            return label
    return None


def file_id(path: Path) -> tuple[int, int] | None:
    """The file's (device, inode), what `os.path.samefile` compares; None when it cannot be read."""
    try:
        found = path.stat()
    except OSError:
        return None
    return found.st_dev, found.st_ino


def same_file(one: Path, other: Path) -> bool:
    try:
        return os.path.samefile(one, other)
    except OSError:
        return False


def refuse_output_over_inputs(output: Path, inputs: Iterable[str]) -> None:
    """Raise UsageError when `output` is one of the input files: drafting would overwrite it."""
    for source in inputs:
        if source != "-" and same_file(output, Path(source)):
            raise UsageError(f"{output} is the input {source}; writing the note there would overwrite that input. "
                             "Choose another output file")


def refuse_out_folder_over_inputs(out_dir: Path, inputs: Iterable[str], extension: str,
                                  case_suffixes: Iterable[str]) -> None:
    """Raise UsageError when `out_dir` is an input folder, or holds an input file, and the notes'
    extension is a case file's: a note could then be written over a case."""
    if extension not in case_suffixes or not out_dir.is_dir():
        return
    for source in inputs:
        if source != "-" and (same_file(Path(source), out_dir) or same_file(Path(source).parent, out_dir)):
            raise UsageError(
                f"--output-folder {out_dir} holds the input {source}, and {extension} notes written there could "
                "overwrite case files; choose another folder for the notes")


def remove_stale_note(target: Path, inputs: Iterable[Path] = ()) -> str | None:
    """Remove the note an earlier run left at `target` for a case now refused; say what was done, or None.

    An input file is never removed, nor anything but a regular file.
    """
    try:
        if not target.is_file() or target.is_symlink() or any(same_file(target, source) for source in inputs):
            return None
        target.unlink()
    except OSError as exc:
        return f"the earlier note {target} could not be removed ({exc.strerror}); it is not this run's"
    return f"the earlier note {target} was removed, so no note of an earlier run is taken for this one"


@dataclass
class Counts:
    """What became of a batch's cases, for its summary and exit status."""

    drafted: int = 0
    rejected: int = 0
    unwritten: int = 0
    failed: int = 0
    blank: int = 0

    @property
    def done(self) -> int:
        return self.drafted + self.rejected + self.unwritten + self.failed

    def summary(self) -> str:
        text = f"{self.drafted} drafted, {self.rejected} rejected"
        if self.unwritten:
            text += f", {self.unwritten} not written"
        text += f", {self.failed} failed unexpectedly" if self.failed else ""
        return text + (f" ({self.blank} blank line{'s' if self.blank > 1 else ''} skipped)" if self.blank else "")

    def status(self) -> int:
        if self.failed:
            return 1
        return 0 if self.rejected + self.unwritten == 0 else 2


def quiet_stdout() -> None:
    """Point standard output at the null device, so the interpreter's last flush to a closed pipe says nothing."""
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        os.close(devnull)
    except (OSError, ValueError, AttributeError, io.UnsupportedOperation):
        pass


class Stopped(BaseException):
    """The batch was stopped by SIGTERM; handled as Ctrl-C is."""


@contextlib.contextmanager
def stop_on_sigterm() -> Iterator[None]:
    """While the batch runs, SIGTERM raises `Stopped` (in the main thread only; elsewhere nothing changes)."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return

    def stop(signum: int, frame: object) -> None:
        raise Stopped(signum)

    previous = signal.signal(signal.SIGTERM, stop)
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, previous)


@contextlib.contextmanager
def signals_held() -> Iterator[None]:
    """Hold SIGINT and SIGTERM back while a note is written and renamed; they arrive just after."""
    can_hold = hasattr(signal, "pthread_sigmask") and threading.current_thread() is threading.main_thread()
    if not can_hold:
        yield
        return
    previous = signal.pthread_sigmask(signal.SIG_BLOCK, _HELD)
    try:
        yield
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, previous)
