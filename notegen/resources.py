"""Where the shipped rule pack and templates live, and the loader that reads their YAML.

In a wheel they are packed under `notegen/_data/`; in a source checkout they
sit at the top of the repository. Both layouts are looked up here and only here,
once per process: the shipped folders do not move while notegen runs.
"""

from __future__ import annotations

from functools import lru_cache
from pathlib import Path
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from yaml import SafeLoader

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


def safe_yaml_loader() -> type[SafeLoader]:
    """PyYAML's safe loader, on libyaml's parser when PyYAML was built with it.

    Both build only plain YAML types (the same safe constructors); libyaml parses the rule
    files about ten times faster, which is most of a single note's start-up.
    """
    import yaml

    return getattr(yaml, "CSafeLoader", yaml.SafeLoader)


@lru_cache(maxsize=1)
def strict_yaml_loader() -> type[SafeLoader]:
    """`safe_yaml_loader()` that also refuses a key given twice in one mapping.

    Plain YAML keeps the last of two equal keys, so a setting, a label or a `says:` written twice
    would silently lose the first; a rule file must say each thing once.
    """
    import yaml

    from notegen.errors import printable

    class StrictLoader(safe_yaml_loader()):  # type: ignore[misc]
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


def read_yaml_safely(stream: Any) -> Any:
    """Parse one YAML document from text or a stream with `strict_yaml_loader()`: plain types only, no repeated keys."""
    loader = strict_yaml_loader()(stream)
    try:
        return loader.get_single_data()
    finally:
        loader.dispose()
