"""Progress on stderr for the commands: every step that can take more than a second says so.

On a terminal one line is rewritten in place (the step and the elapsed time); when stderr is not a
terminal (a log file, CI) each step is one plain line; with ``--quiet`` nothing is printed. Steps
are announced by ``step(message)``; counted work (a sweep's offsets) by ``count(done, total, what)``;
``close()`` ends the line. Nothing is shown during the first QUIET_START_S: a run refused at once (bad
input) prints its one error line and nothing else; the step under way then appears when that time is
up. No third-party progress library: a rewritten line and plain lines are all this needs.
"""

from __future__ import annotations

import threading
import time

QUIET_START_S = 0.5


class StderrProgress:
    """Callable as ``progress(message)`` (limits.review.review.Progress) and ``progress.count(done, total)``."""

    def __init__(self, stream, *, quiet: bool = False, prefix: str = "legbridge"):
        self.stream = stream
        self.quiet = quiet
        self.tty = bool(getattr(stream, "isatty", lambda: False)())
        self.prefix = prefix
        self.t0 = time.perf_counter()
        self.open = False
        self._last_quarter = -1
        self._held: str | None = None
        self._timer: threading.Timer | None = None
        self._lock = threading.Lock()
        self._closed = False

    def _flush_held(self) -> None:
        with self._lock:
            text, self._held = self._held, None
        if text is not None and not self._closed:
            self._write(text)

    def _line(self, text: str, *, final: bool = False) -> None:
        if self.quiet:
            return
        if time.perf_counter() - self.t0 < QUIET_START_S:  # hold it: shown only if the run lasts
            with self._lock:
                self._held = text
            if self._timer is None:
                self._timer = threading.Timer(QUIET_START_S - (time.perf_counter() - self.t0), self._flush_held)
                self._timer.daemon = True
                self._timer.start()
            return
        with self._lock:
            self._held = None
        self._write(text, final=final)

    def _write(self, text: str, *, final: bool = False) -> None:
        stamp = f"{self.prefix}: [{time.perf_counter() - self.t0:6.1f} s] {text}"
        if self.tty:
            print("\r\x1b[K" + stamp, end="\n" if final else "", file=self.stream, flush=True)
            self.open = not final
        else:
            print(stamp, file=self.stream, flush=True)

    def __call__(self, message: str) -> None:
        self.step(message)

    def step(self, message: str) -> None:
        self._line(message)

    def count(self, done: int, total: int, what: str = "offsets") -> None:
        """Counted work: every update on a terminal, at 0/25/50/75/100 % otherwise."""
        quarter = (4 * done) // max(total, 1)
        if self.tty or quarter != self._last_quarter or done == total:
            self._last_quarter = quarter
            self._line(f"sweep: {done}/{total} {what}")

    def close(self) -> None:
        """End the line in place (a terminal) so that what follows starts on a line of its own."""
        self._closed = True
        if self._timer is not None:
            self._timer.cancel()
        if self.open and not self.quiet:
            print("\r\x1b[K", end="", file=self.stream, flush=True)
            self.open = False


def add_quiet(p) -> None:
    """--quiet: no progress on stderr (errors are still printed)."""
    p.add_argument("--quiet", action="store_true", help="print no progress on stderr")
