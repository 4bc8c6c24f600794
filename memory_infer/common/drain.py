"""The windowed submit-and-drain loop: independent tasks through an executor
(:mod:`memory_infer.common.executors`), at most a window of them in flight, each outcome handed back in this
process as it arrives, with one progress bar; an interruption (Ctrl-C) or an error ends the workers at once."""
from __future__ import annotations


def drain(executor, function, tasks, on_done, window: int = 8, progress: dict | None = None) -> None:
    """Submit ``function(task)`` for each of ``tasks`` in order, at most ``window`` in flight, and call
    ``on_done(task, outcome)`` here, in the caller's process, as each finishes (the window is topped up after
    every outcome). ``on_done`` returns how many units of the progress bar the outcome finished (None: one).

    ``progress``: the progress bar's ``tqdm`` options (``total``, ``initial``, ``desc``, ``unit``, ...), or None
    for no bar. On any exception, Ctrl-C included, the executor's workers are ended at once (a task left unfinished
    is simply run again when the command resumes) and the exception goes on; otherwise the caller closes the
    executor."""
    from tqdm import tqdm

    tasks = list(tasks)
    bar = tqdm(**progress) if progress is not None else tqdm(disable=True)
    pending, position, window = {}, 0, max(1, int(window))
    try:
        while position < len(tasks) or pending:
            while position < len(tasks) and len(pending) < window:
                pending[executor.submit(function, tasks[position])] = tasks[position]
                position += 1
            for future in executor.as_completed(list(pending)):
                task = pending.pop(future)
                units = on_done(task, future.result())
                bar.update(1 if units is None else units)
                if position < len(tasks):
                    break  # top the window up again
    except BaseException:
        executor.close(now=True)
        raise
    finally:
        bar.close()
