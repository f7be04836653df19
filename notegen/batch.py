"""Drafting many cases in one process: folders, lists of files, or JSON Lines.

Rules, vocabularies and templates are loaded once by the `Drafter`. A bad case is
reported on stderr with its message and the others are still drafted; the exit status
is non-zero at the end when any case was rejected. Notes are written to a temporary
file and renamed, so a partial note is never left behind.
"""

from __future__ import annotations

import json
import os
import sys
import tempfile
from collections.abc import Iterable, Iterator
from pathlib import Path
from typing import TextIO

from .drafting import DraftOptions, Drafter
from .errors import InputError, NotegenError
from .validation import validate_case

CASE_SUFFIXES = (".yaml", ".yml", ".json")
_EXTENSIONS = {"markdown": ".md", "text": ".txt", "html": ".html", "json": ".json"}


def write_atomically(path: Path, text: str) -> None:
    """Write `text` to `path` through a temporary file in the same folder and a rename."""
    path = Path(path)
    handle, temporary = tempfile.mkstemp(dir=path.parent or Path("."), prefix=f".{path.name}.", suffix=".part")
    try:
        with os.fdopen(handle, "w", encoding="utf-8") as stream:
            stream.write(text)
        os.replace(temporary, path)
    except BaseException:
        Path(temporary).unlink(missing_ok=True)
        raise


def expand_sources(sources: Iterable[str]) -> Iterator[str]:
    """Files as given; folders as their case files, sorted by name."""
    for source in sources:
        path = Path(source)
        if source != "-" and path.is_dir():
            yield from sorted(str(p) for p in path.iterdir() if p.suffix in CASE_SUFFIXES and p.is_file())
        else:
            yield source


def _jsonl_cases(sources: list[str]) -> Iterator[tuple[str, object]]:
    streams: list[tuple[str, TextIO]] = []
    for source in sources or ["-"]:
        if source == "-":
            streams.append(("<stdin>", sys.stdin))
        else:
            streams.append((source, Path(source).open(encoding="utf-8")))
    for name, stream in streams:
        try:
            for number, line in enumerate(stream, start=1):
                if not line.strip():
                    continue
                label = f"{name}:{number}"
                try:
                    yield label, json.loads(line)
                except json.JSONDecodeError as exc:
                    yield label, InputError(f"{label}, column {exc.colno}: not valid JSON: {exc.msg}")
        finally:
            if stream is not sys.stdin:
                stream.close()


def run_batch(
    sources: list[str],
    drafter: Drafter,
    options: DraftOptions,
    *,
    out_dir: Path | None,
    jsonl: bool,
    window_hours: float,
) -> int:
    """Draft every case; return the exit status (0 all drafted, 2 some rejected)."""
    from .intake import read_case

    if out_dir is not None:
        out_dir.mkdir(parents=True, exist_ok=True)
    drafted = rejected = 0
    extension = _EXTENSIONS[options.output_format]
    items: Iterator[tuple[str, object]]
    if jsonl:
        items = _jsonl_cases(sources)
    else:
        items = ((source, None) for source in expand_sources(sources))
    single_line = options.output_format == "json" and (jsonl or out_dir is None)
    for label, payload in items:
        try:
            if isinstance(payload, NotegenError):
                raise payload
            if jsonl:
                case = validate_case(payload, filename=label, window_hours=window_hours)
            else:
                case = read_case(label, window_hours=window_hours)
            note = drafter.draft(case, options)
        except NotegenError as error:
            rejected += 1
            print(f"notegen: {error}", file=sys.stderr)
            continue
        drafted += 1
        if out_dir is not None:
            stem = Path(label.split(":")[0]).stem if not jsonl else f"{Path(label.split(':')[0]).stem}-{drafted + rejected}"
            write_atomically(out_dir / f"{stem}{extension}", note)
        elif single_line:
            sys.stdout.write(json.dumps(json.loads(note), ensure_ascii=False, separators=(",", ":")) + "\n")
        else:
            sys.stdout.write(note if note.endswith("\n") else note + "\n")
    print(f"notegen: {drafted} drafted, {rejected} rejected", file=sys.stderr)
    return 0 if rejected == 0 else 2
