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
    """Load pack `name` with any service folders laid over it; `RulePackError` lists every problem.

    The shipped pack alone comes from the spec validated when the wheel was built, while it matches
    (`prepared_pack`); with a service's folder laid over it, or without a match, from the YAML.
    """
    from notegen.engine import load_pack

    dirs = pack_dirs(name, rules_dirs)
    if len(dirs) == 1:
        from notegen.knowledge.prepared_pack import load_prepared_pack
        from notegen.resources import prepared_packs_dir

        pack = load_prepared_pack(name, dirs[0], prepared_packs_dir())
        if pack is not None:
            return pack
    return load_pack(dirs)


def check_rule_pack(name: str, rules_dirs: Sequence[Path] = ()) -> list[Problem]:
    """Every problem of the layered pack `name` as (file, line, message); empty when it loads cleanly."""
    from notegen.engine import check_pack

    return check_pack(pack_dirs(name, rules_dirs))
