"""Reading a case file's text into plain data, refusing anything that is not plain data.

YAML is read with a SafeLoader subclass that also refuses aliases (no alias bombs: a
case file never needs them), duplicate keys (a second `na:` must not silently win),
nesting deeper than `MAX_DEPTH`, more than `MAX_YAML_NODES` values, tags that build
anything but plain data, and numbers YAML 1.1 would read other than as written (`0140`
is octal 96, `1:30` is base-60 90). JSON is read with duplicate keys refused too. Every
error names the file, and the line and column where the parser knows them.

When PyYAML has libyaml, a YAML case file is parsed and composed by libyaml first, with the same
constructors and the same limits checked on the composed tree; anything libyaml refuses, or that
breaks a limit, is read again by the pure-Python reader, so every refusal keeps its one message.
"""

from __future__ import annotations

import json
import re
from pathlib import Path, PurePath
from typing import Any

import yaml

from notegen.errors import CaseFileError, printable

MAX_BYTES = 2_000_000  # a FHIR bundle (JSON) can be large; the json module reads this in well under a second
# PyYAML's pure-Python reader takes seconds per megabyte; a YAML case file is a few kilobytes.
MAX_YAML_CHARS = 256_000
MAX_YAML_NODES = 10_000  # bounds time and memory of a YAML document however its bytes are spent
MAX_DEPTH = 12
MAX_NUMBER_DIGITS = 30  # no lab value has more digits; also keeps Python's int parsing limit out of reach

_PLAIN_INT = re.compile(r"[-+]?(?:0|[1-9][0-9]*)")
_PLAIN_FLOAT = re.compile(
    r"[-+]?(?:[0-9]+\.[0-9]*|\.[0-9]+)(?:[eE][-+]?[0-9]+)?|[-+]?\.(?:inf|Inf|INF)|\.(?:nan|NaN|NAN)"
)
_DATA_ONLY_TAGS = ("binary", "set", "omap", "pairs")


class _CaseConstructor(yaml.constructor.SafeConstructor):
    """The safe constructors, refusing duplicate keys, tags and numbers YAML 1.1 would misread.

    Shared by both readers below: the pure-Python one and libyaml's.
    """

    _filename: str = "<input>"

    def _error(self, message: str, mark: yaml.Mark) -> CaseFileError:
        return CaseFileError(message, filename=self._filename, line=mark.line + 1, column=mark.column + 1)

    def construct_object(self, node: yaml.Node, deep: bool = False) -> Any:
        try:
            return super().construct_object(node, deep=deep)
        except (ValueError, TypeError, AttributeError, ArithmeticError):
            # e.g. `2026-02-30` matches YAML's date pattern but is no date: a message, not a crash
            shown = str(node.value)[:60] if isinstance(node, yaml.ScalarNode) else type(node).__name__
            short = node.tag.rsplit(":", 1)[-1]
            kind = {"timestamp": "a real date and time", "int": "a number", "float": "a number"}.get(short, short)
            raise self._error(f"`{shown}` cannot be read as {kind}", node.start_mark) from None

    def construct_plain_int(self, node: yaml.ScalarNode) -> int:
        text = str(self.construct_scalar(node))
        self._check_digits(text, node)
        if not _PLAIN_INT.fullmatch(text):
            raise self._error(self._not_decimal(text, node), node.start_mark)
        return int(text)

    def construct_plain_float(self, node: yaml.ScalarNode) -> float:
        text = str(self.construct_scalar(node))
        self._check_digits(text, node)
        if not _PLAIN_FLOAT.fullmatch(text):
            raise self._error(self._not_decimal(text, node), node.start_mark)
        return float(super().construct_yaml_float(node))

    def _check_digits(self, text: str, node: yaml.Node) -> None:
        digits = sum(char.isalnum() for char in text)  # hexadecimal digits count too
        if digits > MAX_NUMBER_DIGITS:
            raise self._error(f"a number with {digits:,} digits cannot be a lab value", node.start_mark)

    def _not_decimal(self, text: str, node: yaml.ScalarNode) -> str:
        try:
            read = super().construct_yaml_int(node) if node.tag.endswith(":int") else super().construct_yaml_float(node)
            as_read = f"YAML 1.1 would read it as {read:g}"
        except (ValueError, TypeError, ArithmeticError):
            as_read = "YAML would not read it as written"
        return (
            f"`{text[:60]}` is not a plain decimal number ({as_read}); "
            "write it in plain decimal, or in quotes if it is text"
        )

    def refuse_merge_key(self, node: yaml.Node) -> Any:
        raise self._error(
            "`<<` (a YAML merge key) is not allowed in a case file; write the values out", node.start_mark
        )

    def construct_value_as_text(self, node: yaml.ScalarNode) -> str:
        return str(self.construct_scalar(node))

    def refuse_tag(self, node: yaml.Node) -> Any:
        raise self._error(
            f"not valid YAML: YAML tags (!!{node.tag.rsplit(':', 1)[-1]}, !!python/..., !something) are not allowed "
            "in a case file",
            node.start_mark,
        )

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
                    f"`{printable(key)}` is given twice (first on line {first}); keep one value",
                    filename=self._filename,
                    line=key_node.start_mark.line + 1,
                    column=key_node.start_mark.column + 1,
                )
            seen[key] = key_node
        return super().construct_mapping(node, deep=deep)


_add: Any = _CaseConstructor.add_constructor  # typed for loaders; this class is a loader's constructor half
_add("tag:yaml.org,2002:int", _CaseConstructor.construct_plain_int)
_add("tag:yaml.org,2002:float", _CaseConstructor.construct_plain_float)
_add("tag:yaml.org,2002:merge", _CaseConstructor.refuse_merge_key)
# `=` alone resolves to YAML's "value" tag; in a case file it is just the text "="
_add("tag:yaml.org,2002:value", _CaseConstructor.construct_value_as_text)
for _tag in _DATA_ONLY_TAGS:  # bytes, sets and ordered pairs are never case data
    _add(f"tag:yaml.org,2002:{_tag}", _CaseConstructor.refuse_tag)


class _CaseLoader(
    yaml.reader.Reader,
    yaml.scanner.Scanner,
    yaml.parser.Parser,
    yaml.composer.Composer,
    _CaseConstructor,
    yaml.resolver.Resolver,
):
    """The pure-Python reader: SafeLoader without aliases, with depth and size limits, checked as it composes.

    Its messages are the reference: whatever libyaml's reader below refuses is read again here.
    """

    _depth: int = 0
    _nodes: int = 0

    def __init__(self, stream: str) -> None:
        yaml.reader.Reader.__init__(self, stream)
        yaml.scanner.Scanner.__init__(self)
        yaml.parser.Parser.__init__(self)
        yaml.composer.Composer.__init__(self)
        _CaseConstructor.__init__(self)
        yaml.resolver.Resolver.__init__(self)

    def compose_node(self, parent: yaml.Node | None, index: int) -> yaml.Node | None:
        if self.check_event(yaml.AliasEvent):
            event = self.peek_event()  # type: ignore[no-untyped-call]
            raise CaseFileError(
                "YAML aliases (*name) are not allowed in a case file; write the value out",
                filename=self._filename,
                line=event.start_mark.line + 1,
                column=event.start_mark.column + 1,
            )
        self._nodes += 1
        if self._nodes > MAX_YAML_NODES:
            mark = self.peek_event().start_mark  # type: ignore[no-untyped-call]
            raise self._error(
                f"holds more than {MAX_YAML_NODES:,} values; a case file holds at most a few hundred", mark
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


_CParser: Any = yaml.cyaml.CParser if yaml.__with_libyaml__ else None  # type: ignore[attr-defined]


def _libyaml_loader() -> type[_CaseConstructor] | None:
    if _CParser is None:
        return None

    class _CCaseLoader(_CParser, _CaseConstructor, yaml.resolver.Resolver):  # type: ignore[misc]
        """libyaml's parser and composer with the same constructors; the limits are checked on its node tree."""

        def __init__(self, stream: str) -> None:
            _CParser.__init__(self, stream)
            _CaseConstructor.__init__(self)
            yaml.resolver.Resolver.__init__(self)

    return _CCaseLoader


# libyaml reads a case file several times faster than the pure-Python reader. It is used to accept:
# anything it refuses, or that breaks a limit, is read again by `_CaseLoader`, whose messages (and
# line numbers) are the ones reported, so both readers refuse with the same words. Set to None to
# read with the pure-Python reader alone (the tests run the hostile corpus both ways).
FAST_LOADER: type[_CaseConstructor] | None = _libyaml_loader()


class _Refused(Exception):
    """libyaml's reading broke a limit or failed: read the text again with the reference reader."""


def _within_limits(root: yaml.Node) -> bool:
    """The limits `_CaseLoader.compose_node` checks, on a composed tree: no alias, depth, number of values.

    libyaml's composer hands back the anchored node again for an alias, so a node met twice is an alias.
    libyaml itself stops at 1,000 levels of nesting, before this walk could recurse deeply.
    """
    seen: set[int] = set()
    stack: list[tuple[yaml.Node, int]] = [(root, 1)]
    while stack:
        node, depth = stack.pop()
        if depth > MAX_DEPTH or id(node) in seen or len(seen) >= MAX_YAML_NODES:
            return False
        seen.add(id(node))
        if isinstance(node, yaml.MappingNode):
            stack.extend((child, depth + 1) for pair in node.value for child in pair)
        elif isinstance(node, yaml.SequenceNode):
            stack.extend((child, depth + 1) for child in node.value)
    return True


def _parse_with_libyaml(loader_class: type[_CaseConstructor], text: str, filename: str) -> Any:
    try:
        loader = loader_class(text)  # type: ignore[call-arg]
    except (yaml.YAMLError, ValueError) as exc:
        raise _Refused from exc
    loader._filename = filename
    try:
        node = loader.get_single_node()  # type: ignore[attr-defined]
        if node is None:
            return None
        if not _within_limits(node):
            raise _Refused
        return loader.construct_document(node)
    except (yaml.YAMLError, CaseFileError, ValueError) as exc:
        raise _Refused from exc
    finally:
        loader.dispose()  # type: ignore[attr-defined]


def _make_loader(text: str, filename: str) -> _CaseLoader:
    loader = _CaseLoader(text)
    loader._filename = filename
    loader._depth = 0
    loader._nodes = 0
    return loader


def _position(text: str, index: int) -> tuple[int, int]:
    """1-based line and column of character `index` in `text`."""
    line = text.count("\n", 0, index) + 1
    return line, index - (text.rfind("\n", 0, index) + 1) + 1


def parse_yaml(text: str, filename: str) -> Any:
    if len(text) > MAX_YAML_CHARS:
        raise CaseFileError(
            f"{len(text):,} characters is too large for a YAML case file (limit {MAX_YAML_CHARS:,}); "
            "a case file is a few kilobytes",
            filename=filename,
        )
    if FAST_LOADER is not None:
        try:
            return _parse_with_libyaml(FAST_LOADER, text, filename)
        except _Refused:
            pass  # read again below: its message is the one reported
    try:
        # the reader checks every character when it is built, so this belongs inside the `try`
        loader = _make_loader(text, filename)
    except yaml.reader.ReaderError as exc:
        line, column = _position(text, exc.position)
        raise CaseFileError(
            f"not valid YAML: the control character U+{exc.character:04X} cannot appear in a case file; remove it",
            filename=filename,
            line=line,
            column=column,
        ) from None
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
            raise ValueError(f"`{printable(key)}` is given twice; keep one value")
        result[key] = value
    return result


# A JSON string, or one bracket. The string pattern is written as an unrolled loop: an
# alternation inside `*` would make the regex engine keep state per character (240 MB for a
# 2 MB string); this form keeps state per escape only.
_JSON_STRING_OR_BRACKET = re.compile(r'"[^"\\]*(?:\\.[^"\\]*)*"|[\[\]{}]')


def _json_too_deep(text: str, max_depth: int) -> bool:
    """True as soon as brackets outside strings nest deeper than `max_depth` (stops there)."""
    depth = 0
    for match in _JSON_STRING_OR_BRACKET.finditer(text):
        char = match.group()
        if char in "[{":
            depth += 1
            if depth > max_depth:
                return True
        elif char in "]}":
            depth -= 1
    return False


def _json_int(text: str) -> int:
    digits = sum(char.isdigit() for char in text)
    if digits > MAX_NUMBER_DIGITS:
        raise ValueError(f"a number with {digits:,} digits cannot be a lab value")
    return int(text)


def parse_json(text: str, filename: str, *, max_depth: int = MAX_DEPTH) -> Any:
    if _json_too_deep(text, max_depth):
        raise CaseFileError(f"nested more than {max_depth} levels deep", filename=filename)
    try:
        return json.loads(text, object_pairs_hook=_refuse_duplicates, parse_int=_json_int)
    except json.JSONDecodeError as exc:
        raise CaseFileError(
            f"not valid JSON: {exc.msg}", filename=filename, line=exc.lineno, column=exc.colno
        ) from None
    except ValueError as exc:
        raise CaseFileError(f"not valid JSON: {exc}", filename=filename) from None


def decode(raw: bytes, filename: str) -> str:
    if len(raw) > MAX_BYTES:
        raise CaseFileError(f"more than {MAX_BYTES:,} bytes is too large for a case file", filename=filename)
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
    """Parse case text as its file name says (.yaml or .yml, .json); otherwise as JSON when it looks like JSON.

    A YAML file may start with `{` (a flow mapping such as `{gas: {ph: 7.5}}`): it is still YAML, and
    its mistakes are reported as YAML mistakes.
    """
    suffix = PurePath(str(filename)).suffix.lower()
    if suffix in (".yaml", ".yml"):
        return parse_yaml(text, filename)
    if suffix == ".json" or text.lstrip().startswith(("{", "[")):
        return parse_json(text, filename, max_depth=max_depth)
    return parse_yaml(text, filename)


def read_source(path: str, stdin_bytes: bytes | None = None) -> tuple[str, str]:
    """Return (text, display name) for a path, or for `-` (standard input, passed as bytes)."""
    if path == "-":
        return decode(stdin_bytes or b"", "<stdin>"), "<stdin>"
    file = Path(path)
    try:
        with file.open("rb") as stream:
            # one byte past the limit is enough to refuse: /dev/zero or a 10 GB file is never held
            raw = stream.read(MAX_BYTES + 1)
    except FileNotFoundError:
        raise CaseFileError("no such file", filename=path) from None
    except IsADirectoryError:
        raise CaseFileError("is a folder, not a case file", filename=path) from None
    except OSError as exc:
        raise CaseFileError(f"cannot be read ({exc.strerror})", filename=path) from None
    return decode(raw, path), path
