"""`--set name=value`: change or add one case-file field from the command line.

Names are the case file's dotted names (`gas.ph`, `chem.k`, `context.meds`); a section
holding serial results takes an index (`chem[1].k`). Values are read the way a case file
reads them: `2.9` is a number, `"2.9 mmol/L"` or `"<10 mmol/L"` carries its unit and
qualifier, lists (`context.meds`, `context.findings`) are comma-separated (`furosemide,hctz`,
or in brackets as a case file writes them, `[furosemide, hctz]`). Repeating a list name adds to
the list given earlier on the same command line. An empty item or a stray bracket is refused.
"""

from __future__ import annotations

import copy
import difflib
import re
from collections.abc import Sequence
from typing import Any

from notegen.case.model import Chem, Context, Gas, Patient, Urine
from notegen.errors import UsageError
from notegen.intake.sections import parse_number, parse_value_text

_LIST_FIELDS = {"context.meds", "context.findings"}
_TOP_LEVEL = {"case", "units", "dates"}
_ASSIGNMENT = re.compile(r"^(?P<section>[a-z_]+)(?:\[(?P<index>-?\d+)\])?(?:\.(?P<field>[a-z_0-9]+))?$")


def _valid_names() -> dict[str, str]:
    """Dotted name -> kind ("measure", "plain", "list"), from the validated model's fields."""
    names: dict[str, str] = {name: "plain" for name in _TOP_LEVEL}
    for section, model in (("gas", Gas), ("chem", Chem), ("urine", Urine)):
        for name in model.model_fields:
            plain = name in ("sample", "taken_at")
            names[f"{section}.{name}"] = "plain" if plain else "measure"
    names["chem.urea"] = "measure"  # the case file takes urea (SI) as well as BUN
    for name in Patient.model_fields:
        names[f"patient.{name}"] = "plain"
    for name in Context.model_fields:
        dotted = f"context.{name}"
        names[dotted] = "list" if dotted in _LIST_FIELDS else "plain"
    return names


def override_provenance(assignments: Sequence[str]) -> dict[str, str]:
    """Provenance entries ("--set") for the fields `assignments` set, for the case loader to merge."""
    provenance: dict[str, str] = {}
    for assignment in assignments:
        name, _, _ = assignment.partition("=")
        provenance[name.strip()] = "--set"
    return provenance


def apply_overrides(data: dict[str, Any], assignments: Sequence[str]) -> dict[str, Any]:
    """Return a copy of case-file `data` with each `name=value` assignment applied.

    Raises UsageError naming the assignment when it has no `=`, names a field the case
    file does not have (with the closest valid names), or indexes a section wrongly.
    """
    result = copy.deepcopy(data)
    valid = _valid_names()
    set_lists: set[str] = set()
    for assignment in assignments:
        name, equals, raw_value = assignment.partition("=")
        name = name.strip()
        if not equals or not name:
            raise UsageError(f"--set {assignment!r}: write it as name=value, e.g. --set chem.k=2.9")
        match = _ASSIGNMENT.match(name)
        dotted = f"{match['section']}.{match['field']}" if match and match["field"] else (match["section"]
                                                                                          if match else name)
        if match is None or dotted not in valid:
            close = difflib.get_close_matches(dotted, sorted(valid), n=3, cutoff=0.6)
            hint = f"; did you mean {', '.join(close)}?" if close else ""
            raise UsageError(f"--set {assignment!r}: {dotted!r} is not a case-file field{hint}")
        index = int(match["index"]) if match["index"] is not None else None
        if index is not None and (match["section"] not in ("gas", "chem", "urine") or match["field"] is None):
            raise UsageError(f"--set {assignment!r}: only gas, chem and urine fields take an index")
        value = _value(valid[dotted], raw_value.strip(), dotted, assignment)
        if match["field"] is None:
            result[dotted] = value
            continue
        section = match["section"]
        target = _target(result, section, index, assignment)
        field = match["field"]
        if valid[dotted] == "list" and dotted in set_lists and isinstance(target.get(field), list):
            target[field] = list(target[field]) + list(value)
        else:
            target[field] = value
        if valid[dotted] == "list":
            set_lists.add(dotted)
    return result


def _target(result: dict[str, Any], section: str, index: int | None, assignment: str) -> dict[str, Any]:
    current = result.get(section)
    if isinstance(current, list):
        if index is None:
            raise UsageError(
                f"--set {assignment!r}: {section} holds {len(current)} serial results; name one, "
                f"e.g. {section}[{len(current) - 1}].{assignment.partition('.')[2]}")
        if not -len(current) <= index < len(current):
            raise UsageError(f"--set {assignment!r}: {section} holds {len(current)} results "
                             f"(index 0 to {len(current) - 1})")
        entry = current[index]
        if not isinstance(entry, dict):
            raise UsageError(f"--set {assignment!r}: {section}[{index}] is not a mapping")
        return entry
    if index is not None:
        raise UsageError(f"--set {assignment!r}: {section} does not hold serial results; drop the index")
    if current is None:
        current = result[section] = {}
    if not isinstance(current, dict):
        raise UsageError(f"--set {assignment!r}: {section} in the case is not a mapping")
    return current


def _value(kind: str, raw: str, dotted: str, assignment: str) -> Any:
    if len(raw) >= 2 and raw[0] == raw[-1] and raw[0] in "\"'":
        raw = raw[1:-1].strip()  # quotes kept by a shell that did not remove them
    if not raw:
        raise UsageError(f"--set {assignment!r}: no value after '='")
    if kind == "list":
        if raw.startswith("[") and raw.endswith("]"):
            raw = raw[1:-1]  # the YAML flow form a case file uses: [furosemide, hctz]
        items = [item.strip() for item in raw.split(",")]
        items = [item[1:-1].strip() if len(item) >= 2 and item[0] == item[-1] and item[0] in "\"'" else item
                 for item in items]
        if any(not item or item[0] in "[]" or item[-1] in "[]" for item in items):
            raise UsageError(f"--set {assignment!r}: write a list as names separated by commas "
                             f"(--set {dotted}=furosemide,hctz), or repeat --set {dotted}=NAME")
        return items
    if kind == "measure":
        value = parse_value_text(raw)
        if value is None:
            raise UsageError(f"--set {assignment!r}: {dotted} needs a number, optionally with a unit "
                             "and < or > (e.g. 2.9, \"2.9 mmol/L\", \"<10 mmol/L\")")
        return value
    number = parse_number(raw)
    return number if number is not None else raw
