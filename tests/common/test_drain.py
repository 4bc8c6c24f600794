"""The windowed submit-and-drain loop: every task once, never more than the window in flight, outcomes handed back
in the caller's process, and the workers ended at once when it is interrupted."""
import concurrent.futures

import pytest

from memory_infer.common.drain import drain
from memory_infer.common.executors import InlineExecutor


class CountingExecutor:
    """Runs a task when drained, counting how many were in flight at once (common practice, no source)."""

    def __init__(self):
        self.waiting, self.most, self.closed = [], 0, None

    def submit(self, function, task):
        future = concurrent.futures.Future()
        self.waiting.append((future, function, task))
        self.most = max(self.most, len(self.waiting))
        return future

    def as_completed(self, futures):
        for future, function, task in list(reversed(self.waiting)):  # finished out of order
            self.waiting.remove((future, function, task))
            future.set_result(function(task))
            yield future

    def close(self, now=False):
        self.closed = now


def test_every_task_runs_once_within_the_window():
    executor, seen = CountingExecutor(), []
    drain(executor, lambda x: x * x, range(10), lambda task, outcome: seen.append((task, outcome)), window=3)
    assert sorted(seen) == [(x, x * x) for x in range(10)]
    assert executor.most == 3 and executor.closed is None  # the caller closes it after success


def test_an_error_ends_the_workers_at_once_and_goes_on():
    executor = CountingExecutor()

    def fails(task):
        if task == 4:
            raise KeyboardInterrupt  # as a Ctrl-C arriving while an outcome is handled
        return task

    with pytest.raises(KeyboardInterrupt):
        drain(executor, fails, range(8), lambda task, outcome: None, window=2)
    assert executor.closed is True


def test_progress_counts_the_units_each_outcome_reports(capsys):
    drain(InlineExecutor(), lambda task: [task] * task, [1, 2, 3], lambda task, outcome: len(outcome), window=1,
          progress=dict(total=6, desc="units"))
    assert "6/6" in capsys.readouterr().err
