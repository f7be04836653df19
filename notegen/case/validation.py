"""Plain case data (from a case file, a paste, FHIR or --set) -> the validated `Case`.

Every problem is collected with its field path and reported at once. A value is never
converted from a unit that was not stated or implied by the case's unit system, and a
value that fits another unit better is refused with the suggestion, never converted.
"""

from __future__ import annotations

from collections.abc import Mapping
from datetime import datetime
from typing import Any

# The one Henderson-Hasselbalch (a pure function on numbers); pyproject's layer contract names this
# single exception to "case imports only from below".
from notegen._format import format_result_time
from notegen.case import units as u
from notegen.case.checks import (
    _VALUE_TEXT,
    DEFAULT_WINDOW_HOURS,
    MAX_TEXT,
    YEARS,
    _Collector,
    _did_you_mean,
    _finite,
    _fmt,
    _key,
    _lab_aliases,
    _shown,
    _unsafe_character,
    as_written,
    foreign_digit,
)
from notegen.case.context import validate_context, validate_patient
from notegen.case.model import (
    Case,
    Chem,
    Gas,
    Measurement,
    Urine,
)
from notegen.case.serial import check_span, choose_current, sort_key
from notegen.case.unit_checks import (
    _check_pco2_unit,
    ambiguous_bare_pco2,
    ambiguous_bare_value,
)
from notegen.case.unit_checks import pco2_fits_other_unit as pco2_fits_other_unit  # its old home, kept
from notegen.errors import CaseFileError, CaseValueError
from notegen.knowledge import shipped_knowledge

TOP_KEYS = ("case", "units", "dates", "patient", "gas", "chem", "urine", "context")
DATE_ORDERS = ("day-first", "month-first")  # `dates:`, how a pasted 03/04/2026 is read
LAB_SECTIONS: dict[str, tuple[str, ...]] = {
    "gas": ("ph", "pco2", "hco3", "po2"),
    "chem": (
        "na",
        "k",
        "cl",
        "tco2",
        "bun",
        "creatinine",
        "glucose",
        "albumin",
        "ca",
        "ionized_ca",
        "mg",
        "phos",
        "lactate",
        "osm",
        "bhb",
        "salicylate",
    ),
    "urine": ("na", "k", "cl", "creatinine", "ph", "osm", "calcium", "ketones", "urea_nitrogen"),
}

def _parse_lab_value(raw: Any, path: str, field_name: str, col: _Collector) -> tuple[float, str, str | None] | None:
    """Return (number, canonical unit spelling, qualifier) or record a problem."""
    qualifier: str | None = None
    unit_text: str | None = None
    if isinstance(raw, bool) or raw is None:
        col.problem(path, f"expected a number, got {_shown(raw)}")
        return None
    if isinstance(raw, int | float):
        if _finite(raw) is None and isinstance(raw, int):
            col.problem(path, "is too large to be a lab value")
            return None
        number = float(raw)
    elif isinstance(raw, str):
        match = _VALUE_TEXT.match(raw)
        if (digit := foreign_digit(raw)) is not None:
            col.problem(path, f"{raw[:60]!r} {digit}")
            return None
        if match and match["q"] not in (None, "<", ">"):
            col.problem(path, f"{raw[:60]!r}: {match['q']!r} cannot be held; a reported bound is < or > (e.g. \"<20\")")
            return None
        if not match:
            col.problem(path, f'{raw[:60]!r} is not a number with an optional unit (e.g. "6.2 kPa")')
            return None
        number, unit_text, qualifier = float(match["num"]), match["unit"], match["q"]
    elif isinstance(raw, Mapping):
        extra = set(raw) - {"value", "unit", "qualifier"}
        if extra or "value" not in raw:
            col.problem(path, "a value mapping takes `value`, and optionally `unit` and `qualifier` (< or >)")
            return None
        inner = raw["value"]
        if isinstance(inner, bool) or not isinstance(inner, int | float):
            col.problem(path, f"`value` must be a number, got {_shown(inner)}")
            return None
        if _finite(inner) is None and isinstance(inner, int):
            col.problem(path, "is too large to be a lab value")
            return None
        number = float(inner)
        unit_text = raw.get("unit")
        qualifier = raw.get("qualifier")
        if qualifier not in (None, "<", ">"):
            col.problem(path, f"`qualifier` must be < or >, got {_shown(qualifier)}")
            return None
        if unit_text is not None and not isinstance(unit_text, str):
            col.problem(path, f"`unit` must be text, got {_shown(unit_text)}")
            return None
    else:
        col.problem(
            path,
            f'expected a number, a text such as "6.2 kPa" or a mapping {{value, unit}}, got a {type(raw).__name__}',
        )
        return None
    if number != number or number in (float("inf"), float("-inf")):
        col.problem(path, "is not a finite number")
        return None
    accepted = u.accepted_units(field_name)
    if not unit_text:
        unit = u.default_unit(field_name, col.system)
    else:
        normal = u.normalise_unit(unit_text)
        if normal is None or normal not in accepted:
            shown = ", ".join(a or "(no unit)" for a in accepted)
            col.problem(path, f"unit {_shown(unit_text)} is not accepted here (accepted: {shown})")
            return None
        unit = normal
    return number, unit, qualifier


def _check_plausible(number: float, unit: str, path: str, field_name: str, col: _Collector) -> float | None:
    info = shipped_knowledge().fields[field_name]
    canonical = u.to_canonical(field_name, number, unit)
    if info.low <= canonical <= info.high:
        return canonical
    canon_unit = u.FIELD_UNITS[field_name].canonical
    shown = f"{_fmt(number)} {unit}".strip()
    expected = f"expected {_fmt(info.low)} to {_fmt(info.high)} {canon_unit}".rstrip()
    suggestions = []
    for other in u.accepted_units(field_name):
        alternative = u.to_canonical(field_name, number, other)
        if other != unit and info.low <= alternative <= info.high and abs(alternative - canonical) > 1e-9:
            converted = "" if other == canon_unit else f" ({_fmt(alternative)} {canon_unit})"
            suggestions.append(f"{_fmt(number)} {other}{converted}")
    if suggestions:
        col.problem(
            path,
            f"{shown} is not a plausible {info.label} ({expected}); did you mean {' or '.join(suggestions)}? "
            "Give the unit explicitly.",
        )
        return None
    col.problem(path, f"{shown} is not a plausible {info.label} ({expected})")
    return None


def _parse_time(raw: Any, path: str, col: _Collector) -> datetime | None:
    if raw is None:
        return None
    when: datetime | None = raw if isinstance(raw, datetime) else None
    if isinstance(raw, str):
        try:
            when = datetime.fromisoformat(raw.strip().replace("Z", "+00:00"))
        except ValueError:
            pass
    if when is None:
        col.problem(path, f"{str(raw)[:60]!r} is not an ISO date-time such as 2026-03-14T06:30")
    elif not YEARS[0] <= when.year <= YEARS[1]:
        col.problem(path, f"{_time_text(when, col)} is not a plausible result time (year {when.year})")
        when = None
    return when


def _time_text(when: datetime, col: _Collector) -> str:
    """A time in a refusal: ISO as given, or with the date as written when it reads both ways."""
    return when.isoformat() if col.date_as_written is None else format_result_time(when, col.date_as_written)


def _lab_entry(section: str, raw: Any, path: str, col: _Collector) -> dict[str, Any] | None:
    if not isinstance(raw, Mapping):
        col.problem(path, f"expected a mapping of values, got a {type(raw).__name__}")
        return None
    names = LAB_SECTIONS[section]
    allowed = (
        (*names, "taken_at") + (("sample",) if section == "gas" else ()) + (("urea",) if section == "chem" else ())
    )
    values: dict[str, Any] = {}
    bad_time = False  # a time that cannot be read was reported; the entry is not used further
    for key, item in raw.items():
        key_path = f"{path}.{_key(key)}"
        if key not in allowed:
            col.problem(key_path, _did_you_mean(str(key), list(allowed), _lab_aliases(section)))
            continue
        if item is None:
            continue
        if key == "taken_at":
            values["taken_at"] = _parse_time(item, key_path, col)
            bad_time = values["taken_at"] is None
        elif key == "sample":
            sample = str(item).strip().lower()
            if sample not in ("arterial", "venous"):
                col.problem(key_path, f"{_shown(item)} is not arterial or venous")
            else:
                values["sample"] = sample
        else:
            values[key] = item
    if section == "chem" and "urea" in values and "bun" in values:
        col.problem(f"{path}.urea", "give either `bun` or `urea`, not both")
        return None
    taken_at = values.get("taken_at")
    out: dict[str, Any] = {k: v for k, v in values.items() if k in ("taken_at", "sample")}
    for key in [k for k in values if k not in ("taken_at", "sample")]:
        field_name = f"{section}.bun" if key == "urea" else f"{section}.{key}"
        key_path = f"{path}.{key}"
        parsed = _parse_lab_value(values[key], key_path, field_name, col)
        if parsed is None:
            continue
        number, unit, qualifier = parsed
        if not col.declared and not _unit_given(values[key]):
            refusal = ambiguous_bare_value(field_name, number, urea=key == "urea")
            if refusal is not None:
                col.problem(key_path, refusal)
                continue
        reported_unit = unit
        if key == "urea":
            reported_unit = f"{unit} urea"
            if unit == "mg/dL":  # urea mass, not urea nitrogen
                number_bun = number * u.UREA_MG_DL_TO_BUN_MG_DL
                canonical = _check_plausible(number_bun, "mg/dL", key_path, field_name, col)
            else:
                canonical = _check_plausible(number, unit, key_path, field_name, col)
        else:
            canonical = _check_plausible(number, unit, key_path, field_name, col)
        if canonical is None:
            continue
        out["bun" if key == "urea" else key] = canonical
        col.measurements.append(
            Measurement(
                field=field_name,
                value=canonical,
                unit=u.FIELD_UNITS[field_name].canonical,
                reported_value=number,
                reported_text=as_written(values[key]),
                reported_unit=reported_unit,
                qualifier=qualifier,  # type: ignore[arg-type]
                taken_at=taken_at,
                source=col.source(key_path),
                sample=values.get("sample"),  # each gas keeps its own sample (None outside the gas section)
            )
        )
    if section == "gas" and not _unit_given(values.get("pco2")):
        _check_pco2_unit(out, f"{path}.pco2", col)
        if not col.declared and out.get("pco2") is not None:
            refusal = ambiguous_bare_pco2(out["pco2"], out.get("ph"), out.get("hco3"))
            if refusal is not None:
                col.problem(f"{path}.pco2", refusal)
    return None if bad_time else out


def _unit_given(raw: Any) -> bool:
    if isinstance(raw, str):
        match = _VALUE_TEXT.match(raw)
        return bool(match and match["unit"])
    return isinstance(raw, Mapping) and bool(raw.get("unit"))


_MODELS: dict[str, type[Gas] | type[Chem] | type[Urine]] = {"gas": Gas, "chem": Chem, "urine": Urine}


def _lab_section(section: str, raw: Any, col: _Collector, entries: dict[str, list[dict[str, Any]]]) -> None:
    if isinstance(raw, list):
        if not raw:
            return
        parsed = [_lab_entry(section, item, f"{section}[{i}]", col) for i, item in enumerate(raw)]
        good = [p for p in parsed if p is not None]
        if len(good) > 1 and any(p.get("taken_at") is None for p in good):
            col.problem(section, "serial results need `taken_at` on every entry, so the latest can be told apart")
            return
        if len({p["taken_at"].tzinfo is None for p in good if p.get("taken_at") is not None}) > 1:
            col.problem(section, "mixes times with and without a time zone; give all times the same way")
            return
        by_time: dict[tuple[datetime | None, str], dict[str, Any]] = {}
        for p in good:
            # an arterial and a venous gas drawn together are two results, not one
            when = (p.get("taken_at"), p.get("sample", ""))
            if when in by_time:
                earlier = by_time[when]
                for key, value in p.items():
                    if key in ("taken_at", "sample") or key not in earlier:
                        continue
                    if abs(earlier[key] - value) > 1e-9:
                        at = _time_text(when[0], col) if when[0] is not None else "(no time)"
                        col.problem(
                            f"{section}.{key}",
                            f"two different values ({_fmt(earlier[key])} and {_fmt(value)}) at the same time "
                            f"{at}; keep the one that is right",
                        )
                earlier.update(p)
            else:
                by_time[when] = dict(p)
        # oldest first; at the same time a venous gas sorts before an arterial one, so arterial is read
        entries[section] = [by_time[k] for k in sorted(by_time, key=lambda k: (sort_key(k[0]), k[1] == "arterial"))]
    elif raw is not None:
        entry = _lab_entry(section, raw, section, col)
        if entry is not None:
            entries[section] = [entry]


def validate_case(
    data: Any,
    *,
    filename: str | None = None,
    provenance: Mapping[str, str] | None = None,
    default_source: str = "case file",
    window_hours: float = DEFAULT_WINDOW_HOURS,
    date_as_written: str | None = None,
) -> Case:
    """Validate plain case data into a `Case`, or raise with every problem found.

    `date_as_written`: every result's one date as a paste wrote it, read neither day first nor month
    first (`Case.date_as_written`); the calendar dates of the times are then never shown.
    """
    if data is None:
        raise CaseFileError("the file is empty", filename=filename)
    if not isinstance(data, Mapping):
        kind = "a list" if isinstance(data, list) else f"a single {type(data).__name__} value"
        raise CaseFileError(
            f"a case file is a mapping of sections ({', '.join(TOP_KEYS)}), but this one holds {kind}",
            filename=filename,
        )
    system = data.get("units", "conventional")
    col = _Collector(
        system="si" if system == "si" else "conventional",
        filename=filename,
        provenance=provenance or {},
        default_source=default_source,
        declared="units" in data,
        date_as_written=date_as_written,
    )
    for key in data:
        if key not in TOP_KEYS:
            col.problem(_key(key), _did_you_mean(str(key), TOP_KEYS))
    if system not in ("conventional", "si"):
        col.problem("units", f"{_shown(system)} is not conventional or si")
    if data.get("dates") is not None and data["dates"] not in DATE_ORDERS:
        col.problem("dates", f"{_shown(data['dates'])} is not day-first or month-first")
    label = data.get("case")
    if label is not None:
        if not isinstance(label, str | int | float) or isinstance(label, bool) or len(str(label)) > MAX_TEXT:
            col.problem("case", "the case label must be a short text (at most 500 characters)")
            label = None
        elif (unsafe := _unsafe_character(str(label))) is not None:
            col.problem("case", unsafe)
            label = None
        else:
            label = str(label)
    entries: dict[str, list[dict[str, Any]]] = {}
    for section in LAB_SECTIONS:
        _lab_section(section, data.get(section), col, entries)
    patient = validate_patient(data.get("patient"), col)
    context = validate_context(data.get("context"), col)
    if col.problems:
        raise CaseValueError(col.problems, filename=filename, origins=col.provenance)
    check_span(entries, col)
    current, earlier = ({}, {}) if col.problems else choose_current(entries, window_hours, col)
    if col.problems:
        raise CaseValueError(col.problems, filename=filename, origins=col.provenance)

    def build(section: str, values: dict[str, Any]) -> Any:
        return _MODELS[section](**values)

    return Case(
        label=label,
        units=col.system,  # type: ignore[arg-type]
        patient=patient,
        gas=build("gas", current.get("gas", {})),
        chem=build("chem", current.get("chem", {})),
        urine=build("urine", current.get("urine", {})),
        context=context,
        measurements=tuple(col.measurements),
        earlier_gas=tuple(build("gas", e) for e in earlier.get("gas", [])),
        earlier_chem=tuple(build("chem", e) for e in earlier.get("chem", [])),
        earlier_urine=tuple(build("urine", e) for e in earlier.get("urine", [])),
        notices=tuple(col.notices),
        date_as_written=date_as_written,
    )
