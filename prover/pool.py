"""Worker processes with a hard per-task wall-clock limit, for batch runs and benchmarks.

A task runs ``function(*args)`` in a forked worker.  A worker that overruns
``limit`` seconds is killed and replaced, so no single problem can hang a run;
the task's result is then ``None``.  :func:`run_all` keeps ``jobs`` workers
busy and reports each result as it arrives.
"""
from __future__ import annotations

import multiprocessing as mp
import sys
import threading
import time
from collections.abc import Callable, Iterable


def _worker(conn, function) -> None:
    sys.setrecursionlimit(10000)
    while True:
        task = conn.recv()
        if task is None:
            return
        try:
            conn.send(("ok", function(*task)))
        except Exception as err:  # a crash is a result too
            conn.send(("error", f"{type(err).__name__}: {err}"))


class Slot:
    """One worker process; :meth:`run` returns ('ok', value), ('error', text) or
    ('killed', seconds) when the hard limit is hit."""

    def __init__(self, function: Callable, limit: float):
        self.function, self.limit = function, limit
        self.ctx = mp.get_context("fork")
        self.proc = None
        self.conn = None

    def run(self, *task):
        if self.proc is None or not self.proc.is_alive():
            parent, child = self.ctx.Pipe()
            self.proc = self.ctx.Process(target=_worker, args=(child, self.function), daemon=True)
            self.proc.start()
            self.conn = parent
        started = time.monotonic()
        self.conn.send(task)
        if self.conn.poll(self.limit):
            try:
                return self.conn.recv()
            except EOFError:
                pass
        self.kill()
        return ("killed", time.monotonic() - started)

    def kill(self) -> None:
        if self.proc is not None:
            self.proc.kill()
            self.proc.join()
        self.proc = None

    def stop(self) -> None:
        if self.proc is not None and self.proc.is_alive():
            self.conn.send(None)
            self.proc.join(5)
            if self.proc.is_alive():
                self.kill()


def run_all(function: Callable, tasks: Iterable[tuple], limit: float, jobs: int,
            on_result: Callable[[tuple, tuple], None]) -> None:
    """Run ``function(*task)`` for every task on ``jobs`` workers; ``on_result(task, outcome)``
    is called (under a lock) as each finishes, outcome as :meth:`Slot.run` returns it."""
    queue = list(reversed(list(tasks)))
    lock = threading.Lock()

    def drive():
        slot = Slot(function, limit)
        try:
            while True:
                with lock:
                    if not queue:
                        return
                    task = queue.pop()
                outcome = slot.run(*task)
                with lock:
                    on_result(task, outcome)
        finally:
            slot.stop()

    threads = [threading.Thread(target=drive, daemon=True) for _ in range(max(1, jobs))]
    for t in threads:
        t.start()
    try:
        for t in threads:
            t.join()
    except BaseException:  # Ctrl-C: start nothing more; the daemon workers die with us
        with lock:
            queue.clear()
        raise
