"""Where the shipped rule pack and templates live (their YAML is read by `notegen.knowledge.rules_yaml`).

In a wheel they are packed under `notegen/_data/`; in a source checkout they
sit at the top of the repository. Both layouts are looked up here and only here,
once per process: the shipped folders do not move while notegen runs.
"""

from __future__ import annotations

from functools import lru_cache
from pathlib import Path

_PACKAGE = Path(__file__).resolve().parent


@lru_cache(maxsize=4)
def data_dir(name: str) -> Path:
    """Return the shipped folder `name` ("rules" or "templates")."""
    packed = _PACKAGE / "_data" / name
    if packed.is_dir():
        return packed
    source = _PACKAGE.parent / name
    if source.is_dir():
        return source
    raise FileNotFoundError(f"notegen's shipped `{name}` folder is missing (looked in {packed} and {source})")


def rules_dir() -> Path:
    return data_dir("rules")


def templates_dir() -> Path:
    return data_dir("templates")


def compiled_templates_dir() -> Path | None:
    """The shipped templates compiled to Python modules when the wheel was built; None in a source checkout."""
    packed = _PACKAGE / "_data" / "templates_compiled"
    return packed if packed.is_dir() else None


def prepared_packs_dir() -> Path | None:
    """The shipped rule packs validated when the wheel was built; None in a source checkout."""
    packed = _PACKAGE / "_data" / "packs_prepared"
    return packed if packed.is_dir() else None
