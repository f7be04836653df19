"""Drafting a batch's cases on several cores, results in input order.

`drafted(items, ...)` turns the batch's (key, label, payload) items into (key, outcome) pairs, in
the order the items came: the outcome is `Drafted` (the note's text and the case's own label), the
exception that refused or broke the case, or None for an item with no label (nothing to draft, such
as a blank line; it keeps its place all the same). The key stays in this process; only the label
and the payload travel. With one job it drafts in this process, one case at a time; with more it
hands chunks of cases to the standard library's process pool, whose workers each hold one
`Drafter`, and keeps only a bounded number of chunks in flight, so memory does not grow with the
batch. Writing, counting and messages stay with the caller, in this process (`notegen.cli.batch`):
each result is seen once, in order, whichever worker drafted it.
"""

from __future__ import annotations

import multiprocessing
import multiprocessing.context
import os
import pickle
import signal
import sys
from collections import deque
from collections.abc import Callable, Generator, Iterable, Iterator
from concurrent.futures import Future, ProcessPoolExecutor
from dataclasses import dataclass
from itertools import islice
from pathlib import Path
from typing import Any, TypeVar

from notegen.cli.batch_results import BatchInput
from notegen.errors import NotegenError, UsageError
from notegen.intake.files import MAX_BYTES
from notegen.pipeline import Drafter, DraftOptions

CHUNK = 16  # cases per task: a task's round trip costs far less than drafting sixteen notes
IN_FLIGHT_PER_WORKER = 4  # chunks queued per worker: enough to keep it busy, few enough to bound memory


@dataclass(frozen=True, slots=True)
class Drafted:
    """One drafted note: its text and the case's own label (for the header of a note among several)."""

    note: str
    case_label: str | None
    unknown_medications: tuple[str, ...] = ()  # names not in the vocabulary, said on standard error


@dataclass(frozen=True, slots=True)
class Job:
    """What drafting a case needs beyond the case: the same in every worker."""

    rules_dirs: tuple[Path, ...]
    template: Path | None
    options: DraftOptions
    jsonl: bool
    single_line: bool
    window_hours: float


K = TypeVar("K")
Outcome = Drafted | BaseException
Task = tuple[str | None, object, bytes | None]  # label (None: nothing to draft), payload, standard input


def job_count(jobs: int) -> int:
    """`--jobs N`: N worker processes; 0 means one per core this process may run on."""
    if jobs < 0:
        raise UsageError(f"--jobs {jobs}: give a number of processes, or 0 for one per core")
    if jobs == 0:
        affinity = getattr(os, "sched_getaffinity", None)
        return len(affinity(0)) if affinity is not None else (os.cpu_count() or 1)
    return jobs


def draft_one(drafter: Drafter, job: Job, label: str, payload: object, stdin: bytes | None) -> Outcome:
    """Draft one batch item; a refusal or an unexpected error is returned, not raised."""
    from notegen.case.validation import validate_case

    try:
        if isinstance(payload, BaseException):
            raise payload
        if job.jsonl:
            case = validate_case(payload, filename=label, window_hours=job.window_hours)
        else:
            case = drafter.read_case(label, window_hours=job.window_hours, stdin=stdin)  # the service's date order
        if job.single_line:
            note = drafter.draft_json_line(case, explain=job.options.explain)
        else:
            note = drafter.draft(case, job.options)
    except Exception as error:  # noqa: BLE001 - handed to the caller, which reports and counts it
        return error
    return Drafted(note, case.label, tuple(m.name for m in case.context.meds if not m.recognised))


def drafted(
    items: Iterable[tuple[K, str | None, object]],
    job: Job,
    *,
    jobs: int = 1,
    drafter: Drafter | None = None,
    read_stdin: Callable[[], bytes] | None = None,
) -> Generator[tuple[K, Outcome | None], None, None]:
    """(key, outcome) for every item, in input order; `jobs` > 1 drafts on that many worker processes.

    `read_stdin` reads standard input's bytes for a `-` among the files (once, in this process).
    """
    stdin: list[bytes] = []

    def with_stdin(item: tuple[K, str | None, object]) -> tuple[K, Task]:
        key, label, payload = item
        if label == "-" and not job.jsonl and read_stdin is not None:
            if not stdin:
                stdin.append(read_stdin())
            return key, (label, payload, stdin[0])
        return key, (label, payload, None)

    tasks = map(with_stdin, items)
    if jobs <= 1:
        local = drafter if drafter is not None else Drafter(rules_dirs=job.rules_dirs, template=job.template)
        for key, task in tasks:
            yield key, _draft_task(local, job, task)
        return
    yield from _pooled(tasks, job, jobs)


def in_order(
    items: Iterable[tuple[BatchInput, object]], job: Job, jobs: int, *, blank: object
) -> Generator[tuple[tuple[BatchInput, str | None], Outcome | None], None, None]:
    """A batch's (input, payload) items drafted by `jobs` processes: ((input, case label), outcome), in order.

    A `blank` payload (a blank line) is not sent to a worker; its outcome is None. The case label of a
    case a worker refuses is read from its payload here, as in one process.
    """
    from notegen.cli.batch_results import case_label_of

    def tasks() -> Iterator[tuple[tuple[BatchInput, str | None], str | None, object]]:
        for where, payload in items:
            if payload is blank:
                yield (where, None), None, None
            else:
                yield (where, case_label_of(payload)), where.label, payload

    # one byte past the limit is enough to refuse a case on standard input
    return drafted(tasks(), job, jobs=jobs, read_stdin=lambda: sys.stdin.buffer.read(MAX_BYTES + 1))


def _draft_task(drafter: Drafter, job: Job, task: Task) -> Outcome | None:
    label, payload, data = task
    return None if label is None else draft_one(drafter, job, label, payload, data)


def _pooled(tasks: Iterator[tuple[K, Task]], job: Job, jobs: int) -> Iterator[tuple[K, Outcome | None]]:
    pending: deque[tuple[list[K], Future[list[Outcome | None]]]] = deque()
    limit = jobs * IN_FLIGHT_PER_WORKER
    executor = ProcessPoolExecutor(
        max_workers=jobs, mp_context=start_context(), initializer=_start_worker, initargs=(job,)
    )
    try:
        exhausted = False
        while True:
            while not exhausted and len(pending) < limit:
                chunk = list(islice(tasks, CHUNK))
                if not chunk:
                    exhausted = True
                    break
                pending.append(([key for key, _ in chunk], executor.submit(_draft_chunk, [t for _, t in chunk])))
            if not pending:
                break
            keys, future = pending.popleft()
            yield from zip(keys, future.result(), strict=True)
    finally:
        # on an interrupt or an error in the caller: drop what is queued, wait for no one
        executor.shutdown(wait=not sys.exc_info()[0], cancel_futures=True)


def start_context() -> multiprocessing.context.BaseContext:
    """How workers start: forked where that is safe and cheap (they inherit what this process loaded).

    From Python 3.12 forking a process that runs threads (the pool's own manager thread) is
    deprecated; there, a fork server starts the workers, which load notegen themselves.
    """
    methods = multiprocessing.get_all_start_methods()
    if sys.version_info < (3, 12) and "fork" in methods:
        return multiprocessing.get_context("fork")
    return multiprocessing.get_context("forkserver" if "forkserver" in methods else None)


_WORKER: dict[str, Any] = {}


def _start_worker(job: Job) -> None:
    # Ctrl-C reaches every process of the group: the batch's own process stops the pool and reports;
    # a worker stopping on its own would only add a traceback per worker.
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    _WORKER["drafter"] = Drafter(rules_dirs=job.rules_dirs, template=job.template)
    _WORKER["job"] = job


def _draft_chunk(chunk: list[Task]) -> list[Outcome | None]:
    drafter, job = _WORKER["drafter"], _WORKER["job"]
    return [_portable(_draft_task(drafter, job, task)) for task in chunk]


def _portable(outcome: Outcome | None) -> Outcome | None:
    """The outcome as it can travel back to the batch's process: an error that does not pickle is rebuilt."""
    if outcome is None or isinstance(outcome, Drafted):
        return outcome
    try:
        copy = pickle.loads(pickle.dumps(outcome))
        if type(copy) is type(outcome) and str(copy) == str(outcome):
            return outcome
    except Exception:  # noqa: BLE001, S110 - any failure to travel: rebuilt below
        pass
    if isinstance(outcome, NotegenError):
        rebuilt = NotegenError(str(outcome))
        rebuilt.exit_code = outcome.exit_code
        return rebuilt
    return stand_in(type(outcome).__name__, str(outcome))


class _StandIn(Exception):
    """An unexpected error that could not travel from a worker as it was."""

    def __reduce__(self) -> tuple[Callable[[str, str], Exception], tuple[str, str]]:
        return stand_in, (type(self).__name__, str(self))


def stand_in(kind: str, message: str) -> Exception:
    """An error of a class named `kind` holding `message`, so the batch reports it in the same words."""
    error: Exception = type(kind, (_StandIn,), {"__module__": __name__})(message)
    return error
