"""How much of importing the rule engine is building its frozen, slotted dataclasses (issue 18).

    python bench/engine_records.py        # median of 15 fresh interpreters, milliseconds

Each run is a fresh interpreter: `dataclasses.dataclass` is wrapped to add up the time it spends
on notegen's classes while `notegen.engine` (with the note's other modules it imports) is imported.
The same run times the alternatives for one record of the same shape, created 30 times: a frozen
slotted dataclass, a typing.NamedTuple, and a plain class with __slots__ and a hand-written
__init__ and __setattr__ guard (immutable, but its fields' types are checked only by mypy, as
the dataclass's are).
"""

from __future__ import annotations

import json
import statistics
import subprocess
import sys

PROBE = r"""
import dataclasses, json, time
spent = [0.0, 0]
original = dataclasses.dataclass
def timed(cls=None, /, **kwargs):
    def wrap(c):
        started = time.perf_counter()
        made = original(**kwargs)(c)
        if c.__module__.startswith("notegen"):
            spent[0] += time.perf_counter() - started
            spent[1] += 1
        return made
    return wrap if cls is None else wrap(cls)
dataclasses.dataclass = timed
started = time.perf_counter()
import notegen.engine
whole = time.perf_counter() - started

from typing import NamedTuple
def make_dataclass():
    @original(frozen=True, slots=True)
    class R:
        id: str
        tree: str
        key: str
        reads: tuple
        source: str
        outcome: str | None
    return R
def make_namedtuple():
    class R(NamedTuple):
        id: str
        tree: str
        key: str
        reads: tuple
        source: str
        outcome: str | None
    return R
def make_slots():
    class R:
        __slots__ = ("id", "tree", "key", "reads", "source", "outcome")
        def __init__(self, id, tree, key, reads, source, outcome):
            s = object.__setattr__
            s(self, "id", id); s(self, "tree", tree); s(self, "key", key)
            s(self, "reads", reads); s(self, "source", source); s(self, "outcome", outcome)
        def __setattr__(self, name, value):
            raise AttributeError("frozen")
    return R
alternatives = {}
for name, make in (("dataclass", make_dataclass), ("namedtuple", make_namedtuple), ("slots", make_slots)):
    started = time.perf_counter()
    for _ in range(30):
        make()
    alternatives[name] = (time.perf_counter() - started) * 1e3
print(json.dumps({"engine import": whole * 1e3, "dataclasses": spent[0] * 1e3, "classes": spent[1], **alternatives}))
"""


def main() -> None:
    runs = [
        json.loads(subprocess.run([sys.executable, "-c", PROBE], capture_output=True, text=True, check=True).stdout)
        for _ in range(15)
    ]
    print(f"median of {len(runs)} fresh interpreters, ms:")
    for key in runs[0]:
        values = [run[key] for run in runs]
        print(f"  {key:>14}: {statistics.median(values):7.1f}  (spread {min(values):.1f}-{max(values):.1f})")


if __name__ == "__main__":
    main()
