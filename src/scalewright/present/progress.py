"""Progress of a long run on stderr: a bar on a terminal, plain lines otherwise, nothing when quiet."""
from __future__ import annotations

import sys
import time
from typing import TextIO

BAR_WIDTH = 24


class Progress:
    """Reports the steps of a run of known length.

    Parameters
    ----------
    total : int
        Number of steps the run will take.
    quiet : bool
        Say nothing at all.
    stream : text stream, optional
        Where to write (default: ``sys.stderr``).
    bar : bool, optional
        Draw a bar that redraws itself in place; default: only when ``stream`` is a terminal, because a
        carriage return in a log file is noise.
    """

    def __init__(self, total: int, *, quiet: bool = False, stream: TextIO | None = None,
                 bar: bool | None = None) -> None:
        self.total = max(int(total), 1)
        self.quiet = quiet
        self.stream = stream if stream is not None else sys.stderr
        self.bar = self._is_terminal() if bar is None else bar
        self.done = 0
        self.started = time.perf_counter()
        self._last_width = 0

    def _is_terminal(self) -> bool:
        isatty = getattr(self.stream, "isatty", None)
        return bool(isatty and isatty())

    def step(self, label: str) -> None:
        """Announce that the step ``label`` starts (the steps before it are done)."""
        if self.quiet:
            return
        position = min(self.done + 1, self.total)
        if self.bar:
            filled = round(BAR_WIDTH * self.done / self.total)
            line = f"\r[{'#' * filled}{'.' * (BAR_WIDTH - filled)}] {position}/{self.total} {label}"
            padding = " " * max(self._last_width - len(line), 0)
            self._last_width = len(line)
            self.stream.write(line + padding)
        else:
            self.stream.write(f"scalewright: [{position}/{self.total}] {label}\n")
        self.stream.flush()
        self.done += 1

    def finish(self, message: str) -> None:
        """End the run with one closing line."""
        if self.quiet:
            return
        seconds = time.perf_counter() - self.started
        if self.bar:
            self.stream.write(f"\r[{'#' * BAR_WIDTH}] {self.total}/{self.total} done".ljust(self._last_width) + "\n")
        self.stream.write(f"{message} ({seconds:.1f} s)\n")
        self.stream.flush()


class SilentProgress(Progress):
    """A progress reporter that never writes (for library calls)."""

    def __init__(self) -> None:
        super().__init__(1, quiet=True)
