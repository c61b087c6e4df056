"""Benchmark of the covering prover on the conjunctive QF_NRA benchmark files.

Usage::

    python bench/covering_bench.py [--timeout 60] [-j 2] [--limit N] [--seed S]
                                   [--check] [--out results.jsonl] [DIR]

``DIR`` defaults to ``../shared/benchmarks/qf_nra`` beside the repository
(``TESSELLA_BENCHMARKS`` overrides).  Every file of ``DIR/sat`` and
``DIR/unsat`` runs in a worker process with a hard wall-clock limit (the
worker is killed and replaced when it overruns), so a runaway case cannot
hang the run.  Files with Boolean structure beyond a conjunction are counted
and skipped.  The summary gives solved/total for sat and unsat, the median
and 90th-percentile time of the solved ones, the median certificate size,
any answer that contradicts the directory's status, and the unsolved files
by family.  ``--check`` also replays each certificate with the checker.

:func:`run_benchmark` is the same as a function (for a ``tessella bench`` verb).
"""
from __future__ import annotations

import argparse
import json
import multiprocessing as mp
import os
import random
import re
import statistics
import sys
import threading
import time
from collections import Counter, defaultdict
from pathlib import Path

GRACE = 5.0
"""Seconds a worker gets beyond the cooperative timeout before it is killed."""


def default_benchmarks() -> Path:
    env = os.environ.get("TESSELLA_BENCHMARKS")
    if env:
        return Path(env)
    return Path(__file__).resolve().parents[1].parent / "shared" / "benchmarks" / "qf_nra"


def family(path: str) -> str:
    """The benchmark family: the file name without its ``-chunk-NNNN`` suffix."""
    return re.sub(r"(-chunk-\d+)?\.smt2$", "", Path(path).name)


def is_conjunction(problem) -> bool:
    """Whether every top clause of the problem is a unit atom literal (or empty)."""
    from certformat.clauses import clausal_form
    cf = clausal_form(problem)
    return all(len(c) <= 1 and all(abs(lit) <= len(cf.atoms) for lit in c)
               for clauses in cf.top for c in clauses)


def run_one(path: str, timeout: float, check: bool) -> dict:
    """Prove one file (in the worker process); a JSON-able record."""
    from certformat.problem import load_problem
    from prover.solve import prove

    problem = load_problem(path)
    if not is_conjunction(problem):
        return {"answer": "skipped", "reason": "not a conjunction", "time": 0.0, "bytes": 0,
                "nodes": 0, "conjunctive": False}
    started = time.monotonic()
    result = prove(problem, timeout=timeout)
    record = {
        "answer": result.answer,
        "reason": result.reason,
        "time": time.monotonic() - started,
        "bytes": len(result.certificate_text.encode()) if result.certificate_text else 0,
        "nodes": result.stats.get("nodes", 0),
        "conjunctive": True,
        "nvars": len(problem.variables),
    }
    if check and result.certificate_text:
        from certformat.certio import read_certificate
        from checker.check import check as check_certificate
        t = time.monotonic()
        verdict = check_certificate(problem, read_certificate(result.certificate_text))
        record["check_time"] = time.monotonic() - t
        record["accepted"] = verdict.accepted
        if not verdict.accepted:
            record["rejection"] = f"{verdict.rule}: {verdict.reason} (line {verdict.line})"
    return record


def _worker(conn, timeout: float, check: bool) -> None:
    sys.setrecursionlimit(10000)
    while True:
        path = conn.recv()
        if path is None:
            return
        try:
            record = run_one(path, timeout, check)
        except Exception as err:  # a crash is a result too
            record = {"answer": "error", "reason": f"{type(err).__name__}: {err}", "time": 0.0,
                      "bytes": 0, "nodes": 0, "conjunctive": True}
        conn.send(record)


class _Slot:
    """One worker process with a hard per-task limit."""

    def __init__(self, ctx, timeout: float, check: bool):
        self.ctx, self.timeout, self.check = ctx, timeout, check
        self.proc = None
        self.conn = None

    def start(self) -> None:
        parent, child = self.ctx.Pipe()
        self.proc = self.ctx.Process(target=_worker, args=(child, self.timeout, self.check),
                                     daemon=True)
        self.proc.start()
        self.conn = parent

    def run(self, path: str) -> dict:
        if self.proc is None or not self.proc.is_alive():
            self.start()
        started = time.monotonic()
        self.conn.send(path)
        if self.conn.poll(self.timeout + GRACE):
            try:
                return self.conn.recv()
            except EOFError:
                pass
        self.kill()
        return {"answer": "unknown", "reason": "killed (hard limit)",
                "time": time.monotonic() - started, "bytes": 0, "nodes": 0,
                "conjunctive": True}

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


def benchmark_files(root: Path) -> list[tuple[str, str]]:
    """(status, path) of every benchmark file, sorted."""
    out = []
    for status in ("sat", "unsat"):
        out += [(status, str(p)) for p in sorted((root / status).glob("*.smt2"))]
    return out


def run_benchmark(root: Path, timeout: float = 60.0, jobs: int = 2, limit: int | None = None,
                  seed: int = 0, check: bool = False, out: Path | None = None,
                  progress=None) -> dict:
    """Run every (or ``limit`` randomly chosen) benchmark file; returns the summary."""
    files = benchmark_files(root)
    if limit is not None and limit < len(files):
        files = sorted(random.Random(seed).sample(files, limit))
    ctx = mp.get_context("fork")
    results: list[tuple[str, str, dict]] = []
    lock = threading.Lock()
    queue = list(reversed(files))
    sink = out.open("w") if out else None

    def drive():
        slot = _Slot(ctx, timeout, check)
        try:
            while True:
                with lock:
                    if not queue:
                        return
                    status, path = queue.pop()
                record = slot.run(path)
                record.update(status=status, file=Path(path).name, family=family(path))
                with lock:
                    results.append((status, path, record))
                    if sink:
                        sink.write(json.dumps(record) + "\n")
                        sink.flush()
                    if progress:
                        progress(len(results), len(files), record)
        finally:
            slot.stop()

    threads = [threading.Thread(target=drive) for _ in range(max(1, jobs))]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    if sink:
        sink.close()
    return summarize([r for _, _, r in results], timeout)


def _percentile(values: list[float], q: float) -> float:
    if not values:
        return float("nan")
    values = sorted(values)
    return values[min(len(values) - 1, int(q * len(values)))]


def summarize(records: list[dict], timeout: float) -> dict:
    """Counts and figures of a benchmark run (module docstring)."""
    conj = [r for r in records if r.get("conjunctive", True)]
    summary: dict = {"files": len(records), "conjunctive": len(conj), "timeout": timeout}
    for status in ("sat", "unsat"):
        mine = [r for r in conj if r["status"] == status]
        solved = [r for r in mine if r["answer"] == status]
        wrong = [r["file"] for r in mine if r["answer"] in ("sat", "unsat") and r["answer"] != status]
        times = [r["time"] for r in solved]
        summary[status] = {
            "total": len(mine),
            "solved": len(solved),
            "wrong": wrong,
            "median_time": statistics.median(times) if times else float("nan"),
            "p90_time": _percentile(times, 0.9),
            "median_bytes": statistics.median([r["bytes"] for r in solved]) if solved else 0,
            "rejected": [r["file"] for r in solved if r.get("accepted") is False],
        }
    unsolved: dict[str, Counter] = defaultdict(Counter)
    for r in conj:
        if r["answer"] != r["status"]:
            unsolved[f"{r['status']}/{r['family']}"][r["reason"] or r["answer"]] += 1
    summary["unsolved"] = {k: dict(v) for k, v in sorted(unsolved.items())}
    return summary


def report(summary: dict) -> str:
    lines = [f"{summary['conjunctive']} conjunctive of {summary['files']} files, "
             f"timeout {summary['timeout']:g} s"]
    for status in ("sat", "unsat"):
        s = summary[status]
        pct = 100.0 * s["solved"] / s["total"] if s["total"] else float("nan")
        lines.append(f"{status:5}: solved {s['solved']}/{s['total']} ({pct:.1f} %), "
                     f"median {s['median_time']:.3f} s, p90 {s['p90_time']:.3f} s, "
                     f"median certificate {s['median_bytes']:.0f} bytes")
        if s["wrong"]:
            lines.append(f"  WRONG ANSWERS: {s['wrong']}")
        if s["rejected"]:
            lines.append(f"  REJECTED CERTIFICATES: {s['rejected']}")
    lines.append("unsolved by family:")
    for fam, reasons in summary["unsolved"].items():
        lines.append(f"  {fam}: " + ", ".join(f"{n} {why}" for why, n in sorted(reasons.items())))
    return "\n".join(lines)


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("root", nargs="?", type=Path, default=default_benchmarks())
    ap.add_argument("--timeout", type=float, default=60.0)
    ap.add_argument("-j", "--jobs", type=int, default=2)
    ap.add_argument("--limit", type=int)
    ap.add_argument("--seed", type=int, default=0)
    ap.add_argument("--check", action="store_true")
    ap.add_argument("--out", type=Path)
    args = ap.parse_args(argv)
    if not args.root.is_dir():
        print(f"no benchmarks at {args.root}", file=sys.stderr)
        return 2

    def progress(done, total, record):
        if done % 50 == 0 or done == total:
            print(f"  {done}/{total}", file=sys.stderr, flush=True)

    summary = run_benchmark(args.root, args.timeout, args.jobs, args.limit, args.seed,
                            args.check, args.out, progress)
    print(report(summary))
    return 1 if summary["sat"]["wrong"] or summary["unsat"]["wrong"] else 0


if __name__ == "__main__":
    sys.exit(main())
