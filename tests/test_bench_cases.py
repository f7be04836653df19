"""The benchmark's invented cases stay valid cases: a benchmark that stops on its first case measures nothing.

No timing here (timing belongs in bench/); only that `bench/cases.py` makes cases notegen accepts
and drafts, with the mix its README describes.
"""

from __future__ import annotations

import sys
from pathlib import Path

from notegen.case.validation import validate_case
from notegen.pipeline import Drafter

BENCH = Path(__file__).resolve().parents[1] / "bench"


def test_every_bench_case_validates_and_drafts() -> None:
    sys.path.insert(0, str(BENCH))
    try:
        from cases import generate
    finally:
        sys.path.remove(str(BENCH))
    drafter = Drafter()
    walked = 0
    for case in generate(400):
        assessment = drafter.assess(validate_case(case))
        walked += assessment.chloride_class is not None or bool(assessment.differential)
    assert walked > 100  # about half have a metabolic alkalosis, so the rule walk runs
