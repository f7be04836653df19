"""The batch's progress line on standard error (`notegen.cli.batch`)."""

from __future__ import annotations

import time
from typing import TextIO

__all__ = ["Progress"]


class Progress:
    """A one-line count on standard error, drawn only when it is a terminal, at most ten times a second."""

    WIDTH = 30

    def __init__(self, stream: TextIO, total: int | None) -> None:
        self.stream = stream
        self.total = total
        self.enabled = _is_terminal(stream)
        self.drawn = 0  # length of the line on screen, 0 when none
        self.last = 0.0

    def update(self, done: int) -> None:
        if not self.enabled:
            return
        now = time.monotonic()
        if now - self.last < 0.1 and done != self.total:
            return
        self.last = now
        if self.total:
            filled = self.WIDTH * done // self.total
            text = f"notegen: drafting [{'#' * filled}{'.' * (self.WIDTH - filled)}] {done}/{self.total}"
        else:
            text = f"notegen: drafting, {done} done"
        self.stream.write("\r" + text.ljust(self.drawn))
        self.stream.flush()
        self.drawn = len(text)

    def clear(self) -> None:
        """Wipe the line, so a message or the summary starts at the left margin."""
        if self.drawn:
            self.stream.write("\r" + " " * self.drawn + "\r")
            self.drawn = 0


def _is_terminal(stream: TextIO) -> bool:
    try:
        return stream.isatty()
    except (AttributeError, ValueError):  # no isatty, or a closed stream
        return False
