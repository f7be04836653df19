"""The one writer of numbers, ranges and word lists: every stage and template formats through here.

Rounding is half away from zero on the shortest decimal form of a value, so that a figure reads the
same in the paragraph, the reading's steps, the tables and the JSON.
"""

from __future__ import annotations

import functools
import math
from collections.abc import Iterable
from datetime import datetime
from decimal import ROUND_HALF_UP, Decimal

__all__ = [
    "RANGE_DASH",
    "decimals_beside",
    "format_hours",
    "format_number",
    "format_range",
    "format_result_time",
    "format_value",
    "format_value_beside",
    "join_words",
    "ph_text",
    "round_half_up",
    "sentence_case",
    "trimmed_number",
]

RANGE_DASH = "\u2013"  # the one dash between the ends of a range: "7.35\u20137.45"

def format_number(value: int | float | Decimal, digits: int) -> str:
    """Return `value` with exactly `digits` decimals, rounding half away from zero.

    Rounding works on the shortest decimal form of the value (`repr`), so 2.675
    prints as 2.68 as a reader of the printed value expects, not 2.67 as binary
    floating point would give. A result that rounds to zero never carries a
    minus sign: "-0.0" in a note reads as a finding.
    """
    if isinstance(value, bool) or not isinstance(value, int | float | Decimal):
        raise TypeError(f"fmt expects a number, got {type(value).__name__} {value!r}")
    if isinstance(digits, bool) or not isinstance(digits, int) or digits < 0:
        raise ValueError(f"fmt expects a whole number of decimals >= 0, got {digits!r}")
    if isinstance(value, float) and not math.isfinite(value):
        raise ValueError(f"fmt cannot print {value!r} as a measured value")
    exact = value if isinstance(value, Decimal) else Decimal(repr(value))
    if not exact.is_finite():
        raise ValueError(f"fmt cannot print {value!r} as a measured value")
    rounded = exact.quantize(Decimal(1).scaleb(-digits), rounding=ROUND_HALF_UP)
    if rounded.is_zero():
        rounded = abs(rounded)
    return f"{rounded:.{digits}f}"


def trimmed_number(value: float, digits: int = 1) -> str:
    """Rounded half away from zero to `digits`, trailing zeros dropped, never "-0" (8.25 -> "8.3", 10.0 -> "10")."""
    text = format_number(value, digits)
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return "0" if text == "-0" else text


def ph_text(value: float) -> str:
    """A pH as analysers print it: two decimals, a third only when the value carries one."""
    return f"{value:.2f}" if round(value, 2) == round(value, 3) else f"{value:.3f}"


def sentence_case(text: str) -> str:
    """Capitalise the first letter, but leave words such as "eGFR", "pH" and "mEq" as they are."""
    if text[1:2].isupper():
        return text
    return text[:1].upper() + text[1:]


def join_words(items: Iterable[object], conj: str = "and") -> str:
    """Join items as an English list without the serial comma: "a, b and c".

    Items are printed as given; escape user text before joining it.
    """
    words = [str(item) for item in items]
    if not words:
        return ""
    if len(words) == 1:
        return words[0]
    return f"{', '.join(words[:-1])} {conj} {words[-1]}"


def round_half_up(value: float, digits: int) -> float:
    """`value` rounded half away from zero on its shortest decimal form: 8.25 -> 8.3, as the note prints it.

    Python's `round` works on the binary value (8.25 -> 8.2, 7.485 -> 7.48), so a figure rounded
    with it could read differently in the reading's sentences than in the note's tables.
    """
    text = repr(value)
    if type(value) is float and "e" not in text:
        point = text.find(".")
        if point >= 0 and len(text) - point - 1 <= digits:
            # Already at most `digits` decimals (most lab values): quantizing would be exact and
            # give back this same float, so the Decimal round trip is skipped.
            return value
    exact = Decimal(text).quantize(_quantum(digits), rounding=ROUND_HALF_UP)
    return float(exact)


@functools.cache
def _quantum(digits: int) -> Decimal:
    return Decimal(1).scaleb(-digits)


@functools.lru_cache(maxsize=4096, typed=True)  # a case formats the same few values again and again
def format_value(value: float, unit: str = "") -> str:
    """A number as a clinician reads it: at most 3 decimals (half away from zero), no trailing zeros, then the unit."""
    text = repr(value)
    point = text.find(".")
    if type(value) is not float or point < 0 or "e" in text or len(text) - point - 1 > 3 or not -1e12 < value < 1e12:
        text = f"{round_half_up(value, 3):.3f}"
    # else the shortest form has at most 3 decimals (most lab values) and the float's spacing is far
    # below 0.0005, so it is exactly what formatting to 3 decimals gives, less the trailing zeros
    text = text.rstrip("0").rstrip(".")
    if text == "-0":
        text = "0"
    return f"{text} {unit}".strip()


def decimals_beside(value: float, thresholds: Iterable[float], decimals: int, most: int = 9) -> int:
    """The fewest decimals, from `decimals` up to `most`, at which `value` rounded half away from zero
    sits on the same side of every threshold (below, on or above) as `value` itself.

    A statement that compares a value with a threshold prints the value with these decimals, so that
    it holds as printed: 2.4999 is shown as 2.4999 beside "below 2.5", never as "2.5 is below 2.5".
    """
    limits = [float(t) for t in thresholds if math.isfinite(t)]
    if not math.isfinite(value):
        return decimals
    for digits in range(decimals, most + 1):
        shown = round_half_up(value, digits)
        if all((shown > t) - (shown < t) == (value > t) - (value < t) for t in limits):
            return digits
    return most


def format_value_beside(value: float, thresholds: Iterable[float], unit: str = "") -> str:
    """`format_value`, with more decimals when 3 would put the value on the wrong side of a threshold it is
    compared with (see `decimals_beside`)."""
    digits = decimals_beside(value, thresholds, 3)
    if digits == 3:
        return format_value(value, unit)
    text = format_number(value, digits).rstrip("0").rstrip(".")
    return f"{text} {unit}".strip()


def format_range(low: float, high: float, unit: str = "", *, digits: int = 1, fixed: bool = False) -> str:
    """A range with the one range dash and the unit once: "47.8\u201351.8 mmHg", "7.35\u20137.45".

    `digits` decimals, trailing zeros dropped unless `fixed` (a pH range keeps both decimals).
    """
    shown = format_number if fixed else trimmed_number
    return f"{shown(low, digits)}{RANGE_DASH}{shown(high, digits)} {unit}".strip()


def format_hours(hours: float) -> str:
    """A duration in the one form notes use: "40 hours", "1 hour", "1.5 hours"."""
    text = format_value(hours)
    return f"{text} hour{'' if text == '1' else 's'}"


def format_result_time(when: datetime, date_as_written: str | None = None) -> str:
    """A result's time as every output shows it: "2026-03-14 06:30", with its zone when it has one
    ("2026-03-14 06:30 UTC", "2026-03-14 06:30 +01:00"), as the trend writes it.

    `date_as_written` ("12/01/2026"): the case's one date, read neither day first nor month first; the
    calendar date held in `when` is then one reading kept for ordering only and is never shown:
    "12/01/2026 06:30".
    """
    text = when.replace(tzinfo=None).isoformat(sep=" ", timespec="minutes")
    if date_as_written is not None:
        text = date_as_written + text[len("YYYY-MM-DD"):]
    offset = when.utcoffset()
    if offset is None:
        return text
    return f"{text} UTC" if not offset else f"{text} {when.isoformat()[-6:]}"
