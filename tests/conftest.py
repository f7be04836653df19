"""Shared fixtures. Tests live in folders that mirror notegen's packages (tests/case, tests/acidbase, ...);
helper modules beside this file (alkalosis_cases.py, management_cases.py) are importable from any of them,
since `tests/` is on the path (pyproject.toml)."""

from __future__ import annotations

from pathlib import Path

import pytest

from notegen.pipeline import Drafter

ROOT = Path(__file__).resolve().parent.parent


@pytest.fixture(scope="session")
def samples_dir() -> Path:
    """The invented sample cases shipped with the repository."""
    return ROOT / "samples"


@pytest.fixture(scope="session")
def drafter() -> Drafter:
    """One Drafter for the session: the shipped rules, loaded once."""
    return Drafter()
