"""Drafting many cases in one process: folders, lists of files, or JSON Lines.

Rules, vocabularies and templates are loaded once by the `Drafter`. A bad case is
reported on stderr with its message and the others are still drafted; the exit status
is non-zero at the end when any case was rejected. Notes are written to a temporary
file and renamed, so a partial note is never left behind, and two cases never write
to the same note file in one run (checked on the file system, `notegen.cli.outputs`). Cases are
read, drafted and written one at a time, so memory does not grow with the number of cases; on a
terminal, a progress line is kept on standard error. With `--jobs N` worker processes draft the
cases (`notegen.cli.parallel`) and this process still writes, counts and reports each, in order.
"""

from __future__ import annotations

import os
import sys
import tempfile
from collections.abc import Callable, Iterable, Iterator
from contextlib import closing
from dataclasses import dataclass, field
from functools import cached_property
from pathlib import Path
from typing import TYPE_CHECKING, BinaryIO, TextIO

from notegen.cli.batch_results import (
    BatchInput,
    Counts,
    Stopped,
    case_label_of,
    error_line,
    file_id,
    quiet_stdout,
    refuse_out_folder_over_inputs,
    remove_stale_note,
    result_line,
    signals_held,
    stop_on_sigterm,
    unknown_medications_line,
)
from notegen.cli.progress import Progress as _Progress
from notegen.errors import CaseFileError, InputError, NotegenError, NothingToAssessError, UsageError, printable
from notegen.intake.files import MAX_BYTES, parse_json
from notegen.pipeline import Drafter, DraftOptions

if TYPE_CHECKING:
    from notegen.cli.outputs import NoteFolder
    from notegen.cli.parallel import Job, Outcome

CASE_SUFFIXES = (".yaml", ".yml", ".json")
_EXTENSIONS = {"markdown": ".md", "text": ".txt", "html": ".html", "json": ".json"}


def _current_umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def write_atomically(path: Path, text: str) -> None:
    """Write `text` to `path` through a temporary file in the same folder and a rename.

    Raises UsageError when the file cannot be written (no such folder, no permission,
    disk full); the temporary file is removed whatever happens.
    """
    with signals_held():  # a stop arrives after the rename or the clean-up, never between
        _write_atomically(Path(path), text)


def _write_atomically(path: Path, text: str) -> None:
    try:
        handle, temporary = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".part")
    except OSError as exc:
        raise UsageError(f"cannot write {path}: {exc.strerror}") from None
    try:
        with os.fdopen(handle, "w", encoding="utf-8") as stream:
            stream.write(text)
        os.chmod(temporary, 0o666 & ~_current_umask())  # mkstemp makes 0600; a note follows the umask
        os.replace(temporary, path)
    except OSError as exc:
        Path(temporary).unlink(missing_ok=True)
        raise UsageError(f"cannot write {path}: {exc.strerror}") from None
    except BaseException:
        Path(temporary).unlink(missing_ok=True)
        raise


def expand_sources(
    sources: Iterable[str], warn: Callable[[str], None] | None = None
) -> Iterator[str | InputError]:
    """Files as given; folders as their case files, sorted by name; an error for a folder without any.

    A folder entry with a case-file suffix in any letter case (`.YAML`, `.Json`, `.yml`) is a case:
    one that cannot be read (a dangling or looping link, a socket) is yielded as an error, never
    skipped. Subfolders are not read; `warn` is told their names.
    """
    for source in sources:
        path = Path(source)
        if source != "-" and path.is_dir():
            found: list[str | InputError] = []
            subfolders: list[str] = []
            for entry in sorted(path.iterdir()):
                if entry.is_dir():
                    subfolders.append(entry.name)
                elif entry.suffix.lower() in CASE_SUFFIXES:
                    found.append(str(entry) if entry.is_file() else _unreadable(entry))
            if subfolders and warn is not None:
                warn(f"{source}: subfolders are not read (give them as folders of their own): "
                     + ", ".join(printable(name) for name in subfolders[:10])
                     + (f" and {len(subfolders) - 10} more" if len(subfolders) > 10 else ""))
            if not found:
                yield InputError(f"{source}: no case files ({', '.join(CASE_SUFFIXES)}) in this folder")
            yield from found
        else:
            yield source


def _unreadable(entry: Path) -> InputError:
    try:
        entry.stat()
    except OSError as exc:
        why = exc.strerror or type(exc).__name__
        link = " (a symbolic link)" if entry.is_symlink() else ""
        return InputError(f"{entry}: looks like a case file but cannot be read{link}: {why}")
    return InputError(f"{entry}: looks like a case file but is not a regular file")


def _bounded_lines(stream: BinaryIO) -> Iterator[bytes]:
    """The stream's lines; a line longer than `MAX_BYTES` is cut there and the rest skipped (never held)."""
    while line := stream.readline(MAX_BYTES + 1):
        if len(line) > MAX_BYTES and not line.endswith(b"\n"):
            while (rest := stream.readline(MAX_BYTES)) and not rest.endswith(b"\n"):
                pass
        yield line


def _jsonl_line(raw: bytes, name: str, number: int) -> object:
    label = f"{name}:{number}"
    if len(raw) > MAX_BYTES:
        return InputError(f"{label}: the line is longer than {MAX_BYTES:,} bytes; a case is a few kilobytes")
    try:
        text = raw.decode("utf-8-sig" if number == 1 else "utf-8")
    except UnicodeDecodeError as exc:
        return InputError(f"{label}: not UTF-8 text (byte 0x{raw[exc.start]:02x}); save the file as UTF-8")
    try:
        return parse_json(text, label)
    except CaseFileError as error:
        # one line of JSON Lines is one line: keep its column, drop parse_json's "line 1"
        detail = error.message.split(": ", 1)[-1]
        column = f", column {error.column}" if error.column is not None else ""
        return InputError(f"{label}{column}: {detail}")


_BLANK = object()  # a blank line of JSON Lines: no case, yet a result line, so no reader loses its place


def _jsonl_cases(sources: list[str], stdin: BinaryIO) -> Iterator[tuple[BatchInput, object]]:
    """Every line of every source; a blank line is `_BLANK` (one result is written per input line)."""
    for source in sources or ["-"]:
        name = "<stdin>" if source == "-" else source
        try:
            stream = stdin if source == "-" else Path(source).open("rb")
        except OSError as exc:
            yield BatchInput(name), InputError(f"{name}: cannot be read ({exc.strerror})")
            continue
        try:
            for number, raw in enumerate(_bounded_lines(stream), start=1):
                where = BatchInput(name, number)
                yield where, _jsonl_line(raw, name, number) if raw.strip() else _BLANK
        finally:
            if stream is not stdin:
                stream.close()


def _note_header(source: str, case_label: str | None, options: DraftOptions) -> str:
    """The line that opens one of several notes written to standard output: its input, and its case label."""
    from notegen.render.ascii_fold import fold_to_ascii
    from notegen.render.markdown_escape import escape_markdown

    name = printable(source, None) + (f": {printable(case_label, None)}" if case_label else "")
    if options.output_format == "markdown":
        name = escape_markdown(name)
    elif options.ascii_only:
        name = fold_to_ascii(name)
    return f"=== {name} ==="


def _note_stem(where: BatchInput) -> str:
    """The note's file name without extension: the case file's, and the line number for JSON Lines."""
    stem = "stdin" if where.file in ("-", "<stdin>") else Path(where.file).stem
    return stem if where.line is None else f"{stem}-{where.line}"  # the line number: stable across runs


class _NotWritten(Exception):
    """A drafted note could not be written: that case's failure, not the batch's."""


@dataclass
class _Batch:
    """One run over many cases: each case is read, drafted and written, or reported; never lost."""

    drafter: Drafter
    options: DraftOptions
    out_dir: Path | None
    jsonl: bool
    window_hours: float
    errors: TextIO
    inputs: frozenset[Path] = frozenset()
    counts: Counts = field(default_factory=Counts)
    notes: NoteFolder | None = None  # this run's claims on note names, on disk (memory stays constant)
    stdin_bytes: bytes | None = None
    progress: _Progress | None = None
    current: BatchInput | None = None  # the case being settled, for the summary of a stopped run
    input_ids: frozenset[tuple[int, int] | None] | None = None  # the inputs' identities, read when first needed

    @property
    def single_line(self) -> bool:  # JSON Lines on standard output: one result per input
        return self.options.output_format == "json" and self.out_dir is None

    def say(self, message: str) -> None:
        if self.progress is not None:
            self.progress.clear()
        print(f"notegen: {message}", file=self.errors)

    def target(self, where: BatchInput) -> Path | None:
        if self.out_dir is None:
            return None
        return self.out_dir / f"{_note_stem(where)}{_EXTENSIONS[self.options.output_format]}"

    @cached_property
    def job(self) -> Job:  # what drafting a case needs beyond the case, here and in each worker
        from notegen.cli.parallel import Job
        return Job(self.drafter.rules_dirs, self.drafter.template, self.options, self.jsonl, self.single_line,
                   self.window_hours)

    def draft(self, where: BatchInput, payload: object) -> Outcome:
        """Read and draft one case in this process, as a worker does (`parallel.draft_one`): errors are returned."""
        from notegen.cli.parallel import draft_one

        if where.file == "-" and not self.jsonl and self.stdin_bytes is None:
            self.stdin_bytes = sys.stdin.buffer.read(MAX_BYTES + 1)  # one byte past the limit refuses
        return draft_one(self.drafter, self.job, where.label, payload, self.stdin_bytes)

    def check_target(self, where: BatchInput, target: Path) -> None:
        """Claim the note's name for this case; InputError if it is an input or another case's note."""
        if self.is_input(target):
            raise InputError(f"{where.label}: its note {target} would overwrite an input file; "
                             "choose another --output-folder")
        if self.notes is not None:
            self.notes.claim(target.name, where.label)

    def is_input(self, target: Path) -> bool:
        """Whether `target` is one of the inputs: one lookup per case, not one comparison per input."""
        found = file_id(target)
        if found is None:
            return False  # no such file yet: nothing to overwrite
        if self.input_ids is None:
            self.input_ids = frozenset(file_id(source) for source in self.inputs)
        return found in self.input_ids

    def written(self, target: Path) -> bool:
        """Whether a case of this run has written (or is writing) the note at `target`."""
        return self.notes is not None and self.notes.claimed(target.name)

    def blank(self, where: BatchInput) -> None:
        self.counts.blank += 1
        if self.single_line:
            self.write(error_line(InputError(f"{where.label}: the line is empty; no case"), where, None))
        self.clear_stale(self.target(where))  # an earlier run's note for this line is not this run's

    def run(self, items: Iterator[tuple[BatchInput, object]], workers: int) -> None:
        """Settle every case in input order, drafted here (one job) or by `workers` processes."""
        from notegen.cli.parallel import in_order

        if workers <= 1:
            for where, payload in items:
                self.started(where)
                self.one(where, payload)
                self.current = None
            return
        with closing(in_order(items, self.job, workers, blank=_BLANK)) as outcomes:  # the pool stops however this ends
            for (where, label), outcome in outcomes:
                self.started(where)
                self.drafted(where, label, outcome)
                self.current = None

    def started(self, where: BatchInput) -> None:
        if self.progress is not None:
            self.progress.update(self.counts.done)
        self.current = where

    def one(self, where: BatchInput, payload: object) -> None:
        """Draft one case here and write its note, or report why not; only a stop (Ctrl-C, SIGTERM) escapes."""
        if payload is _BLANK:
            return self.blank(where)
        self.drafted(where, case_label_of(payload), self.draft(where, payload))

    def drafted(self, where: BatchInput, label: str | None, outcome: Outcome | None) -> None:
        """Write or report a drafted case (here or by a worker); None is a blank line's place."""
        from notegen.cli.parallel import Drafted

        def opened() -> tuple[str, str | None]:
            if isinstance(outcome, Drafted):
                if outcome.unknown_medications:  # in the note too; said here so a pipeline's log shows it
                    self.say(unknown_medications_line(where.label, outcome.unknown_medications))
                return outcome.note, outcome.case_label
            raise outcome  # type: ignore[misc]  # a refusal or an error, raised here as in one process

        if outcome is None:
            return self.blank(where)
        self.settle(where, label, opened)

    def settle(self, where: BatchInput, label: str | None, draft: Callable[[], tuple[str, str | None]]) -> None:
        """Take one case's note from `draft` and write it, or report why not; only a stop escapes."""
        target = self.target(where)
        try:
            note, label = draft()
            if target is not None:
                self.check_target(where, target)
                try:
                    write_atomically(target, note)
                except BaseException as exc:
                    if self.notes is not None:
                        self.notes.release(target.name)  # not written: its name is free, its stale note goes
                    if isinstance(exc, UsageError | OSError | UnicodeError):
                        raise _NotWritten(f"{where.label}: drafted, but {exc}") from None
                    raise
            else:
                self.emit(where, note, label)
        except NotegenError as error:
            self.counts.rejected += 1
            self.refused(where, error, label, target)
            return
        except _NotWritten as problem:
            self.counts.unwritten += 1
            self.say(str(problem))
            self.clear_stale(target)
            return
        except BrokenPipeError:
            raise
        except Exception as error:  # noqa: BLE001 - one case's bug must not lose the other cases
            self.counts.failed += 1
            self.say(f"{where.label}: unexpected error ({type(error).__name__}): {error}. "
                     "Please report this with the input that caused it.")
            if self.single_line:
                self.write(error_line(NotegenError(f"{where.label}: unexpected error ({type(error).__name__})"),
                                      where, label))
            self.clear_stale(target)
            return
        self.counts.drafted += 1

    def refused(self, where: BatchInput, error: NotegenError, label: str | None, target: Path | None) -> None:
        if isinstance(error, NothingToAssessError):
            error = error.at(where.label)
        self.say(str(error))
        if self.single_line:
            self.write(error_line(error, where, label))
        if target is not None and not self.written(target):
            self.clear_stale(target)

    def clear_stale(self, target: Path | None) -> None:
        if target is not None and not self.written(target):
            said = remove_stale_note(target, self.inputs)
            if said is not None:
                self.say(said)

    def emit(self, where: BatchInput, note: str, label: str | None) -> None:
        if self.single_line:
            self.write(result_line(note, where, label))
            return
        # Several notes in one stream: each starts with a line naming its case, so that no
        # note can be taken for the one before it (a brief note names no case of its own).
        opening = ("\n" if self.counts.drafted else "") + _note_header(where.label, label, self.options) + "\n\n"
        self.write(opening + (note if note.endswith("\n") else note + "\n"))

    def write(self, text: str) -> None:
        sys.stdout.write(text)
        if self.jsonl:
            # A program that keeps one process open and writes a case at a time reads each result
            # as soon as it is drafted, not when a pipe's buffer fills (see the README).
            sys.stdout.flush()


def run_batch(
    sources: list[str],
    drafter: Drafter,
    options: DraftOptions,
    *,
    out_dir: Path | None,
    jsonl: bool,
    window_hours: float,
    stderr: TextIO | None = None,
    jobs: int = 1,
) -> int:
    """Draft every case; return the exit status (0 all drafted, 2 some rejected or not written, 1 some failed
    unexpectedly, 130 stopped by Ctrl-C or SIGTERM).

    Messages, the progress line (when `stderr` is a terminal) and the summary go to `stderr`,
    standard error by default. The summary is printed however the run ends. `jobs` > 1 drafts on that
    many worker processes (0: one per core); each case is still written and reported here, in input order.
    """
    from notegen.cli.outputs import NoteFolder
    from notegen.cli.parallel import job_count

    errors = stderr if stderr is not None else sys.stderr
    workers = job_count(jobs)
    extension = _EXTENSIONS[options.output_format]
    if out_dir is None and options.output_format == "html":
        raise UsageError("several HTML notes need --output-folder FOLDER: each note is a page of its own")
    if out_dir is not None:
        refuse_out_folder_over_inputs(out_dir, sources, extension, CASE_SUFFIXES)  # input folders, input files
        try:
            out_dir.mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise UsageError(f"--output-folder {out_dir}: cannot make the folder ({exc.strerror})") from None
    batch = _Batch(drafter, options, out_dir, jsonl, window_hours, errors,
                   inputs=frozenset(Path(s) for s in sources if s != "-"))
    items: Iterator[tuple[BatchInput, object]]
    if jsonl:
        items = _jsonl_cases(sources, sys.stdin.buffer)
        progress = _Progress(errors, None)
    else:
        files = list(expand_sources(sources, batch.say))  # paths only, to know the total
        batch.inputs = batch.inputs | {Path(s) for s in files if isinstance(s, str) and s != "-"}
        items = ((BatchInput(str(s)), s) if isinstance(s, InputError) else (BatchInput(s), None) for s in files)
        progress = _Progress(errors, len(files))
    batch.progress = progress
    stopped: tuple[str, int] | None = None  # why, and the exit status
    batch.notes = NoteFolder(out_dir).__enter__() if out_dir is not None else None
    try:
        with stop_on_sigterm():
            batch.run(items, workers)
    except KeyboardInterrupt:
        stopped = ("interrupted", 130)
    except Stopped:
        stopped = ("terminated", 143)
    except BrokenPipeError:
        stopped = ("standard output was closed", 141)
        quiet_stdout()
    finally:
        current = batch.current
        if batch.notes is not None:
            batch.notes.close()  # this run's markers go
        progress.clear()
        summary = batch.counts.summary()
        if stopped is not None:
            summary += (f"; stopped during {current.label} ({stopped[0]}): that case and any after it were not "
                        "drafted" if current is not None else f"; stopped ({stopped[0]}): any cases after these "
                        "were not drafted")
        batch.say(summary)
    return stopped[1] if stopped is not None else batch.counts.status()
