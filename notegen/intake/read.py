"""Getting a case in: a case file (YAML or JSON), a FHIR R4 resource, a pasted lab
block and `--set` assignments all become plain case data, then one validated `Case`.

The readers for pastes, FHIR and `--set` live in this package (`paste`, `fhir`, `overrides`) and are imported only
when that way in is used, so the ordinary path stays fast.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from typing import TYPE_CHECKING, Any

from notegen.case.checks import DEFAULT_WINDOW_HOURS
from notegen.case.model import Case, OutsideResource
from notegen.case.validation import LAB_SECTIONS, validate_case
from notegen.errors import InputError
from notegen.intake.files import decode, parse_text, read_source

if TYPE_CHECKING:
    from notegen.knowledge.settings import DateOrder

FHIR_MAX_DEPTH = 40  # FHIR nests deeper than a case file does


def _merge_labs(
    base: dict[str, Any], labs: Mapping[str, Any], where: str
) -> tuple[dict[str, Any], dict[str, int]]:
    """Fill the lab sections of `base` from `labs`; the same field given twice is refused.

    Results of different times (or one with a time and one without) are never merged key by
    key: each keeps its own time as a serial result (validation refuses an entry without one).
    Returns the merged data and, per section that became serial, the index of the first entry
    taken from `labs`, so that their origins can be renumbered.
    """
    merged = dict(base)
    offsets: dict[str, int] = {}
    for section, value in labs.items():
        if section not in LAB_SECTIONS:
            if section in merged and merged[section] != value:
                raise InputError(f"{where}: `{section}` is given both in the case file and in the paste")
            merged[section] = value
            continue
        if section not in merged or merged[section] in (None, {}):
            merged[section] = value
            continue
        existing = merged[section]
        both_single = isinstance(existing, Mapping) and isinstance(value, Mapping)
        if both_single and (existing.get("taken_at") is None) != (value.get("taken_at") is None):
            timed, untimed = ("paste", "case file") if existing.get("taken_at") is None else ("case file", "paste")
            raise InputError(
                f"{where}: the {timed}'s {section} results have a time and the {untimed}'s have none, so they "
                f"cannot be put in order or taken as one set; give the {untimed}'s {section} a taken_at, or keep one"
            )
        if not both_single or existing.get("taken_at") != value.get("taken_at"):
            earlier = existing if isinstance(existing, list) else [existing]
            merged[section] = [*earlier, *(value if isinstance(value, list) else [value])]
            offsets[section] = len(earlier)
            continue
        clash = sorted(k for k in set(existing) & set(value) if k != "taken_at" and existing[k] != value[k])
        if clash:
            names = ", ".join(f"{section}.{k}" for k in clash)
            raise InputError(f"{where}: {names} given both in the case file and in the paste; keep one")
        merged[section] = {**existing, **value}
    return merged, offsets


_PATH = re.compile(r"^(?P<section>[a-z]+)(?:\[(?P<index>\d+)\])?(?P<rest>\..*)?$")


def _renumbered(provenance: Mapping[str, str], offsets: Mapping[str, int]) -> dict[str, str]:
    """Paste origins keyed by their place in the merged data (`chem.k` -> `chem[1].k`)."""
    out: dict[str, str] = {}
    for path, origin in provenance.items():
        match = _PATH.match(path)
        if match is None or match["section"] not in offsets:
            out[path] = origin
            continue
        index = offsets[match["section"]] + int(match["index"] or 0)
        out[f"{match['section']}[{index}]{match['rest'] or ''}"] = origin
    return out


def _date_order(
    data: Mapping[str, Any], overrides: Sequence[str], option: DateOrder | None, service: DateOrder | None
) -> DateOrder | None:
    """How a pasted 03/04/2026 is read: the command line's `--date-order` (or `--set dates=...`, the last
    one), else the case file's `dates:`, else the service's `date_order` setting; None refuses it."""
    order = data.get("dates")
    for assignment in overrides:
        name, _, value = assignment.partition("=")
        if name.strip() == "dates":
            order = value.strip().strip("\"'")
            if option is not None and order != option:
                raise InputError(f"--date-order {option} and --set dates={order} disagree; give the date order once")
    order = option or order or service
    return order if order in ("day-first", "month-first") else None


def _holds_times(data: Mapping[str, Any]) -> bool:
    """Whether any lab result of `data` (a case file's, a FHIR resource's) carries a time."""
    for section in LAB_SECTIONS:
        entries = data.get(section)
        for entry in entries if isinstance(entries, list) else [entries]:
            if isinstance(entry, Mapping) and entry.get("taken_at") is not None:
                return True
    return False


def _other_dates(date: str, others: str, where: str) -> InputError:
    """An ambiguous pasted date beside other dates: ordering them would need its reading."""
    from notegen.intake.paste_dates import ORDER_HINT

    return InputError(f"{where}: the pasted date {date!r} could be day/month or month/day, and {others} to be put "
                      f"in order with it; write the pasted dates as YYYY-MM-DD, or {ORDER_HINT}")


def read_case(
    source: str | None,
    *,
    paste: str | None = None,
    overrides: Sequence[str] = (),
    stdin: bytes | None = None,
    window_hours: float = DEFAULT_WINDOW_HOURS,
    date_order: DateOrder | None = None,
    service_date_order: DateOrder | None = None,
) -> Case:
    """Read, merge and validate a case from any mix of the ways in.

    `source` is a case-file path, `-` for standard input, or None; `paste` is a path
    or `-` for a pasted lab block. Only one of them may read standard input. A pasted date such as
    03/04/2026 reads in `date_order` (the command line's), else the case's `dates:`, else
    `service_date_order` (a service's setting, `Drafter.date_order`).
    """
    if source == "-" and paste == "-":
        raise InputError("only one of the case file and the paste can come from standard input (-)")
    data: dict[str, Any] = {}
    provenance: dict[str, str] = {}
    unused: list[str] = []
    notices: list[str] = []
    outside: list[tuple[str, str]] = []
    filename = "--set"
    date_as_written: str | None = None  # a pasted date read neither way (PasteDates.unresolved)
    if source is not None:
        text, filename = read_source(source, stdin)
        parsed = parse_text(text, filename, max_depth=FHIR_MAX_DEPTH)
        if isinstance(parsed, Mapping) and "resourceType" in parsed:
            from notegen.intake.fhir import read_fhir

            fhir = read_fhir(dict(parsed), source=filename)
            data, provenance, unused = dict(fhir.data), dict(fhir.provenance), list(fhir.unused)
            notices, outside = list(fhir.notices), list(fhir.outside)
        else:
            if not isinstance(parsed, Mapping):
                return validate_case(parsed, filename=filename)  # raises the located "not a mapping" error
            data = dict(parsed)
    if paste is not None:
        from notegen.intake.paste import parse_paste

        if paste == "-":
            paste_text, paste_name = decode(stdin or b"", "<stdin>"), "pasted labs"
        else:
            paste_text, paste_name = read_source(paste)
        order = _date_order(data, overrides, date_order, service_date_order)
        result = parse_paste(paste_text, source=paste_name, date_order=order)
        if source is None:
            filename = paste_name
        date_as_written = result.date_as_written
        if date_as_written is not None and _holds_times(data):
            raise _other_dates(date_as_written, "the case file's results carry dates", paste_name)
        data, offsets = _merge_labs(data, result.data, paste_name)
        provenance.update(_renumbered(result.provenance, offsets))
        unused.extend(result.unused)
    if overrides:
        from notegen.intake.overrides import apply_overrides, override_provenance

        if date_as_written is not None and any("taken_at" in a.partition("=")[0] for a in overrides):
            raise _other_dates(date_as_written, "--set gives a result time", "--set")
        data = apply_overrides(data, list(overrides))
        provenance.update(override_provenance(list(overrides)))
    if source is None and paste is None and not overrides:
        raise InputError("no case given: name a case file, `-` for standard input, --paste or --set")
    case = validate_case(data, filename=filename, provenance=provenance, window_hours=window_hours,
                         date_as_written=date_as_written)
    return _with_notices(case, notices, unused, outside)


def _with_notices(case: Case, notices: list[str], unused: list[str], outside: list[tuple[str, str]]) -> Case:
    """The case with what its source said of itself, what was set aside, and what lies outside the assessment."""
    update: dict[str, Any] = {}
    if unused or notices:
        update["notices"] = (*notices, *case.notices, *unused)
    if outside:
        update["outside"] = tuple(OutsideResource(resource_type=kind, text=text) for kind, text in outside)
    return case.model_copy(update=update) if update else case


def read_case_data(data: Mapping[str, Any], *, name: str = "<case data>") -> Case:
    """Validate plain case data (a mapping shaped like a case file), as a case file's content is validated."""
    if not isinstance(data, Mapping):
        raise InputError(f"{name}: case data must be a mapping, not {type(data).__name__}")
    if "resourceType" in data:
        from notegen.intake.fhir import read_fhir

        fhir = read_fhir(dict(data), source=name)
        case = validate_case(dict(fhir.data), filename=name, provenance=dict(fhir.provenance))
        return _with_notices(case, fhir.notices, fhir.unused, fhir.outside)
    return validate_case(dict(data), filename=name)


def read_case_text(text: str, *, name: str = "<case text>") -> Case:
    """Read and validate the text of a case file (YAML or JSON, or a FHIR resource)."""
    return read_case("-", stdin=text.encode("utf-8"))
