"""Progress reporting of a suite when stderr is not a terminal: log lines, failures, the final line."""

from __future__ import annotations

import re

from simulate.suite.progress import SuiteProgress, failure_line


def test_log_lines_failures_and_final_line(capsys):
    with SuiteProgress(10, done=2, failures=1, log_interval=0.0) as progress:
        progress.advance(3)
        progress.failure("frame/quake a/1.0", "quake a", "collapsed", 'storey 2 drift "big"')
        progress.advance(5)
    lines = capsys.readouterr().err.splitlines()
    assert re.fullmatch(r"swaysim: progress done=5/10 failed=1 remaining=\d+:\d\d:\d\d", lines[0])
    assert lines[1] == ('swaysim: failure job="frame/quake a/1.0" record="quake a" status=collapsed '
                        'reason="storey 2 drift \\"big\\""')
    # the last advance completes the suite: no progress line, the final line instead
    assert len(lines) == 3
    assert re.fullmatch(r"swaysim: finished done=10/10 failed=2 elapsed=\d+:\d\d:\d\d \(.+ analyses/s\)", lines[2])


def test_quiet_keeps_failure_lines_only(capsys):
    with SuiteProgress(3, quiet=True, log_interval=0.0) as progress:
        progress.advance(1)
        progress.failure("frame/r/1.0", "r", "failed", "r.txt:2: cannot read 'x' as a number")
        progress.advance(2)
    assert capsys.readouterr().err.splitlines() == [
        failure_line("frame/r/1.0", "r", "failed", "r.txt:2: cannot read 'x' as a number")]


def test_short_runs_and_runs_stopped_by_an_error_end_without_a_final_line(capsys):
    with SuiteProgress(2, log_interval=1e9) as progress:
        progress.advance(2)
    assert capsys.readouterr().err == ""
    try:
        with SuiteProgress(4, log_interval=0.0) as progress:
            raise KeyboardInterrupt
    except KeyboardInterrupt:
        pass
    assert "finished" not in capsys.readouterr().err
