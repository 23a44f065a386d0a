"""Progress of a suite on stderr: a bar on a terminal, log lines elsewhere.

On a terminal a bar shows the analyses done, the failures so far and the time
remaining. When stderr goes to a file (an overnight run under ``nohup``) a line
``swaysim: progress done=40/120 failed=2 remaining=0:05:10`` is written at most
every :data:`LOG_INTERVAL` seconds instead, and a run that lasted that long ends
with ``swaysim: finished done=120/120 failed=2 elapsed=0:14:03 (...)``. Each
failed analysis gets one line::

    swaysim: failure job=frame/quake_a/1.0 record=quake_a status=collapsed reason="..."

``quiet=True`` keeps only the failure lines.
"""

from __future__ import annotations

import sys
import time

import click

__all__ = ["SuiteProgress", "failure_line", "LOG_INTERVAL"]

#: Seconds between progress log lines when stderr is not a terminal.
LOG_INTERVAL = 60.0


def _value(text) -> str:
    text = str(text)
    if not text or any(c in text for c in ' "=\t'):
        return '"' + text.replace("\\", "\\\\").replace('"', '\\"').replace("\n", " ") + '"'
    return text


def failure_line(job: str, record: str, status: str, reason: str) -> str:
    """One ``key=value`` log line for a failed analysis."""
    return (f"swaysim: failure job={_value(job)} record={_value(record)} status={_value(status)} "
            f"reason={_value(reason)}")


def _clock(seconds: float) -> str:
    seconds = int(round(max(seconds, 0.0)))
    return f"{seconds // 3600}:{seconds % 3600 // 60:02d}:{seconds % 60:02d}"


class SuiteProgress:
    """Counts analyses and failures; shows a bar on a terminal, log lines otherwise.

    Parameters
    ----------
    total : int
        Analyses in the suite.
    done, failures : int
        Analyses already finished (a resumed run) and failures among them.
    quiet : bool
        No bar and no progress lines; failure lines only.
    """

    def __init__(self, total: int, done: int = 0, failures: int = 0, quiet: bool = False,
                 log_interval: float = LOG_INTERVAL):
        self.total = int(total)
        self.done = int(done)
        self.failures = int(failures)
        self.quiet = quiet
        self.log_interval = log_interval
        self._start_done = self.done
        self._bar = None
        self._task = None
        self._started = time.monotonic()
        self._last_log = self._started

    def __enter__(self):
        if not self.quiet and _is_terminal():
            from rich.console import Console
            from rich.progress import (
                BarColumn, MofNCompleteColumn, Progress, TextColumn, TimeElapsedColumn, TimeRemainingColumn,
            )

            self._bar = Progress(
                TextColumn("analyses"), BarColumn(), MofNCompleteColumn(),
                TextColumn("{task.fields[failures]} failed"), TimeElapsedColumn(),
                TextColumn("remaining"), TimeRemainingColumn(),
                console=Console(stderr=True), transient=False)
            self._bar.start()
            self._task = self._bar.add_task("suite", total=self.total, completed=self.done,
                                            failures=self.failures)
        return self

    def __exit__(self, exc_type, *exc):
        if self._bar is not None:
            self._bar.stop()
            self._bar = None
        elif exc_type is None and not self.quiet and time.monotonic() - self._started >= self.log_interval:
            # a run long enough for progress lines closes them with one line
            elapsed = time.monotonic() - self._started
            ran = self.done - self._start_done
            rate = f" ({ran / elapsed:.3g} analyses/s)" if ran and elapsed > 0 else ""
            self._echo(f"swaysim: finished done={self.done}/{self.total} failed={self.failures} "
                       f"elapsed={_clock(elapsed)}{rate}")

    def failure(self, job: str, record: str, status: str, reason: str) -> None:
        """Count one failure and write its line."""
        self.failures += 1
        self._echo(failure_line(job, record, status, reason))
        if self._bar is not None:
            self._bar.update(self._task, failures=self.failures)

    def advance(self, n: int) -> None:
        """``n`` more analyses finished (failed ones included)."""
        self.done += int(n)
        if self._bar is not None:
            self._bar.update(self._task, completed=self.done, failures=self.failures)
            return
        now = time.monotonic()
        if not self.quiet and now - self._last_log >= self.log_interval and self.done < self.total:
            self._last_log = now
            self._echo(f"swaysim: progress done={self.done}/{self.total} failed={self.failures} "
                       f"remaining={self.remaining()}")

    def remaining(self) -> str:
        """Estimated time left from the pace of this invocation, ``?`` before the first result."""
        ran = self.done - self._start_done
        if ran <= 0:
            return "?"
        pace = (time.monotonic() - self._started) / ran
        return _clock(pace * (self.total - self.done))

    def _echo(self, line: str) -> None:
        if self._bar is not None:
            self._bar.console.print(line, markup=False, highlight=False, soft_wrap=True)
        else:
            click.echo(line, err=True)


def _is_terminal() -> bool:
    try:
        return sys.stderr is not None and bool(sys.stderr.isatty())
    except (AttributeError, ValueError):
        return False
