"""The paste corpus: invented printouts as laboratory systems print them, each with its expected reading.

tests/paste_corpus/NAME.txt is a printout; NAME.expected.yaml holds what `parse_paste` must
return (`data` and `unused`, in order) or the exact refusal (`refused`). `case_refused` adds the
refusal the case loader must give when the paste alone is drafted (a unit it will not guess).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pytest
import yaml

from notegen.errors import CaseValueError, InputError
from notegen.intake.paste import parse_paste
from notegen.intake.read import read_case

CORPUS = Path(__file__).resolve().parents[1] / "paste_corpus"
PRINTOUTS = sorted(CORPUS.glob("*.txt"))


def _expected(path: Path) -> dict[str, Any]:
    loaded: dict[str, Any] = yaml.safe_load(path.with_suffix(".expected.yaml").read_text(encoding="utf-8"))
    return loaded


def test_the_corpus_covers_at_least_fifteen_formats() -> None:
    assert len(PRINTOUTS) >= 15
    assert all(path.with_suffix(".expected.yaml").exists() for path in PRINTOUTS)


@pytest.mark.parametrize("path", PRINTOUTS, ids=[path.stem for path in PRINTOUTS])
def test_each_printout_reads_as_expected(path: Path) -> None:
    expected = _expected(path)
    text = path.read_text(encoding="utf-8")
    if "refused" in expected:
        with pytest.raises(InputError) as info:
            parse_paste(text, source=path.name)
        assert str(info.value) == expected["refused"]
        return
    parsed = parse_paste(text, source=path.name)
    assert parsed.data == expected["data"]
    assert parsed.unused == expected["unused"]
    if "case_refused" in expected:
        with pytest.raises(CaseValueError) as refused:
            read_case(None, paste=str(path))
        assert expected["case_refused"] in str(refused.value)
