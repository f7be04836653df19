"""Profile notegen with cProfile: one cold note, or a warm batch in one format.

    python bench/profile_notes.py cold                 # notegen draft samples/gastric_suction.yaml --format text
    python bench/profile_notes.py batch json 500       # 500 invented cases through the JSON Lines path
    python bench/profile_notes.py batch markdown 300

Prints the functions with the most cumulative time, then the most own time. The profiler's own
cost per call inflates small, often-called functions; read shares, and confirm with bench/run.py.
"""

from __future__ import annotations

import cProfile
import json
import pstats
import sys
from pathlib import Path

BENCH = Path(__file__).resolve().parent
ROOT = BENCH.parent
sys.path[:0] = [str(BENCH), str(ROOT)]

from cases import generate  # noqa: E402


def _report(profiler: cProfile.Profile, lines: int) -> None:
    stats = pstats.Stats(profiler, stream=sys.stdout)
    stats.sort_stats("cumulative").print_stats(lines)
    stats.sort_stats("tottime").print_stats(lines)


def cold() -> None:
    profiler = cProfile.Profile()
    profiler.enable()
    from notegen.cli.app import main

    main(["draft", str(ROOT / "samples" / "gastric_suction.yaml"), "--format", "text", "--output", "/dev/null"])
    profiler.disable()
    _report(profiler, 40)


def batch(output_format: str, count: int) -> None:
    from notegen.case.validation import validate_case
    from notegen.intake.files import parse_json
    from notegen.pipeline import Drafter, DraftOptions

    lines = [json.dumps(case) for case in generate(count)]
    drafter = Drafter()
    options = DraftOptions(output_format=output_format)

    def one(line: str) -> str:
        case = validate_case(parse_json(line, "bench"))
        if output_format == "json":
            return drafter.draft_json_line(case)
        return drafter.draft(case, options)

    for line in lines[:20]:  # load and compile everything first: the batch's steady state is profiled
        one(line)
    profiler = cProfile.Profile()
    profiler.enable()
    for line in lines:
        one(line)
    profiler.disable()
    _report(profiler, 45)


if __name__ == "__main__":
    if sys.argv[1:2] == ["batch"]:
        batch(sys.argv[2] if len(sys.argv) > 2 else "json", int(sys.argv[3]) if len(sys.argv) > 3 else 500)
    else:
        cold()
