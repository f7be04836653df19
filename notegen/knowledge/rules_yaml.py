"""The one reader of rule files: settings, vocabularies, analyte and LOINC tables, considerations.

Every file under `rules/` (shipped or a service's) is read here, on libyaml's parser when PyYAML
has it, with the same refusals, and every problem comes back as `RulePackError` naming the file
and line (exit 2):
- a key given twice in one mapping (plain YAML silently keeps the last);
- aliases, merge keys, non-finite numbers, over-long integers, deep nesting (`notegen._yaml`);
- text that is not UTF-8, and anything but plain YAML types.
Rule packs keep their own positions-recording loader (`notegen.engine.source`), which applies the
same node check.
"""

from __future__ import annotations

from functools import cache
from pathlib import Path
from typing import TYPE_CHECKING, Any

from notegen._yaml import RuleNodeError, check_rule_nodes
from notegen.errors import RulePackError, printable

if TYPE_CHECKING:
    from yaml import SafeLoader

__all__ = ["MAX_RULE_FILE_BYTES", "parse_rules_text", "read_rules_file", "strict_yaml_loader"]

MAX_RULE_FILE_BYTES = 2_000_000


@cache
def strict_yaml_loader() -> type[SafeLoader]:
    """PyYAML's safe loader (libyaml's when available) that also refuses a key given twice in one mapping."""
    import yaml

    base: type[SafeLoader] = getattr(yaml, "CSafeLoader", yaml.SafeLoader)

    class StrictLoader(base):  # type: ignore[valid-type,misc]
        def construct_mapping(self, node: yaml.MappingNode, deep: bool = False) -> dict[Any, Any]:
            seen: dict[object, int] = {}
            for key_node, _ in node.value:
                key = self.construct_object(key_node, deep=deep)
                try:
                    first = seen.get(key)
                except TypeError:  # an unhashable key: the safe constructor refuses it below
                    continue
                if first is not None:
                    raise yaml.constructor.ConstructorError(
                        None, None, f"`{printable(key)}` is given twice (first on line {first})", key_node.start_mark
                    )
                seen[key] = key_node.start_mark.line + 1
            return dict(super().construct_mapping(node, deep=deep))

    return StrictLoader


def parse_rules_text(text: str, name: str) -> tuple[Any, dict[str, int]]:
    """The data of one rule file's text, and the 1-based line of each top-level key."""
    import yaml

    loader = strict_yaml_loader()(text)
    try:
        node = loader.get_single_node()
        check_rule_nodes(node)
        if node is None:
            return None, {}
        lines: dict[str, int] = {}
        if isinstance(node, yaml.MappingNode):
            lines = {str(k.value): k.start_mark.line + 1 for k, _ in node.value if isinstance(k, yaml.ScalarNode)}
        return loader.construct_document(node), lines
    except RuleNodeError as error:
        raise RulePackError([(name, error.line, error.message)]) from None
    except yaml.MarkedYAMLError as error:
        mark = error.problem_mark or error.context_mark
        line = mark.line + 1 if mark is not None else None
        raise RulePackError([(name, line, f"is not valid YAML: {error.problem or error.context}")]) from None
    except yaml.YAMLError as error:
        raise RulePackError([(name, None, f"is not valid YAML: {error}")]) from None
    finally:
        loader.dispose()


def _decoded(raw: bytes, name: str) -> str:
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as error:
        line = raw[: error.start].count(b"\n") + 1
        raise RulePackError([(name, line, "is not UTF-8 text; save the file as UTF-8")]) from None


def read_rules_file(path: Path, *, display_name: str | None = None) -> tuple[Any, dict[str, int]]:
    """Read and parse one rule file; `RulePackError` names the file and line of any problem."""
    name = display_name or str(path)
    try:
        with Path(path).open("rb") as stream:
            raw = stream.read(MAX_RULE_FILE_BYTES + 1)
    except OSError as error:
        raise RulePackError([(name, None, f"cannot be read ({error.strerror or error})")]) from None
    if len(raw) > MAX_RULE_FILE_BYTES:
        raise RulePackError([(name, None, f"is larger than {MAX_RULE_FILE_BYTES:,} bytes; a rule file is far smaller")])
    text = _decoded(raw, name)
    if "\x00" in text:
        raise RulePackError([(name, text[: text.index("\x00")].count("\n") + 1, "holds a NUL character")])
    return parse_rules_text(text, name)
