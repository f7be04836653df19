"""The budget a service's template renders under: paths, widths, sizes and time.

The sandbox already keeps a template from Python internals; these limits keep it from
exhausting the machine:

- a template file (the one given, or one it includes, imports or extends) must resolve,
  symbolic links followed, to a file inside one of the template folders;
- widths, precisions and repeat counts in filters (`center`, `indent`, `format`,
  `wordwrap`, `tojson`, `replace`, `join`), in `%` and in `str.format` or string methods
  are capped, and so is a value built by `*`, `+` or `~`;
- `lipsum` is capped, the rendered note is capped in size, and the render runs under a
  time budget (on the main thread, where a timer signal can stop it).

Every refusal is a `SecurityError`, which the caller reports with the template's file and line.
"""

from __future__ import annotations

import contextlib
import os
import re
import signal
import string
import threading
import time
from collections.abc import Callable, Iterator, Sequence
from pathlib import Path
from typing import Any

MAX_WIDTH = 1_000  # a width, precision or indent: a note's line is at most a few hundred characters
MAX_VALUE_CHARS = 1_000_000  # a string or list built in a template; a note is a few kilobytes
MAX_RENDERED_CHARS = 2_000_000  # the whole rendered note
RENDER_SECONDS = 10.0  # a note renders in milliseconds
MAX_LIPSUM = 20  # paragraphs, and hundreds of words each

_PERCENT_SPEC = re.compile(r"%(?:\([^)]*\))?[-#0 +]*(\*|\d+)?(?:\.(\*|\d+))?[hlL]?[a-zA-Z%]")
_DIGITS = re.compile(r"\d+")
_SIZED_METHODS = {"ljust", "rjust", "center", "zfill", "expandtabs"}


def refuse(message: str) -> Exception:
    from jinja2.exceptions import SecurityError

    return SecurityError(message)


def _check_number(value: object, what: str) -> None:
    if isinstance(value, int | float) and not isinstance(value, bool) and abs(value) > MAX_WIDTH:
        raise refuse(f"{what} above {MAX_WIDTH:,} is not allowed in a template")


def check_percent_format(text: object) -> None:
    """Refuse a `%` format with a width or precision above the cap, or one taken from the arguments (`*`)."""
    if not isinstance(text, str):
        return
    for match in _PERCENT_SPEC.finditer(text):
        for part in match.groups():
            if part == "*":
                raise refuse("a `*` width or precision is not allowed in a template's format")
            if part is not None:
                _check_number(int(part), "a format width or precision")


def check_brace_format(text: object) -> None:
    """Refuse a `str.format` pattern with a width or precision above the cap, or a nested field in a spec."""
    if not isinstance(text, str):
        return
    try:
        fields = list(string.Formatter().parse(text))
    except ValueError:
        return  # the format call itself reports it
    for _, _, spec, _ in fields:
        if spec and "{" in spec:
            raise refuse("a replacement field inside a format spec is not allowed in a template")
        for digits in _DIGITS.findall(spec or ""):
            _check_number(int(digits), "a format width or precision")


def check_size(value: object) -> object:
    """`value`, refused when it is a string or list longer than the cap."""
    if isinstance(value, str | list | tuple) and len(value) > MAX_VALUE_CHARS:
        raise refuse(f"a value of more than {MAX_VALUE_CHARS:,} characters or items is not allowed in a template")
    return value


def bounded_concat(parts: Sequence[object]) -> str:
    """The `~` operator: the parts joined as text, refused past the size cap before it is built."""
    texts = [str(part) for part in parts]
    if sum(len(text) for text in texts) > MAX_VALUE_CHARS:
        raise refuse(f"joining text to more than {MAX_VALUE_CHARS:,} characters is not allowed in a template")
    return "".join(texts)


def _joined_size(items: Sequence[object], separator: str) -> int:
    return sum(len(str(item)) for item in items) + len(separator) * max(0, len(items) - 1)


def check_call(obj: Any, args: tuple[Any, ...], kwargs: dict[str, Any]) -> None:
    """Refuse a call of a string method that would build a huge string."""
    method = getattr(obj, "__wrapped__", obj)
    owner = getattr(method, "__self__", None)
    if not isinstance(owner, str):
        return
    name = getattr(method, "__name__", "")
    if name in _SIZED_METHODS:
        for value in (*args, *kwargs.values()):
            _check_number(value, f"a width given to {name}")
    elif name in ("format", "format_map"):
        check_brace_format(owner)
    elif name == "replace" and len(args) >= 2:
        _check_replace(owner, args[0], args[1], args[2] if len(args) > 2 else None)
    elif name == "join" and args and isinstance(args[0], list | tuple):
        if _joined_size(args[0], owner) > MAX_VALUE_CHARS:
            raise refuse(f"joining text to more than {MAX_VALUE_CHARS:,} characters is not allowed in a template")


def _check_replace(text: object, old: object, new: object, count: object) -> None:
    if not (isinstance(text, str) and isinstance(old, str) and isinstance(new, str)):
        return
    found = text.count(old) if old else len(text) + 1
    if isinstance(count, int) and count >= 0:
        found = min(found, count)
    if len(text) + found * max(0, len(new) - len(old)) > MAX_VALUE_CHARS:
        raise refuse(f"a replacement making more than {MAX_VALUE_CHARS:,} characters is not allowed in a template")


def bounded_filters(filters: dict[str, Callable[..., Any]]) -> dict[str, Callable[..., Any]]:
    """Checked versions of the filters that take a width, a repeat count or build long text."""
    from jinja2 import pass_environment, pass_eval_context

    original = dict(filters)

    def center(value: Any, width: int = 80) -> Any:
        _check_number(width, "a width given to center")
        return original["center"](value, width)

    def indent(value: Any, width: Any = 4, first: bool = False, blank: bool = False) -> Any:
        if isinstance(width, str):
            _check_number(len(width), "an indent")
        _check_number(width, "an indent")
        return original["indent"](value, width, first, blank)

    def format_(value: Any, *args: Any, **kwargs: Any) -> Any:
        check_percent_format(value)
        return original["format"](value, *args, **kwargs)

    def wordwrap(environment: Any, value: Any, width: int = 79, break_long_words: bool = True,
                 wrapstring: str | None = None, break_on_hyphens: bool = True) -> Any:
        if wrapstring is not None:
            _check_number(len(str(wrapstring)), "a wrap string's length")
        return original["wordwrap"](environment, value, width, break_long_words, wrapstring, break_on_hyphens)

    def tojson(eval_ctx: Any, value: Any, indent: int | None = None) -> Any:
        _check_number(indent, "a JSON indent")
        return original["tojson"](eval_ctx, value, indent)

    def replace(eval_ctx: Any, value: Any, old: Any, new: Any, count: int | None = None) -> Any:
        _check_replace(str(value), str(old), str(new), count)
        return original["replace"](eval_ctx, value, old, new, count)

    def join(eval_ctx: Any, value: Any, d: str = "", attribute: Any = None) -> Any:
        items = list(value)
        if attribute is None and _joined_size(items, str(d)) > MAX_VALUE_CHARS:
            raise refuse(f"joining text to more than {MAX_VALUE_CHARS:,} characters is not allowed in a template")
        return check_size(original["join"](eval_ctx, items, d, attribute))

    return {"center": center, "indent": indent, "format": format_, "wordwrap": pass_environment(wordwrap),
            "tojson": pass_eval_context(tojson), "replace": pass_eval_context(replace),
            "join": pass_eval_context(join)}


def bounded_lipsum(original: Callable[..., Any]) -> Callable[..., Any]:
    def lipsum(n: int = 5, html: bool = True, min: int = 20, max: int = 100) -> Any:  # noqa: A002 - jinja's names
        if isinstance(n, int) and n > MAX_LIPSUM:
            raise refuse(f"more than {MAX_LIPSUM} lipsum paragraphs is not allowed in a template")
        _check_number(min, "lipsum's word count")
        _check_number(max, "lipsum's word count")
        return original(n=n, html=html, min=min, max=max)

    return lipsum


class _OutOfTime(BaseException):
    """Raised by the timer signal inside a render that has run past its budget."""


@contextlib.contextmanager
def time_budget(seconds: float | None = None) -> Iterator[Callable[[], bool]]:
    """Stop the enclosed render after `seconds` (by a timer signal on the main thread; elsewhere only the
    size and count caps apply). Yields a function that tells whether the budget ran out."""
    limit = RENDER_SECONDS if seconds is None else seconds
    state = {"expired": False}
    usable = hasattr(signal, "setitimer") and threading.current_thread() is threading.main_thread()
    if not usable:
        yield lambda: state["expired"]
        return

    def expire(signum: int, frame: object) -> None:
        state["expired"] = True
        raise _OutOfTime()

    previous = signal.signal(signal.SIGALRM, expire)
    old_timer = signal.setitimer(signal.ITIMER_REAL, limit)
    started = time.monotonic()
    try:
        yield lambda: state["expired"]
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, previous)
        if old_timer[0] > 0:  # someone else's timer: give back what is left of it
            signal.setitimer(signal.ITIMER_REAL, max(0.001, old_timer[0] - (time.monotonic() - started)),
                             old_timer[1])


OutOfTime = _OutOfTime


def inside_folders(filename: str, folders: Sequence[Path]) -> bool:
    """Whether `filename`, every symbolic link followed, is a file inside one of `folders` (resolved)."""
    real = Path(os.path.realpath(filename))
    return any(real.is_relative_to(Path(os.path.realpath(folder))) for folder in folders)
