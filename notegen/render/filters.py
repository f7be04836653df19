"""Number and word formatting used by the note templates."""

from __future__ import annotations

import math
from collections.abc import Iterable
from decimal import ROUND_HALF_UP, Decimal


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
