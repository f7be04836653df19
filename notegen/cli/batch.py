"""Drafting many cases in one process: folders, lists of files, or JSON Lines.

Rules, vocabularies and templates are loaded once by the `Drafter`. A bad case is
reported on stderr with its message and the others are still drafted; the exit status
is non-zero at the end when any case was rejected. Notes are written to a temporary
file and renamed, so a partial note is never left behind, and two cases never write
to the same note file in one run. Cases are read, drafted and written one at a time, so
memory does not grow with the number of cases; on a terminal, a progress line is kept
on standard error.
"""

from __future__ import annotations

import os
import sys
import tempfile
import time
from collections.abc import Iterable, Iterator
from pathlib import Path
from typing import TYPE_CHECKING, BinaryIO, TextIO

from notegen.errors import CaseFileError, InputError, NotegenError, UsageError, printable
from notegen.intake.files import MAX_BYTES, parse_json
from notegen.pipeline import Drafter, DraftOptions

if TYPE_CHECKING:
    from notegen.cli.outputs import NoteFolder

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
    path = Path(path)
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


def expand_sources(sources: Iterable[str]) -> Iterator[str | InputError]:
    """Files as given; folders as their case files, sorted by name; an error for a folder without any."""
    for source in sources:
        path = Path(source)
        if source != "-" and path.is_dir():
            found = sorted(str(p) for p in path.iterdir() if p.suffix in CASE_SUFFIXES and p.is_file())
            if not found:
                yield InputError(f"{source}: no case files ({', '.join(CASE_SUFFIXES)}) in this folder")
            yield from found
        else:
            yield source


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


def _jsonl_cases(sources: list[str], stdin: BinaryIO) -> Iterator[tuple[str, object]]:
    for source in sources or ["-"]:
        name = "<stdin>" if source == "-" else source
        try:
            stream = stdin if source == "-" else Path(source).open("rb")
        except OSError as exc:
            yield name, InputError(f"{name}: cannot be read ({exc.strerror})")
            continue
        try:
            for number, raw in enumerate(_bounded_lines(stream), start=1):
                if raw.strip():
                    yield f"{name}:{number}", _jsonl_line(raw, name, number)
        finally:
            if stream is not stdin:
                stream.close()


class _Progress:
    """A one-line count on standard error, drawn only when it is a terminal, at most ten times a second."""

    WIDTH = 30

    def __init__(self, stream: TextIO, total: int | None) -> None:
        self.stream = stream
        self.total = total
        self.enabled = _is_terminal(stream)
        self.drawn = 0  # length of the line on screen, 0 when none
        self.last = 0.0

    def update(self, done: int) -> None:
        if not self.enabled:
            return
        now = time.monotonic()
        if now - self.last < 0.1 and done != self.total:
            return
        self.last = now
        if self.total:
            filled = self.WIDTH * done // self.total
            text = f"notegen: drafting [{'#' * filled}{'.' * (self.WIDTH - filled)}] {done}/{self.total}"
        else:
            text = f"notegen: drafting, {done} done"
        self.stream.write("\r" + text.ljust(self.drawn))
        self.stream.flush()
        self.drawn = len(text)

    def clear(self) -> None:
        """Wipe the line, so a message or the summary starts at the left margin."""
        if self.drawn:
            self.stream.write("\r" + " " * self.drawn + "\r")
            self.drawn = 0


def _is_terminal(stream: TextIO) -> bool:
    try:
        return stream.isatty()
    except (AttributeError, ValueError):  # no isatty, or a closed stream
        return False


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


def _note_stem(label: str, jsonl: bool) -> str:
    """The note's file name without extension: the case file's, and the line number for JSON Lines."""
    name = label.rsplit(":", 1)[0] if jsonl else label
    stem = "stdin" if name in ("-", "<stdin>") else Path(name).stem
    return f"{stem}-{label.rsplit(':', 1)[-1]}" if jsonl else stem  # the line number: stable across runs


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
    """Draft every case; return the exit status (0 all drafted, 2 some rejected, 1 some failed unexpectedly).

    Messages, the progress line (when `stderr` is a terminal) and the summary go to `stderr`,
    standard error by default. `jobs` > 1 drafts on that many worker processes (0: one per core);
    results are written in input order all the same (`notegen.cli.parallel`).
    """
    from contextlib import closing, nullcontext

    from notegen.cli.outputs import NoteFolder
    from notegen.cli.parallel import Job, drafted, job_count

    errors = stderr if stderr is not None else sys.stderr

    if out_dir is not None:
        try:
            out_dir.mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise UsageError(f"--out {out_dir}: cannot make the folder ({exc.strerror})") from None
    if out_dir is None and options.output_format == "html":
        raise UsageError("several HTML notes need --out FOLDER: each note is a page of its own")
    workers = job_count(jobs)
    items: Iterator[tuple[str, object]]
    if jsonl:
        items = _jsonl_cases(sources, sys.stdin.buffer)
        progress = _Progress(errors, None)
    else:
        files = list(expand_sources(sources))  # paths only, to know the total
        items = ((str(s), s) if isinstance(s, InputError) else (s, None) for s in files)
        progress = _Progress(errors, len(files))
    single_line = options.output_format == "json" and out_dir is None  # JSON Lines on standard output
    job = Job(drafter.rules_dirs, drafter.template, options, jsonl, single_line, window_hours)
    outcomes = drafted(
        items,
        job,
        jobs=workers,
        drafter=drafter,
        read_stdin=lambda: sys.stdin.buffer.read(MAX_BYTES + 1),  # one byte past the limit is enough to refuse
    )
    notes = NoteFolder(out_dir) if out_dir is not None else None
    with closing(outcomes), notes if notes is not None else nullcontext():  # the pool stops however this ends
        counts = _write_outcomes(outcomes, notes, options, jsonl, single_line, progress, errors)
    drafted_count, rejected, failed = counts
    progress.clear()
    summary = f"{drafted_count} drafted, {rejected} rejected"
    print(f"notegen: {summary}" + (f", {failed} failed unexpectedly" if failed else ""), file=errors)
    if failed:
        return 1
    return 0 if rejected == 0 else 2


def _write_outcomes(
    outcomes: Iterator[tuple[str, object]],
    notes: NoteFolder | None,
    options: DraftOptions,
    jsonl: bool,
    single_line: bool,
    progress: _Progress,
    errors: TextIO,
) -> tuple[int, int, int]:
    """Write or print each result in order, report each refusal once; (drafted, rejected, failed)."""
    from notegen.cli.parallel import Drafted

    drafted = rejected = failed = 0
    extension = _EXTENSIONS[options.output_format]
    for label, outcome in outcomes:
        progress.update(drafted + rejected + failed)
        try:
            if not isinstance(outcome, Drafted):
                raise outcome  # type: ignore[misc]
            note, case_label = outcome.note, outcome.case_label
            target = None
            if notes is not None:
                target = notes.claim(f"{_note_stem(label, jsonl)}{extension}", label)
        except NotegenError as error:
            rejected += 1
            progress.clear()
            print(f"notegen: {error}", file=errors)
            continue
        except Exception as error:  # noqa: BLE001 - one case's bug must not lose the other cases
            failed += 1
            progress.clear()
            print(
                f"notegen: {label}: unexpected error ({type(error).__name__}): {error}. "
                "Please report this with the input that caused it.",
                file=errors,
            )
            continue
        drafted += 1
        if target is not None:
            write_atomically(target, note)
        else:
            if not single_line:
                # Several notes in one stream: each starts with a line naming its case, so that no
                # note can be taken for the one before it (a brief note names no case of its own).
                sys.stdout.write(("\n" if drafted > 1 else "") + _note_header(label, case_label, options) + "\n\n")
            sys.stdout.write(note if note.endswith("\n") else note + "\n")
            if jsonl:
                # A program that keeps one process open and writes a case at a time reads each result
                # as soon as it is drafted, not when a pipe's buffer fills (see the README).
                sys.stdout.flush()
    return drafted, rejected, failed
