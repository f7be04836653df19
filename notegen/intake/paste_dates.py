"""Dates and times in a pasted lab block: ISO, slashed and named-month dates, with or without a time.

A slashed date that reads both ways (03/04/2026) is read in the date order when one was given.
Without one it stands only when it is the paste's one date, written the same everywhere: the times
alone then order the results, and the date is shown as written, never as a chosen calendar date
(`PasteDates.unresolved`). Otherwise it is refused. A date without a year, or a time without a
date, is refused rather than guessed.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from datetime import datetime

from notegen.errors import PasteError
from notegen.intake.sections import as_utc

__all__ = ["ORDER_HINT", "PasteDates", "echo", "read_times"]

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


@dataclass
class PasteDates:
    """How a paste's dates read (`order`: "day-first", "month-first" or None), and every date it holds as
    written, so that a date that reads both ways is judged once the whole paste is read."""

    source: str
    order: str | None = None
    written: dict[str, int] = field(default_factory=dict)  # each date as written -> the first line holding it
    ambiguous: dict[str, int] = field(default_factory=dict)  # those read both ways, with no order given

    def unresolved(self) -> str | None:
        """The paste's ambiguous date as written, when it is the only date in the paste; None when no date
        was ambiguous. Results all of that one day are ordered by their times, whichever way it reads;
        with any other date beside it (another ambiguous one, or one that reads one way) the order, the
        span and the staleness of the results would depend on the reading: refused (PasteError)."""
        if not self.ambiguous:
            return None
        date, line = next(iter(self.ambiguous.items()))
        others = [other for other in self.written if other != date]
        if others:
            raise PasteError(
                f"{date!r} could be day/month or month/day, and the paste holds another date ({others[0]!r}), "
                f"so the order of the results depends on the reading; write the dates as YYYY-MM-DD, or "
                f"{ORDER_HINT}", line=line, source=self.source)
        return date


def read_times(line: str, number: int, dates: PasteDates) -> tuple[list[tuple[str, datetime]], str]:
    """Every date-time in a pasted line, in order, and the line with them blanked out.

    A date that reads both ways is read in `dates.order`; without one it is noted in `dates` and held in
    one reading for ordering only (see `PasteDates.unresolved`).
    """
    found: list[tuple[int, tuple[str, datetime]]] = []
    rest = line
    for kind, pattern in _DATE_PATTERNS:
        for match in pattern.finditer(rest):
            found.append((match.start(), _moment(kind, match, number, dates)))
        rest = pattern.sub(lambda m: " " * len(m.group(0)), rest)
    if _YEARLESS.search(rest):
        raise PasteError(f"{echo(line)} has a date without a year; write it as 2024-03-01 08:00",
                         line=number, source=dates.source)
    if _BARE_TIME.search(rest):
        raise PasteError(f"{echo(line)} has a time without a date; put the date in front (2024-03-01 08:00)",
                         line=number, source=dates.source)
    found.sort(key=lambda item: item[0])
    return [moment for _, moment in found], rest.strip()

def _date_text(match: re.Match[str]) -> str:
    """The date of a matched date-time as written, without its time ("03/04/2026")."""
    end = match.start("h") if match["h"] else match.end()
    return match.string[match.start():end].rstrip(" ,T")


def _moment(kind: str, match: re.Match[str], number: int, dates: PasteDates) -> tuple[str, datetime]:
    source, date_order = dates.source, dates.order
    written = _date_text(match)
    dates.written.setdefault(written, number)
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
        if first <= 12 and second <= 12 and first != second:
            if date_order is None:  # held month first for ordering only: one such date, or refused
                dates.ambiguous.setdefault(written, number)
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
