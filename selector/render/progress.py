"""The progress bar of a long search (its own module: a ``--json`` search needs it, not the
table layout of render/timing.py)."""

from __future__ import annotations

import time


class LazyProgress:
    """A progress callback (fraction 0..1) that shows a rich bar only once the work has run for
    ``delay`` seconds, on stderr so ``--json`` output stays clean."""

    def __init__(self, description: str = "searching", delay: float = 1.0):
        self.description = description
        self.delay = delay
        self.start = time.monotonic()
        self._progress = None
        self._task = None

    def __call__(self, fraction: float) -> None:
        if self._progress is None:
            if time.monotonic() - self.start < self.delay or fraction >= 1.0:
                return
            from rich.console import Console
            from rich.progress import Progress

            self._progress = Progress(console=Console(stderr=True), transient=True)
            self._progress.start()
            self._task = self._progress.add_task(self.description, total=1.0)
        self._progress.update(self._task, completed=min(1.0, float(fraction)))

    def close(self) -> None:
        if self._progress is not None:
            self._progress.stop()
            self._progress = None
