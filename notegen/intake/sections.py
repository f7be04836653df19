"""What every input reader returns, and the assembly they share.

A reader turns its source (a pasted lab block, a FHIR bundle) into `Reading`s, one per
value, and `assemble_sections` groups them into case-file sections: one mapping per
section, or a list of mappings (oldest first, each with `taken_at`) when the source
holds results from several times. Validation of values and units happens later, in the
case loader; here nothing is converted and nothing is guessed.
"""

from __future__ import annotations

import re
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from datetime import UTC, datetime
from typing import Any, Literal

from notegen.errors import InputError

Section = Literal["gas", "chem", "urine"]
LAB_SECTIONS: tuple[Section, ...] = ("gas", "chem", "urine")


@dataclass(frozen=True)
class ParsedInput:
    """Case-file-shaped data read from one source, with where each value came from.

    `data` holds the sections found (`patient`, `gas`, `chem`, `urine`, `context`);
    `provenance` maps a dotted field path (`chem.k`, `gas[1].ph`) to its origin
    ("paste line 4", "FHIR Observation/obs-k"); `unused` lists every line or resource
    that was not used, each with the reason; `notices` are sentences the note must carry
    about the source as a whole; `outside` the resources an acid-base assessment does not read
    (another test, a Condition), as (resource type, text). `date_as_written` is the one date of
    every result ("12/01/2026")
    when it reads both ways and no order was given: the times in `data` hold it in one reading, for
    ordering only, and every time shown must show it as written.
    """

    data: dict[str, Any]
    provenance: dict[str, str] = field(default_factory=dict)
    unused: list[str] = field(default_factory=list)
    notices: list[str] = field(default_factory=list)
    date_as_written: str | None = None
    # (resource type, text) of each resource outside an acid-base assessment (`Case.outside`)
    outside: list[tuple[str, str]] = field(default_factory=list)


@dataclass(frozen=True)
class Reading:
    """One lab value on its way into a section."""

    section: Section
    field: str  # the case-file key inside the section, e.g. "k"
    value: dict[str, Any]  # {"value": 2.9, "unit": "mmol/L", "qualifier": "<"}; unit/qualifier optional
    origin: str  # "paste line 4", "FHIR Observation/obs-k"
    taken_at: str | None = None  # ISO 8601 as it will appear in the data
    order: datetime | None = None  # the same instant, comparable (aware, UTC), for grouping and sorting
    sample: str | None = None  # gas only: "arterial" / "venous" / None when the source does not say
    line: int | None = None  # paste line, so a conflict can name it


ConflictFactory = Callable[[str, Sequence[Reading]], InputError]

_NUMBER = re.compile(r"^[+-]?(?:\d+(?:\.\d*)?|\.\d+)$", re.ASCII)  # 0-9 only: a Bengali ৪ is not read


def parse_number(text: str) -> int | float | None:
    """`"67"` → 67, `"7.50"` → 7.5; anything else → None."""
    text = text.strip()
    if not _NUMBER.match(text):
        return None
    number = float(text)
    if "." not in text and number.is_integer():
        return int(number)
    return number


_VALUE_TEXT = re.compile(
    r"^\s*(?P<qualifier>[<>≤≥]=?)?\s*(?P<number>[+-]?(?:\d+(?:\.\d*)?|\.\d+))\s*(?P<unit>\S.*?)?\s*$", re.ASCII
)


def parse_value_text(text: str) -> dict[str, Any] | None:
    """Read `"2.9"`, `"2.9 mmol/L"`, `"<10 mmol/L"` into a case-file value mapping.

    Returns None when the text does not start with a number. `<=`/`>=` are refused
    (None) because the case file only holds `<` and `>`.
    """
    match = _VALUE_TEXT.match(text)
    if match is None:
        return None
    number = parse_number(match["number"])
    if number is None:
        return None
    value: dict[str, Any] = {"value": number}
    if match["unit"]:
        value["unit"] = match["unit"]
    qualifier = match["qualifier"]
    if qualifier:
        if qualifier not in ("<", ">"):
            return None
        value["qualifier"] = qualifier
    return value


def as_utc(moment: datetime) -> datetime:
    """Make a time comparable: a naive time is read as UTC, for ordering only."""
    if moment.tzinfo is None:
        return moment.replace(tzinfo=UTC)
    return moment.astimezone(UTC)


def _origins(readings: Sequence[Reading]) -> str:
    return ", ".join(r.origin for r in readings)


def assemble_sections(
    readings: Sequence[Reading], conflict: ConflictFactory
) -> tuple[dict[str, Any], dict[str, str], list[str]]:
    """Group readings into case-file lab sections.

    Returns `(sections, provenance, unused)`. Readings taken at the same instant form one
    entry; gas readings also split by sample (an arterial and a venous gas at one time
    are two entries). An entry whose gas sample is unknown joins the only stated sample
    at that time. Raises what `conflict` builds when one field has two different values
    in one entry, or when a section holds several entries and some have no time (they
    could not be ordered).
    """
    sections: dict[str, Any] = {}
    provenance: dict[str, str] = {}
    unused: list[str] = []
    for section in LAB_SECTIONS:
        in_section = [r for r in readings if r.section == section]
        if not in_section:
            continue
        entries = _entries(section, in_section, conflict)
        if len(entries) > 1:
            untimed = [r for key, group in entries for r in group if key[0] is None]
            if untimed:
                timed = [r for key, group in entries for r in group if key[0] is not None][:3]
                raise conflict(
                    f"{section} results come from more than one time, but {_origins(untimed[:3])} "
                    f"has no time, so it cannot be placed among {_origins(timed)}",
                    untimed[:1] + timed[:1],
                )
        built: list[dict[str, Any]] = []
        for index, (key, group) in enumerate(entries):
            prefix = section if len(entries) == 1 else f"{section}[{index}]"
            entry, used = _entry(section, key, group, prefix, provenance, conflict)
            unused.extend(used)
            built.append(entry)
        sections[section] = built[0] if len(built) == 1 else built
    return sections, provenance, unused


_Key = tuple[datetime | None, str | None]


def _entries(
    section: Section, readings: Sequence[Reading], conflict: ConflictFactory
) -> list[tuple[_Key, list[Reading]]]:
    by_time: dict[datetime | None, list[Reading]] = {}
    for reading in readings:
        by_time.setdefault(reading.order, []).append(reading)
    entries: list[tuple[_Key, list[Reading]]] = []
    for moment, group in by_time.items():
        if section != "gas":
            entries.append(((moment, None), group))
            continue
        samples = sorted({r.sample for r in group if r.sample is not None})
        if len(samples) <= 1:
            entries.append(((moment, samples[0] if samples else None), group))
            continue
        unsure = [r for r in group if r.sample is None]
        if unsure:
            raise conflict(
                f"{_origins(unsure)} could belong to the arterial or the venous gas taken at the same time",
                unsure,
            )
        for sample in samples:
            entries.append(((moment, sample), [r for r in group if r.sample == sample]))
    # Oldest first; untimed entries cannot be ordered and only ever stand alone (checked by the caller).
    entries.sort(key=lambda item: (item[0][0] is not None, item[0][0] or datetime.min.replace(tzinfo=UTC),
                                   item[0][1] or ""))
    return entries


def _entry(
    section: Section,
    key: _Key,
    group: Sequence[Reading],
    prefix: str,
    provenance: dict[str, str],
    conflict: ConflictFactory,
) -> tuple[dict[str, Any], list[str]]:
    entry: dict[str, Any] = {}
    unused: list[str] = []
    first_of: dict[str, Reading] = {}
    moment, sample = key
    if section == "gas" and sample is not None:
        entry["sample"] = sample
        provenance[f"{prefix}.sample"] = next(r.origin for r in group if r.sample == sample)
    for reading in group:
        earlier = first_of.get(reading.field)
        if earlier is not None:
            if earlier.value == reading.value:
                unused.append(f"{reading.origin}: same {section}.{reading.field} value as {earlier.origin}; "
                              "used once")
                continue
            raise conflict(
                f"{section}.{reading.field} is given twice for the same time with different values: "
                f"{_describe(earlier)} and {_describe(reading)}",
                [earlier, reading],
            )
        first_of[reading.field] = reading
        entry[reading.field] = dict(reading.value)
        provenance[f"{prefix}.{reading.field}"] = reading.origin
    if moment is not None:
        entry["taken_at"] = next(r.taken_at for r in group if r.taken_at is not None)
    return entry, unused


def _describe(reading: Reading) -> str:
    value = reading.value
    text = f"{value.get('qualifier', '')}{value['value']}"
    if "unit" in value:
        text += f" {value['unit']}"
    return f"{text} ({reading.origin})"
