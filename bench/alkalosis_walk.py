"""Time the metabolic-alkalosis pack per case. Run: python bench/alkalosis_walk.py

Not a test: timings depend on the machine. Reports the best of several rounds, in microseconds,
for the engine walk alone (facts ready) and for the whole step (facts derived, result built).
"""

from __future__ import annotations

import sys
import time
import timeit
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from notegen.acidbase.calculations import compute_calculations  # noqa: E402
from notegen.acidbase.reading import read_acid_base  # noqa: E402
from notegen.engine import walk  # noqa: E402
from notegen.knowledge import shipped_knowledge  # noqa: E402
from notegen.workup.alkalosis import evaluate_alkalosis  # noqa: E402
from notegen.workup.facts import derive_facts  # noqa: E402
from tests.alkalosis_cases import alkalosis_case, med  # noqa: E402

CASES = {
    "vomiting": alkalosis_case(urine_cl=8, urine_na=40, findings=("vomiting",), k=3.1, volume="low"),
    "thiazide + vomiting": alkalosis_case(urine_cl=60, findings=("vomiting",), meds=(med("hydrochlorothiazide", 5),)),
    "hypertensive": alkalosis_case(urine_cl=55, bp=(168, 100), k=2.9),
    "nothing urinary": alkalosis_case(k=None, bp=None, creatinine=None),
}


def best_microseconds(function: object, number: int = 300) -> float:
    return min(timeit.repeat(function, number=number, repeat=7)) / number * 1e6  # type: ignore[arg-type]


def main() -> None:
    started = time.perf_counter()
    pack = shipped_knowledge().alkalosis_pack
    print(f"load, check and compile the pack: {(time.perf_counter() - started) * 1000:.1f} ms")
    for name, case in CASES.items():
        reading, calculations = read_acid_base(case), compute_calculations(case)
        facts = derive_facts(case, reading, pack, calculations)
        walk_only = best_microseconds(lambda: walk(pack, facts))  # noqa: B023
        whole = best_microseconds(lambda: evaluate_alkalosis(case, reading, pack, calculations=calculations))  # noqa: B023
        print(f"{name:>20}: walk {walk_only:6.0f} µs; facts + walk + result {whole:6.0f} µs")
    print(f"{'no facts at all':>20}: walk {best_microseconds(lambda: walk(pack, {})):6.0f} µs")


if __name__ == "__main__":
    main()
