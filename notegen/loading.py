"""Reading a case file's text into plain data, refusing anything that is not plain data.

YAML is read with a SafeLoader subclass that also refuses aliases (no alias bombs: a
case file never needs them), duplicate keys (a second `na:` must not silently win) and
nesting deeper than `MAX_DEPTH`. JSON is read with duplicate keys refused too. Every
error names the file, line and column.
"""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

import yaml

from .errors import CaseFileError

MAX_BYTES = 2_000_000  # a case file is a few kilobytes; this bounds memory and time
MAX_DEPTH = 12


class _CaseLoader(yaml.SafeLoader):
    """SafeLoader without aliases or duplicate keys, with a depth limit."""

    _filename: str = "<input>"
    _depth: int = 0

    def compose_node(self, parent: yaml.Node | None, index: int) -> yaml.Node | None:
        if self.check_event(yaml.AliasEvent):
            event = self.peek_event()  # type: ignore[no-untyped-call]
            raise CaseFileError(
                "YAML aliases (*name) are not allowed in a case file; write the value out",
                filename=self._filename,
                line=event.start_mark.line + 1,
                column=event.start_mark.column + 1,
            )
        self._depth += 1
        if self._depth > MAX_DEPTH:
            mark = self.peek_event().start_mark  # type: ignore[no-untyped-call]
            raise CaseFileError(
                f"nested more than {MAX_DEPTH} levels deep; a case file is at most a few levels",
                filename=self._filename,
                line=mark.line + 1,
                column=mark.column + 1,
            )
        try:
            return super().compose_node(parent, index)
        finally:
            self._depth -= 1

    def construct_mapping(self, node: yaml.MappingNode, deep: bool = False) -> dict[Any, Any]:
        seen: dict[Any, yaml.Node] = {}
        for key_node, _ in node.value:
            key = self.construct_object(key_node, deep=deep)
            if not isinstance(key, str | int | float | bool) and key is not None:
                raise CaseFileError(
                    "a mapping key must be a plain word",
                    filename=self._filename,
                    line=key_node.start_mark.line + 1,
                    column=key_node.start_mark.column + 1,
                )
            if key in seen:
                first = seen[key].start_mark.line + 1
                raise CaseFileError(
                    f"`{key}` is given twice (first on line {first}); keep one value",
                    filename=self._filename,
                    line=key_node.start_mark.line + 1,
                    column=key_node.start_mark.column + 1,
                )
            seen[key] = key_node
        return super().construct_mapping(node, deep=deep)


def _make_loader(text: str, filename: str) -> _CaseLoader:
    loader = _CaseLoader(text)
    loader._filename = filename
    loader._depth = 0
    return loader


def parse_yaml(text: str, filename: str) -> Any:
    loader = _make_loader(text, filename)
    try:
        return loader.get_single_data()
    except CaseFileError:
        raise
    except yaml.MarkedYAMLError as exc:
        mark = exc.problem_mark or exc.context_mark
        problem = exc.problem or "not valid YAML"
        if "could not determine a constructor" in str(exc):
            problem = "YAML tags (!!python/..., !something) are not allowed in a case file"
        raise CaseFileError(
            f"not valid YAML: {problem}",
            filename=filename,
            line=mark.line + 1 if mark else None,
            column=mark.column + 1 if mark else None,
        ) from None
    except yaml.YAMLError as exc:
        raise CaseFileError(f"not valid YAML: {exc}", filename=filename) from None
    finally:
        loader.dispose()


def _refuse_duplicates(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    result: dict[str, Any] = {}
    for key, value in pairs:
        if key in result:
            raise ValueError(f"`{key}` is given twice; keep one value")
        result[key] = value
    return result


def _json_depth_ok(text: str) -> int:
    depth = deepest = 0
    in_string = escaped = False
    for char in text:
        if in_string:
            if escaped:
                escaped = False
            elif char == "\\":
                escaped = True
            elif char == '"':
                in_string = False
        elif char == '"':
            in_string = True
        elif char in "[{":
            depth += 1
            deepest = max(deepest, depth)
        elif char in "]}":
            depth -= 1
    return deepest


def parse_json(text: str, filename: str, *, max_depth: int = MAX_DEPTH) -> Any:
    if _json_depth_ok(text) > max_depth:
        raise CaseFileError(f"nested more than {max_depth} levels deep", filename=filename)
    try:
        return json.loads(text, object_pairs_hook=_refuse_duplicates)
    except json.JSONDecodeError as exc:
        raise CaseFileError(
            f"not valid JSON: {exc.msg}", filename=filename, line=exc.lineno, column=exc.colno
        ) from None
    except ValueError as exc:
        raise CaseFileError(f"not valid JSON: {exc}", filename=filename) from None


def decode(raw: bytes, filename: str) -> str:
    if len(raw) > MAX_BYTES:
        raise CaseFileError(f"{len(raw):,} bytes is too large for a case file (limit {MAX_BYTES:,})", filename=filename)
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise CaseFileError(
            f"not UTF-8 text (byte 0x{raw[exc.start]:02x}); save the file as UTF-8", filename=filename, line=line
        ) from None
    if not text.strip():
        raise CaseFileError("the file is empty", filename=filename)
    return text


def parse_text(text: str, filename: str, *, max_depth: int = MAX_DEPTH) -> Any:
    """Parse case text as JSON when it looks like JSON, otherwise as YAML."""
    if text.lstrip().startswith(("{", "[")):
        return parse_json(text, filename, max_depth=max_depth)
    return parse_yaml(text, filename)


def read_source(path: str, stdin_bytes: bytes | None = None) -> tuple[str, str]:
    """Return (text, display name) for a path, or for `-` (standard input, passed as bytes)."""
    if path == "-":
        return decode(stdin_bytes or b"", "<stdin>"), "<stdin>"
    file = Path(path)
    try:
        raw = file.read_bytes()
    except FileNotFoundError:
        raise CaseFileError("no such file", filename=path) from None
    except IsADirectoryError:
        raise CaseFileError("is a folder, not a case file", filename=path) from None
    except OSError as exc:
        raise CaseFileError(f"cannot be read ({exc.strerror})", filename=path) from None
    return decode(raw, path), path
