"""A plain `draft` call, parsed with the standard library instead of typer (see `notegen.cli.app`).

Only unmistakable forms are taken; anything else returns None and is left to typer.
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from pathlib import Path
from typing import Any

__all__ = ["DRAFT_OPTIONS", "FORMAT_NAMES", "plain_draft_arguments"]

FORMAT_NAMES = ("markdown", "text", "html", "json")  # as `notegen.cli.app.OutputFormat` lists them
# The options of `notegen draft`, once: (every spelling, the parameter it fills, how it is given).
# `flag` takes no value, `value` one value once, `repeated` a value each time it is given.
# `tests/cli/test_cli_quick_draft.py` checks this table against the typer command's own options, so the
# two parsers cannot drift apart.
DRAFT_OPTIONS: tuple[tuple[tuple[str, ...], str, str], ...] = (
    (("--jsonl",), "jsonl", "flag"),
    (("--explain",), "explain", "flag"),
    (("--brief",), "brief", "flag"),
    (("--worksheet",), "worksheet", "flag"),
    (("--ascii",), "ascii_only", "flag"),
    (("--paste",), "paste", "value"),
    (("--format", "-f"), "output_format", "value"),
    (("--output", "-o"), "output", "value"),
    (("--output-folder",), "out_dir", "value"),
    (("--out",), "old_out_dir", "value"),  # the former name of --output-folder, read as it
    (("--template",), "template", "value"),
    (("--width",), "width", "value"),
    (("--window-hours",), "window_hours", "value"),
    (("--jobs", "-j"), "jobs", "value"),
    (("--date-order",), "date_order", "value"),
    (("--set",), "assignments", "repeated"),
    (("--rules",), "rules", "repeated"),
)
_READ_AS = {"old_out_dir": "out_dir"}
_FLAGS = {flag: dest for flags, dest, kind in DRAFT_OPTIONS if kind == "flag" for flag in flags}
_VALUES = {flag: _READ_AS.get(dest, dest) for flags, dest, kind in DRAFT_OPTIONS if kind == "value" for flag in flags}
_REPEATED = {flag: dest for flags, dest, kind in DRAFT_OPTIONS if kind == "repeated" for flag in flags}
_PATHS = ("output", "out_dir", "template")
_WHOLE_NUMBER = re.compile(r"[0-9]{1,4}")
_DECIMAL = re.compile(r"[0-9]{1,6}(\.[0-9]{1,6})?")


def plain_draft_arguments(argv: Sequence[str]) -> dict[str, Any] | None:
    """The arguments of a `draft` call that needs no typer to read; None for anything else.

    Only unmistakable forms are taken: known options once each, values that are plainly valid.
    Help, errors and every unusual form are left to typer, so its messages stay the only ones.
    """
    if not argv or argv[0] != "draft":
        return None
    cases: list[str] = []
    found: dict[str, Any] = {"assignments": [], "rules": []}
    position = 1
    while position < len(argv):
        word = argv[position]
        position += 1
        if word == "-" or not word.startswith("-"):
            cases.append(word)
            continue
        if word in _FLAGS:
            if _FLAGS[word] in found:
                return None
            found[_FLAGS[word]] = True
            continue
        name, equals, value = word.partition("=")
        if name not in _VALUES and name not in _REPEATED:
            return None  # --help, --, -fjson, an unknown option...
        if not equals:
            if position == len(argv):
                return None
            value = argv[position]
            position += 1
        if not value or (value.startswith("-") and value != "-"):
            return None
        if name in _REPEATED:
            found[_REPEATED[name]].append(value)
        elif _VALUES[name] in found:
            return None
        else:
            found[_VALUES[name]] = value
    if "output_format" in found and found["output_format"] not in FORMAT_NAMES:
        return None
    if "width" in found:
        if not _WHOLE_NUMBER.fullmatch(found["width"]):
            return None  # the range is checked by `_draft`, whichever parser read it
        found["width"] = int(found["width"])
    if "jobs" in found:
        if not _WHOLE_NUMBER.fullmatch(found["jobs"]):
            return None  # a negative count is left to typer, which refuses it
        found["jobs"] = int(found["jobs"])
    if "window_hours" in found:
        if not _DECIMAL.fullmatch(found["window_hours"]):
            return None
        found["window_hours"] = float(found["window_hours"])
    for key in _PATHS:
        if key in found:
            found[key] = Path(found[key])
    found["rules"] = [Path(folder) for folder in found["rules"]]
    return {"cases": cases, **found}
