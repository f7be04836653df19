"""Reading pack YAML with line numbers, and layering a service's folder over the shipped one.

A `SafeLoader` subclass builds `SourceDict`/`SourceList` values that remember the file and line
of every mapping, key and list item, so any later problem can be reported as `file:line`.
Duplicate keys inside one mapping are an error rather than PyYAML's silent last-one-wins.
The parser is libyaml's when PyYAML was built with it (the same safe constructors, about ten
times faster than the pure-Python parser, which is the fallback).

Layering (`overlay`) works on this raw data, before validation:
- a list whose items are mappings with an `id` is merged by id: an item with a known id
  updates that item field by field, an item with a new id is appended, and `drop: true` removes one;
- the mappings named in `MERGED_MAPPINGS` merge key by key; any other value is replaced whole
  (a condition is always replaced whole, never spliced).
"""

from __future__ import annotations

from collections.abc import Iterator
from pathlib import Path
from typing import Any

import yaml

from notegen._yaml import RuleNodeError, check_rule_nodes

try:
    from yaml import CSafeLoader as _SafeLoader
except ImportError:  # PyYAML built without libyaml
    from yaml import SafeLoader as _SafeLoader  # type: ignore[assignment]

Where = tuple[str, int | None]

# Mappings merged key by key in an overlay; every other mapping (a condition, say) is replaced whole.
MERGED_MAPPINGS = frozenset({"pack", "scoring", "weights", "evidence"})


class PackSourceError(Exception):
    """A problem found while reading or layering raw YAML; carries file and line."""

    def __init__(self, where: Where, message: str) -> None:
        super().__init__(message)
        self.where = where
        self.message = message


class SourceDict(dict[str, Any]):
    """A mapping that knows where it, and each of its keys, was written."""

    where: Where
    key_where: dict[str, Where]

    def __init__(self, *args: Any, where: Where = ("<pack>", None), **kwargs: Any) -> None:
        super().__init__(*args, **kwargs)
        self.where = where
        self.key_where = {}

    def where_of(self, key: str) -> Where:
        return self.key_where.get(key, self.where)


class SourceList(list[Any]):
    """A list that knows where it, and each of its items, was written."""

    where: Where
    item_where: list[Where]

    def __init__(self, *args: Any, where: Where = ("<pack>", None)) -> None:
        super().__init__(*args)
        self.where = where
        self.item_where = []

    def where_of(self, index: int) -> Where:
        if 0 <= index < len(self.item_where):
            return self.item_where[index]
        return self.where


class _LineLoader(_SafeLoader):
    """A safe loader that records positions; constructs nothing beyond plain YAML types."""

    filename = "<pack>"


def _construct_mapping(loader: _LineLoader, node: yaml.MappingNode) -> Iterator[SourceDict]:
    data = SourceDict(where=(loader.filename, node.start_mark.line + 1))
    yield data
    loader.flatten_mapping(node)
    for key_node, value_node in node.value:
        key = loader.construct_object(key_node, deep=True)
        where = (loader.filename, key_node.start_mark.line + 1)
        if not isinstance(key, str):
            raise PackSourceError(where, f"keys must be text, not {key!r}")
        if key in data:
            raise PackSourceError(where, f"duplicate key `{key}` in one mapping")
        data[key] = loader.construct_object(value_node, deep=True)
        data.key_where[key] = where


def _construct_sequence(loader: _LineLoader, node: yaml.SequenceNode) -> Iterator[SourceList]:
    data = SourceList(where=(loader.filename, node.start_mark.line + 1))
    yield data
    for child in node.value:
        data.append(loader.construct_object(child, deep=True))
        data.item_where.append((loader.filename, child.start_mark.line + 1))


_LineLoader.add_constructor("tag:yaml.org,2002:map", _construct_mapping)
_LineLoader.add_constructor("tag:yaml.org,2002:seq", _construct_sequence)


def read_yaml(path: Path, display_name: str | None = None) -> Any:
    """Parse one YAML file safely, keeping positions; errors name the file and line."""
    name = display_name or str(path)
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise PackSourceError((name, None), f"cannot read the file: {exc.strerror or exc}") from exc
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise PackSourceError((name, line), "is not UTF-8 text; save the file as UTF-8") from None
    loader = _LineLoader(text)
    loader.filename = name
    try:
        node = loader.get_single_node()
        check_rule_nodes(node)  # aliases, merge keys, non-finite numbers: refused before anything is built
        return None if node is None else loader.construct_document(node)
    except RuleNodeError as exc:
        raise PackSourceError((name, exc.line), exc.message) from None
    except PackSourceError:
        raise
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        mark_line = mark.line + 1 if mark is not None else None
        raise PackSourceError((name, mark_line), f"YAML syntax: {exc.problem or exc.context}") from exc
    except yaml.YAMLError as exc:
        raise PackSourceError((name, None), f"YAML: {exc}") from exc
    finally:
        loader.dispose()


def _is_id_list(value: Any) -> bool:
    return isinstance(value, list) and bool(value) and all(isinstance(v, dict) and "id" in v for v in value)


def find_duplicate_ids(value: Any, problems: list[tuple[Where, str]], path: str = "") -> None:
    """Report an id written twice in any list of id'd items, at any depth."""
    if isinstance(value, dict):
        for key, child in value.items():
            find_duplicate_ids(child, problems, f"{path}.{key}" if path else key)
    elif isinstance(value, list):
        seen: dict[object, Where] = {}
        for index, item in enumerate(value):
            if isinstance(item, dict) and "id" in item:
                item_id = item["id"]
                here = item.where_of("id") if isinstance(item, SourceDict) else ("<pack>", None)
                if item_id in seen:
                    first = seen[item_id]
                    problems.append((here, f"duplicate id `{item_id}` in `{path}` (first at {first[0]}:{first[1]})"))
                else:
                    seen[item_id] = here
            find_duplicate_ids(item, problems, f"{path}[{index}]")


def combine_files(documents: list[SourceDict], where: Where) -> SourceDict:
    """Join the files of one folder: lists are concatenated, a mapping section may appear once."""
    combined = SourceDict(where=where)
    for document in documents:
        for key, value in document.items():
            key_at = document.where_of(key)
            if key not in combined:
                combined[key] = value
                combined.key_where[key] = key_at
            elif isinstance(combined[key], SourceList) and isinstance(value, SourceList):
                joined = SourceList(combined[key], where=combined[key].where)
                joined.item_where = list(combined[key].item_where) + list(value.item_where)
                joined.extend(value)
                combined[key] = joined
            else:
                first = combined.where_of(key)
                raise PackSourceError(key_at, f"section `{key}` is also written at {first[0]}:{first[1]}")
    return combined


class Overlay:
    """Layers one folder's raw data over another's, remembering which ids were new."""

    def __init__(self) -> None:
        # (section path, id, where) of every item an overlay added rather than changed.
        self.added: list[tuple[str, str, Where]] = []

    def merge(self, base: Any, top: Any, key: str = "", path: str = "") -> Any:
        if isinstance(base, SourceList) and isinstance(top, SourceList) and (_is_id_list(base) or _is_id_list(top)):
            return self._merge_by_id(base, top, path)
        if isinstance(base, SourceDict) and isinstance(top, SourceDict) and (key in MERGED_MAPPINGS or key == ""):
            merged = SourceDict(base, where=base.where)
            merged.key_where = dict(base.key_where)
            for child_key, value in top.items():
                merged.key_where[child_key] = top.where_of(child_key)
                if child_key in base:
                    merged[child_key] = self.merge(
                        base[child_key], value, child_key, f"{path}.{child_key}" if path else child_key
                    )
                else:
                    merged[child_key] = value
            return merged
        return top

    def _merge_by_id(self, base: SourceList, top: SourceList, path: str) -> SourceList:
        items: list[Any] = list(base)
        wheres: list[Where] = list(base.item_where) + [base.where] * (len(base) - len(base.item_where))
        index = {item.get("id"): i for i, item in enumerate(items) if isinstance(item, dict)}
        dropped: set[int] = set()
        for position, item in enumerate(top):
            at = top.where_of(position)
            if not isinstance(item, SourceDict) or "id" not in item:
                raise PackSourceError(at, f"an overlay item in `{path}` needs an `id` saying what it changes or adds")
            item_id = item["id"]
            drop = item.get("drop", False)
            if "drop" in item:
                item = SourceDict({k: v for k, v in item.items() if k != "drop"}, where=item.where)
                item.key_where = {k: w for k, w in top[position].key_where.items() if k != "drop"}
            if item_id in index:
                if drop is True:
                    dropped.add(index[item_id])
                    continue
                items[index[item_id]] = self.merge(items[index[item_id]], item, "", f"{path}[{item_id}]")
            else:
                if drop is True:
                    raise PackSourceError(at, f"cannot drop `{item_id}` from `{path}`: no such id in the packs below")
                self.added.append((path, str(item_id), at))
                index[item_id] = len(items)
                items.append(item)
                wheres.append(at)
        merged = SourceList(where=base.where)
        for i, (item, at) in enumerate(zip(items, wheres, strict=True)):
            if i not in dropped:
                merged.append(item)
                merged.item_where.append(at)
        return merged


def locate(data: Any, loc: tuple[int | str, ...]) -> Where:
    """Best file:line for a validation error at `loc` inside raw pack data."""
    where: Where = getattr(data, "where", ("<pack>", None))
    node = data
    for step in loc:
        if isinstance(node, SourceDict) and isinstance(step, str) and step in node:
            where = node.where_of(step)
            node = node[step]
        elif isinstance(node, SourceList) and isinstance(step, int) and 0 <= step < len(node):
            where = node.where_of(step)
            node = node[step]
        else:
            break
        node_where = getattr(node, "where", None)
        if node_where is not None and isinstance(node, SourceDict) and step == loc[-1]:
            where = node_where
    return where
