"""Rule packs by folder name: the shipped `rules/<name>/`, with each service folder's `<name>/` laid over it."""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path
from typing import TYPE_CHECKING

from notegen.resources import rules_dir

if TYPE_CHECKING:
    from notegen.engine import Problem, RulePack

__all__ = ["check_rule_pack", "load_rule_pack", "pack_dirs"]


def pack_dirs(name: str, rules_dirs: Sequence[Path] = ()) -> list[Path]:
    """The shipped pack folder `name`, then `<dir>/<name>` of each service folder that has one."""
    layered = [Path(d) / name for d in rules_dirs if (Path(d) / name).is_dir()]
    return [rules_dir() / name, *layered]


def load_rule_pack(name: str, rules_dirs: Sequence[Path] = ()) -> RulePack:
    """Load pack `name` with any service folders laid over it; `RulePackError` lists every problem."""
    from notegen.engine import load_pack

    return load_pack(pack_dirs(name, rules_dirs))


def check_rule_pack(name: str, rules_dirs: Sequence[Path] = ()) -> list[Problem]:
    """Every problem of the layered pack `name` as (file, line, message); empty when it loads cleanly."""
    from notegen.engine import check_pack

    return check_pack(pack_dirs(name, rules_dirs))
