"""Fold text to ASCII for pipelines that cannot take anything else."""

from __future__ import annotations

import unicodedata

# Non-breaking spaces survive folding so that the wrapper still keeps a number
# with its unit; the text renderer turns them into plain spaces at the very end.
NO_BREAK_SPACE = "\u00a0"
_NO_BREAK_SPACES = frozenset({"\u00a0", "\u202f", "\u2007", "\u2060"})

# Signs common in lab and clinical text, spelled the way a typist would.
_ASCII_SPELLINGS: dict[str, str] = {
    "\u00b5": "u",  # micro sign
    "\u03bc": "u",  # Greek small mu, often typed for micro
    "\u2265": ">=",
    "\u2264": "<=",
    "\u2260": "!=",
    "\u2248": "~",
    "\u223c": "~",
    "\u2192": "->",
    "\u2190": "<-",
    "\u2194": "<->",
    "\u21d2": "=>",
    "\u2191": "up",
    "\u2193": "down",
    "\u2013": "-",  # en dash
    "\u2014": "--",  # em dash
    "\u2012": "-",
    "\u2015": "--",
    "\u2010": "-",
    "\u2011": "-",
    "\u2212": "-",  # minus sign
    "\u00d7": "x",
    "\u00f7": "/",
    "\u2044": "/",  # fraction slash, left by NFKD of the vulgar fractions
    "\u2215": "/",
    "\u00b1": "+/-",
    "\u2213": "-/+",
    "\u00b7": ".",  # middle dot, as in UCUM's "." for multiplication
    "\u22c5": ".",
    "\u2022": "-",
    "\u2018": "'",
    "\u2019": "'",
    "\u201a": "'",
    "\u201b": "'",
    "\u2032": "'",
    "\u201c": '"',
    "\u201d": '"',
    "\u201e": '"',
    "\u201f": '"',
    "\u2033": '"',
    "\u00ab": '"',
    "\u00bb": '"',
    "\u2026": "...",
    "\u00b0": "deg",
    "\u0394": "delta",
    "\u03b4": "delta",
    "\u2206": "delta",
    "\u03b1": "alpha",
    "\u03b2": "beta",
    "\u03b3": "gamma",
    "\u00df": "ss",
    "\u00e6": "ae",
    "\u00c6": "AE",
    "\u0153": "oe",
    "\u0152": "OE",
    "\u00f8": "o",
    "\u00d8": "O",
    "\u0142": "l",
    "\u0141": "L",
    "\u00a9": "(c)",
    "\u00ae": "(R)",
    "\u200b": "",  # zero-width space
    "\u00ad": "",  # soft hyphen
    "\ufeff": "",
}


def fold_to_ascii(text: str) -> str:
    """Return `text` in ASCII: known signs spelled out, accents dropped, the rest `?`.

    Non-breaking spaces are kept as U+00A0 (see `NO_BREAK_SPACE`) for the wrapper.
    """
    if text.isascii():
        return text
    return "".join(_fold_char(char) for char in text)


def _fold_char(char: str) -> str:
    if char.isascii():
        return char
    if char in _NO_BREAK_SPACES:
        return NO_BREAK_SPACE
    spelled = _ASCII_SPELLINGS.get(char)
    if spelled is not None:
        return spelled
    # NFKD turns subscripts, superscripts, ligatures and accented letters into
    # ASCII plus combining marks; a second lookup catches what it leaves behind
    # (a superscript minus decomposes to U+2212, a fraction to U+2044).
    out = []
    for part in unicodedata.normalize("NFKD", char):
        if part.isascii():
            out.append(part)
        elif unicodedata.combining(part):
            continue
        elif part in _ASCII_SPELLINGS:
            out.append(_ASCII_SPELLINGS[part])
        elif unicodedata.category(part) == "Zs":
            out.append(" ")
        else:
            out.append("?")
    return "".join(out)
