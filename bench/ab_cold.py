"""Compare the cold note of two installed notegens, interleaved with the import floor.

    python bench/ab_cold.py VENV_A/bin/python VENV_B/bin/python [RUNS]

Each venv holds a wheel of one commit (`pip install PATH/TO/WHEEL`). The floor, A's note and B's
note run in turn, RUNS times (15 by default) after two warm-up rounds; the medians of their CPU
time (user + system, from each child's rusage) and each note's ratio to the floor are printed. A
small change (a few milliseconds) shows here when two separate runs of `run.py` would bury it in
the machine's noise.
"""

from __future__ import annotations

import statistics
import sys
import tempfile
from pathlib import Path

import run


def main(argv: list[str]) -> None:
    python_a, python_b = argv[0], argv[1]
    runs = int(argv[2]) if len(argv) > 2 else 15
    env = run._child_environment(Path(tempfile.mkdtemp(prefix="notegen-ab-")))

    def note(python: str) -> list[str]:
        script = str(Path(python).with_name("notegen"))
        return [script, "draft", str(run.SAMPLE.relative_to(run.ROOT)), "--format", "text"]

    commands = {"floor": [python_a, "-c", run.FLOOR], "A": note(python_a), "B": note(python_b)}
    for _ in range(2):
        for command in commands.values():
            run._run(command, env)
    cpu: dict[str, list[float]] = {name: [] for name in commands}
    for _ in range(runs):
        for name, command in commands.items():
            cpu[name].append(run._run(command, env)[1])
    median = {name: statistics.median(values) * 1e3 for name, values in cpu.items()}
    print(f"CPU time, median of {runs} interleaved runs: floor {median['floor']:.1f} ms")
    for name in ("A", "B"):
        print(f"  {name}: {median[name]:.1f} ms, ratio {median[name] / median['floor']:.3f}")


if __name__ == "__main__":
    sys.path.insert(0, str(Path(__file__).resolve().parent))
    main(sys.argv[1:])
