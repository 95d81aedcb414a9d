"""Progress messages for long work, on standard error."""

from __future__ import annotations

import sys
import time


class StageReporter:
    """Callable ``progress(message)``: prints each stage with the time since the start."""

    def __init__(self, stream=None, quiet: bool = False):
        self.stream = stream or sys.stderr
        self.quiet = quiet
        self.start = time.perf_counter()

    def __call__(self, message: str) -> None:
        if not self.quiet:
            print(f"[{time.perf_counter() - self.start:7.1f} s] {message}", file=self.stream,
                  flush=True)
