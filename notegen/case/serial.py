"""Serial results: ordering them in time, refusing an implausible span, and choosing the current set.

A section may hold several dated results. The latest complete set is read; results older than the
window are set aside (and said so), and results more than a year apart are refused as a mistyped date.
"""

from __future__ import annotations

from datetime import datetime, timedelta
from typing import Any

from notegen._format import format_result_time
from notegen.case.checks import _Collector, _fmt

__all__ = ["MAX_SPAN_DAYS", "check_span", "choose_current", "sort_key"]


def sort_key(when: datetime | None) -> datetime:
    """An instant to order results by: aware times in UTC, naive ones as written, never the machine's zone.

    A section never mixes the two kinds; across sections a mix is refused where times are subtracted.
    """
    if when is None:
        return datetime.min
    offset = when.utcoffset()
    return when.replace(tzinfo=None) - offset if offset is not None else when


MAX_SPAN_DAYS = 366  # results further apart are not one admission's serial results: a date is mistyped


def check_span(entries: dict[str, list[dict[str, Any]]], col: _Collector) -> None:
    """Refuse results spread over more than a year: one mistyped year would make a result "the latest".

    With a date read neither way (`Case.date_as_written`) every result is of that one day: the span is
    within the day, whichever calendar date the times hold, so neither this check nor the window is fooled.
    """
    times = [e["taken_at"] for items in entries.values() for e in items if e.get("taken_at") is not None]
    if len(times) < 2:
        return
    oldest, newest = min(times, key=sort_key), max(times, key=sort_key)
    if sort_key(newest) - sort_key(oldest) > timedelta(days=MAX_SPAN_DAYS):
        col.problem(
            "taken_at",
            f"results run from {format_result_time(oldest, col.date_as_written)} to "
            f"{format_result_time(newest, col.date_as_written)}, more than a year apart: a date is probably "
            "mistyped; correct it, or draft the older results as a case of their own",
        )


_SECTION_WORDS = {"gas": "gas", "chem": "chemistry", "urine": "urine"}


def choose_current(
    entries: dict[str, list[dict[str, Any]]], window_hours: float, col: _Collector
) -> tuple[dict[str, dict[str, Any]], dict[str, list[dict[str, Any]]]]:
    current: dict[str, dict[str, Any]] = {}
    earlier: dict[str, list[dict[str, Any]]] = {}
    serial: dict[str, list[str]] = {}  # time read -> sections given more than once, as the reader names them
    for section, items in entries.items():
        chosen = len(items) - 1
        if section == "gas":
            complete = [i for i, e in enumerate(items) if "ph" in e and "pco2" in e]
            if complete:
                chosen = complete[-1]
        current[section] = items[chosen]
        earlier[section] = [e for i, e in enumerate(items) if i != chosen]
        if len(items) > 1 and items[chosen].get("taken_at"):
            when = format_result_time(items[chosen]["taken_at"], col.date_as_written)
            serial.setdefault(when, []).append(_SECTION_WORDS.get(section, section))
    if serial:
        # One line for all sections: the chart note lists it under what was given but not used.
        read = "; ".join(f"{' and '.join(names)} of {when}" for when, names in serial.items())
        col.notices.append(f"Earlier results were given; only the latest complete set is read ({read})")
    times = [e["taken_at"] for e in current.values() if e.get("taken_at") is not None]
    if len(times) > 1:
        try:
            newest = max(times, key=sort_key)
            for section in list(current):
                taken = current[section].get("taken_at")
                if taken is not None and newest - taken > timedelta(hours=window_hours):
                    col.notices.append(
                        f"{section} results from {format_result_time(taken, col.date_as_written)} are more than "
                        f"{_fmt(window_hours)} hours older than the newest results and were not combined with them"
                    )
                    earlier[section].append(current.pop(section))
        except TypeError:
            col.problem("taken_at", "mixes times with and without a time zone; give all times the same way")
    return current, earlier
