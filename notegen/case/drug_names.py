"""A medication name that is one slip away from a known drug is refused, never dropped.

"furosemid" or "hydrochlorthiazide" would otherwise be kept as an unknown name and the
diuretic would leave the reasoning unannounced. A name within a small edit distance of a
name in rules/vocabulary/medications.yaml is refused with the name it was probably meant to
be; a name far from every known one is kept and reported as unknown, as before.
"""

from __future__ import annotations

from notegen.knowledge import shipped_knowledge
from notegen.knowledge import vocabulary as vocab

# How many single-letter slips (inserted, dropped, changed or two swapped letters) a name of a
# given length may hold and still count as the known name: common practice, set by this project.
_SHORTEST = 5  # below this, abbreviations collide (kcl, hcl): no suggestion


def _allowed_slips(length: int) -> int:
    if length < _SHORTEST:
        return 0
    return 1 if length < 9 else 2


def edit_distance(a: str, b: str, limit: int) -> int:
    """Optimal string alignment distance between `a` and `b`, or `limit + 1` once it exceeds `limit`."""
    if abs(len(a) - len(b)) > limit:
        return limit + 1
    previous2: list[int] = []
    previous = list(range(len(b) + 1))
    for i, char_a in enumerate(a, start=1):
        current = [i] + [0] * len(b)
        for j, char_b in enumerate(b, start=1):
            cost = 0 if char_a == char_b else 1
            current[j] = min(previous[j] + 1, current[j - 1] + 1, previous[j - 1] + cost)
            if i > 1 and j > 1 and char_a == b[j - 2] and a[i - 2] == char_b:
                current[j] = min(current[j], previous2[j - 2] + 1)
        if min(current) > limit:
            return limit + 1
        previous2, previous = previous, current
    return previous[-1]


def near_miss(name: str) -> str | None:
    """The known drug name `name` is probably a misspelling of, or None.

    The leading words of `name` (a dose may follow: "furosemid 40 mg") are compared with the
    known names of the same number of words.
    """
    words = vocab.fold(name).split(" ")
    best: tuple[int, str] | None = None
    for known in shipped_knowledge().medications:
        count = known.count(" ") + 1
        if count > len(words):
            continue
        candidate = " ".join(words[:count])
        limit = _allowed_slips(len(known))
        if limit == 0 or candidate == known:
            continue
        distance = edit_distance(candidate, known, limit)
        if distance <= limit and (best is None or distance < best[0]):
            best = (distance, known)
    return None if best is None else best[1]
