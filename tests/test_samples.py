"""Each invented sample drafts exactly its golden note (samples/expected/<stem>.md).

The goldens are written by `python tests/update_goldens.py`, run on purpose and reviewed.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from notegen.intake.read import read_case
from notegen.pipeline import Drafter, DraftOptions

SAMPLES = Path(__file__).resolve().parent.parent / "samples"
EXPECTED = SAMPLES / "expected"
CASES = sorted(SAMPLES.glob("*.yaml"))


@pytest.fixture(scope="module")
def drafter() -> Drafter:
    return Drafter()


def test_there_are_samples_and_each_has_a_golden_note() -> None:
    assert len(CASES) >= 6
    assert {path.stem for path in CASES} == {path.stem for path in EXPECTED.glob("*.md")}


@pytest.mark.parametrize("case_path", CASES, ids=[path.stem for path in CASES])
def test_sample_note_matches_its_golden_file(case_path: Path, drafter: Drafter) -> None:
    expected = (EXPECTED / f"{case_path.stem}.md").read_text(encoding="utf-8")
    assert drafter.draft(read_case(str(case_path))) == expected


@pytest.mark.parametrize("case_path", CASES, ids=[path.stem for path in CASES])
@pytest.mark.parametrize("fmt", ["text", "html", "json"])
def test_sample_drafts_in_every_format(case_path: Path, fmt: str, drafter: Drafter) -> None:
    output = drafter.draft(read_case(str(case_path)), DraftOptions(output_format=fmt, explain=True))
    assert output.endswith("\n") and "None" not in output
