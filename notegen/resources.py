"""Where the shipped rule pack and templates live.

In a wheel they are packed under `notegen/_data/`; in a source checkout they
sit at the top of the repository. Both layouts are looked up here and only here.
"""

from __future__ import annotations

from pathlib import Path

_PACKAGE = Path(__file__).resolve().parent


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
