"""Dates and times in a pasted lab block: ISO, slashed and named-month dates, with or without a time.

A slashed date that reads both ways (03/04/2026) is refused unless the date order was given; a date
without a year, or a time without a date, is refused rather than guessed.
"""

from __future__ import annotations

import re
from datetime import datetime

from notegen.errors import PasteError
from notegen.intake.sections import as_utc

__all__ = ["ORDER_HINT", "echo", "read_times"]

# How a refusal of an ambiguous date says to give the order: the option, the case key (a service's
# `date_order` setting in its rules folder does the same for all its cases).
ORDER_HINT = "give the date order: --date-order day-first (or month-first), or `dates: day-first` in the case file"


_TIME = r"(?:[T ]\s*(?P<{p}h>\d{{1,2}}):(?P<{p}mi>\d{{2}})(?::(?P<{p}s>\d{{2}}))?)?"
_MONTHS = "jan|feb|mar|apr|may|jun|jul|aug|sep|oct|nov|dec"
_DATE_PATTERNS = [
    ("iso", re.compile(r"(?<!\d)(?P<y>\d{4})-(?P<m>\d{2})-(?P<d>\d{2})" + _TIME.format(p=""))),
    ("slash", re.compile(r"(?<![\d/.])(?P<a>\d{1,2})/(?P<b>\d{1,2})/(?P<y>\d{4}|\d{2})(?![\d/])"
                         + _TIME.format(p="").replace("[T ]", "[ ,]"))),
    ("named", re.compile(r"(?<!\d)(?P<d>\d{1,2})[- ](?P<mon>(?:" + _MONTHS + r")[a-z]*)[- ,]+(?P<y>\d{4}|\d{2})"
                         + _TIME.format(p="").replace("[T ]", "[ ,]"), re.IGNORECASE)),
]
_YEARLESS = re.compile(r"(?<![\d/])\d{1,2}/\d{1,2}\s+\d{1,2}:\d{2}")
_BARE_TIME = re.compile(r"(?<![\d:.])\d{1,2}:\d{2}(?![\d:])")


def read_times(
    line: str, number: int, source: str, date_order: str | None
) -> tuple[list[tuple[str, datetime]], str]:
    """Every date-time in a pasted line, in order, and the line with them blanked out.

    `date_order` ("day-first", "month-first" or None) reads 03/04/2026; None refuses it as ambiguous.
    """
    found: list[tuple[int, tuple[str, datetime]]] = []
    rest = line
    for kind, pattern in _DATE_PATTERNS:
        for match in pattern.finditer(rest):
            found.append((match.start(), _moment(kind, match, number, source, date_order)))
        rest = pattern.sub(lambda m: " " * len(m.group(0)), rest)
    if _YEARLESS.search(rest):
        raise PasteError(f"{echo(line)} has a date without a year; write it as 2024-03-01 08:00",
                         line=number, source=source)
    if _BARE_TIME.search(rest):
        raise PasteError(f"{echo(line)} has a time without a date; put the date in front (2024-03-01 08:00)",
                         line=number, source=source)
    found.sort(key=lambda item: item[0])
    return [moment for _, moment in found], rest.strip()

def _moment(
    kind: str, match: re.Match[str], number: int, source: str, date_order: str | None
) -> tuple[str, datetime]:
    year = int(match["y"])
    if year < 100:
        year += 2000  # a two-digit year on a lab result is this century
    if kind == "iso":
        month, day = int(match["m"]), int(match["d"])
    elif kind == "named":
        month = _MONTHS.split("|").index(match["mon"][:3].lower()) + 1
        day = int(match["d"])
    else:
        first, second = int(match["a"]), int(match["b"])
        if first <= 12 and second <= 12 and first != second and date_order is None:
            raise PasteError(
                f"{match.group(0).strip()!r} could be day/month or month/day; write the date as "
                f"{year:04d}-MM-DD, or {ORDER_HINT}", line=number, source=source)
        if first <= 12 and second <= 12 and first != second:
            month, day = (second, first) if date_order == "day-first" else (first, second)
        else:
            month, day = (first, second) if second > 12 or first == second else (second, first)
    hour = int(match["h"]) if match["h"] else None
    minute = int(match["mi"]) if match["mi"] else 0
    second_ = int(match["s"]) if match["s"] else 0
    try:
        moment = datetime(year, month, day, hour or 0, minute, second_)
    except ValueError as exc:
        raise PasteError(f"{match.group(0).strip()!r} is not a valid date ({exc})",
                         line=number, source=source) from exc
    iso = moment.isoformat() if hour is not None else moment.date().isoformat()
    return iso, as_utc(moment)


def echo(line: str, limit: int = 100) -> str:
    """A pasted line quoted in a message, cut short: a 2 MB line must not become a 2 MB message."""
    return repr(line) if len(line) <= limit else f"{line[:limit]!r}... ({len(line):,} characters)"
