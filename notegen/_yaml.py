"""What every rule file must not hold, checked on the parsed node graph before anything is built.

Case files have their own loader (`notegen.intake.files`); rule packs, settings, vocabularies and
considerations are all parsed into YAML nodes and passed through `check_rule_nodes` first, so that:
- an alias (`*name`) is refused: the node graph is walked once, and a node reached twice is an
  alias, so a 400-byte alias bomb stops at its first repeat instead of growing into gigabytes;
- a merge key (`<<:`) is refused: it copies a mapping silently, and a rule should be written out;
- a non-finite number (`.nan`, `.inf`) is refused: it would pass every comparison or none;
- an integer of more than 15 digits is refused: no threshold has one, and Python refuses to
  convert very long ones with an error that names no line;
- nesting deeper than `MAX_DEPTH` is refused.
"""

from __future__ import annotations

from typing import Any

MAX_DEPTH = 64
MAX_INTEGER_DIGITS = 15
_FLOAT = "tag:yaml.org,2002:float"
_INT = "tag:yaml.org,2002:int"
_MERGE = "tag:yaml.org,2002:merge"

__all__ = ["MAX_DEPTH", "RuleNodeError", "check_rule_nodes"]


class RuleNodeError(Exception):
    """A forbidden construct, with the 1-based line where it was written."""

    def __init__(self, line: int | None, message: str) -> None:
        super().__init__(message)
        self.line = line
        self.message = message


def _line(node: Any) -> int:
    return int(node.start_mark.line) + 1


def _check_scalar(node: Any) -> None:
    value = str(node.value)
    if node.tag == _FLOAT and value.lstrip("+-").lower() in (".nan", ".inf"):
        raise RuleNodeError(_line(node), f"`{value}` is not a finite number; give a measured or published value")
    if node.tag == _INT and len(value.lstrip("+-").replace("_", "")) > MAX_INTEGER_DIGITS:
        raise RuleNodeError(_line(node), f"a number of {len(value)} digits is not a plausible threshold")


def check_rule_nodes(root: Any) -> None:
    """Walk a composed YAML node graph once; raise `RuleNodeError` at the first forbidden construct."""
    import yaml

    if root is None:
        return
    seen: set[int] = set()
    # (node, depth, line where it is used): an alias repeats a node written elsewhere, so the line
    # reported is that of the key or list holding it, where the `*name` was written.
    stack: list[tuple[Any, int, int]] = [(root, 1, _line(root))]
    while stack:
        node, depth, used_at = stack.pop()
        if id(node) in seen:
            raise RuleNodeError(used_at, "YAML aliases (*name) are not allowed in a rule file; write the value out")
        seen.add(id(node))
        if depth > MAX_DEPTH:
            raise RuleNodeError(_line(node), f"nested more than {MAX_DEPTH} levels deep")
        if isinstance(node, yaml.ScalarNode):
            _check_scalar(node)
        elif isinstance(node, yaml.SequenceNode):
            stack.extend((child, depth + 1, _line(node)) for child in reversed(node.value))
        elif isinstance(node, yaml.MappingNode):
            for key, value in reversed(node.value):
                if key.tag == _MERGE:
                    raise RuleNodeError(_line(key), "merge keys (<<) are not allowed in a rule file; write them out")
                stack.append((value, depth + 1, _line(key)))
                stack.append((key, depth + 1, _line(key)))
