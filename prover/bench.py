"""``tessella bench``: solve rates, times, check/prove ratios and certificate sizes.

Every ``*.smt2`` file under ``DIR/sat`` and ``DIR/unsat`` (default: the shared
QF_NRA set beside the repository; ``TESSELLA_BENCHMARKS`` overrides) is parsed,
proven with a cooperative ``--timeout`` and, when an answer comes, its
certificate or witness is replayed by the checker — all in worker processes
with a hard limit (``prover.pool``), so a runaway case cannot hang the run.
The directory name is the expected answer (SMT-LIB status annotations); a
contradicting answer or a rejected certificate is reported loudly and makes the
command exit 1.

Each file is timed as a one-shot ``tessella prove`` and ``tessella check`` would
be: the prover's memo caches are emptied first, so no file profits from the
polynomials of the files its worker did before (the checker keeps none).

The summary gives, for sat and unsat, over all files and over the pure
conjunctions: solved/total, median and 90th-percentile prove time, the median
check/prove time ratio (per file; checking includes reading the certificate), the
total check time over the total prove time, the median certificate size; the slowest checks; and
the unsolved files by family with their reasons.  ``--out`` keeps one JSON
record per file.
"""
from __future__ import annotations

import json
import os
import random
import re
import statistics
import sys
import time
from collections import Counter, defaultdict
from pathlib import Path

from .pool import run_all

GRACE = 30.0
"""Seconds a worker gets beyond the cooperative timeout (for checking) before it is killed."""


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


def run_one(path: str, timeout: float) -> dict:
    """Parse, prove and check one file (in a worker process): a JSON-able record."""
    from certformat.certio import read_certificate
    from certformat.problem import load_problem
    from checker.check import check
    from prover.roots import forget_cached
    from prover.solve import prove

    forget_cached()     # each file is proven as by a fresh process, whatever this worker did before
    t = time.monotonic()
    problem = load_problem(path)
    record = {"parse_time": time.monotonic() - t, "nvars": len(problem.variables),
              "conjunctive": is_conjunction(problem)}
    result = prove(problem, timeout=timeout)
    record.update(answer=result.answer, reason=result.reason, time=result.stats.get("time", 0.0),
                  bytes=len(result.certificate_text.encode()) if result.certificate_text else 0,
                  lemmas=result.stats.get("lemmas", 0))
    if result.certificate_text:
        t = time.monotonic()
        verdict = check(problem, read_certificate(result.certificate_text))
        record["check_time"] = time.monotonic() - t
        record["accepted"] = verdict.accepted
        if not verdict.accepted:
            record["rejection"] = f"{verdict.rule}: {verdict.reason} (line {verdict.line})"
    return record


def benchmark_files(root: Path) -> list[tuple[str, str]]:
    """(status, path) of every benchmark file, sorted."""
    return [(status, str(p)) for status in ("sat", "unsat")
            for p in sorted((root / status).glob("*.smt2"))]


def run_benchmark(root: Path, timeout: float = 60.0, jobs: int = 2, limit: int | None = None,
                  seed: int = 0, out: Path | None = None, progress=None) -> dict:
    """Run every (or ``limit`` randomly chosen) benchmark file; returns the summary."""
    files = benchmark_files(root)
    if limit is not None and limit < len(files):
        files = sorted(random.Random(seed).sample(files, limit))
    records: list[dict] = []
    sink = out.open("w") if out else None
    started = time.monotonic()

    def on_result(task, outcome):
        path, _, status = task
        kind, value = outcome
        if kind == "ok":
            record = value
        else:
            record = {"answer": "unknown" if kind == "killed" else "error", "time": timeout,
                      "reason": "killed at the hard limit" if kind == "killed" else value,
                      "bytes": 0, "conjunctive": None}
        record.update(status=status, file=Path(path).name, family=family(path))
        records.append(record)
        if sink:
            sink.write(json.dumps(record, sort_keys=True) + "\n")
            sink.flush()
        if progress:
            progress(len(records), len(files), record)

    run_all(_run_task, [(p, timeout, s) for s, p in files], timeout + GRACE, jobs, on_result)
    if sink:
        sink.close()
    summary = summarize(records, timeout)
    summary["wall_time"] = time.monotonic() - started
    summary["jobs"] = jobs
    return summary


def _run_task(path: str, timeout: float, status: str) -> dict:
    return run_one(path, timeout)


def _percentile(values: list[float], q: float) -> float:
    if not values:
        return float("nan")
    values = sorted(values)
    return values[min(len(values) - 1, int(q * len(values)))]


def _figures(records: list[dict], status: str) -> dict:
    mine = [r for r in records if r["status"] == status]
    solved = [r for r in mine if r["answer"] == status]
    times = [r["time"] for r in solved]
    checked = [r for r in solved if "check_time" in r]
    ratios = [r["check_time"] / max(r["time"], 1e-6) for r in checked]
    return {
        "total": len(mine), "solved": len(solved),
        "wrong": [r["file"] for r in mine if r["answer"] in ("sat", "unsat")
                  and r["answer"] != status],
        "rejected": [r["file"] for r in solved if r.get("accepted") is False],
        "median_time": statistics.median(times) if times else float("nan"),
        "p90_time": _percentile(times, 0.9),
        "median_ratio": statistics.median(ratios) if ratios else float("nan"),
        "total_ratio": (sum(r["check_time"] for r in checked) /
                        max(sum(r["time"] for r in checked), 1e-6)) if checked else float("nan"),
        "median_bytes": statistics.median([r["bytes"] for r in solved]) if solved else 0,
    }


def summarize(records: list[dict], timeout: float) -> dict:
    """Counts and figures of a benchmark run (module docstring)."""
    conj = [r for r in records if r.get("conjunctive")]
    summary: dict = {"files": len(records), "conjunctive": len(conj), "timeout": timeout,
                     "parse_time": sum(r.get("parse_time", 0.0) for r in records),
                     "errors": [f"{r['file']}: {r['reason']}" for r in records
                                if r["answer"] == "error"]}
    for status in ("sat", "unsat"):
        summary[status] = _figures(records, status)
        summary["conjunctive_" + status] = _figures(conj, status)
    checked = sorted((r for r in records if "check_time" in r), key=lambda r: -r["check_time"])
    summary["slowest_checks"] = [(r["file"], round(r["check_time"], 3), round(r["time"], 3))
                                 for r in checked[:5]]
    unsolved: dict[str, Counter] = defaultdict(Counter)
    for r in records:
        if r["answer"] != r["status"]:
            unsolved[f"{r['status']}/{r['family']}"][r.get("reason") or r["answer"]] += 1
    summary["unsolved"] = {k: dict(v) for k, v in sorted(unsolved.items())}
    return summary


def report(summary: dict) -> str:
    """The summary as a readable table."""
    lines = [f"{summary['files']} files ({summary['conjunctive']} pure conjunctions), "
             f"timeout {summary['timeout']:g} s, {summary.get('jobs', 1)} jobs, "
             f"wall time {summary.get('wall_time', 0):.0f} s, "
             f"parsing {summary['parse_time']:.1f} s in all"]
    header = (f"{'':18} {'solved':>14} {'median':>8} {'p90':>8} {'check/prove':>11} "
              f"{'total c/p':>9} {'cert':>7}")
    lines.append(header)
    for key in ("sat", "unsat", "conjunctive_sat", "conjunctive_unsat"):
        s = summary[key]
        pct = 100.0 * s["solved"] / s["total"] if s["total"] else float("nan")
        lines.append(f"{key:18} {s['solved']:>5}/{s['total']:<5} {pct:5.1f}% "
                     f"{s['median_time']:7.3f}s {s['p90_time']:7.3f}s {s['median_ratio']:11.2f} "
                     f"{s['total_ratio']:9.2f} {s['median_bytes']:6.0f}B")
        if s["wrong"]:
            lines.append(f"  WRONG ANSWERS: {s['wrong']}")
        if s["rejected"]:
            lines.append(f"  REJECTED CERTIFICATES: {s['rejected']}")
    if summary["errors"]:
        lines.append("errors: " + "; ".join(summary["errors"][:10]))
    lines.append("slowest checks (file, check s, prove s): " +
                 ", ".join(f"{f} {c} {p}" for f, c, p in summary["slowest_checks"]))
    lines.append("unsolved by family:")
    for fam, reasons in summary["unsolved"].items():
        lines.append(f"  {fam}: " + ", ".join(f"{n} {why}" for why, n in sorted(reasons.items())))
    return "\n".join(lines)


def add_bench(verbs) -> None:
    bench = verbs.add_parser("bench", help="run the benchmark set and report the figures",
                             description=__doc__.splitlines()[0])
    bench.add_argument("root", nargs="?", type=Path, default=default_benchmarks(), metavar="DIR",
                       help="folder with sat/ and unsat/ (default: %(default)s)")
    bench.add_argument("--timeout", type=float, default=60.0, help="seconds per problem")
    bench.add_argument("-j", "--jobs", type=int, default=2, help="worker processes")
    bench.add_argument("--limit", type=int, help="a random sample of this many files")
    bench.add_argument("--seed", type=int, default=0, help="seed of the sample")
    bench.add_argument("--out", type=Path, help="write one JSON record per file here")
    bench.add_argument("--summary", type=Path, help="write the summary as JSON here")
    bench.set_defaults(run=bench_command)


def bench_command(args) -> int:
    """``tessella bench [DIR] [--timeout S] [-j N] [--limit N] [--out FILE]``."""
    from certformat.errors import InputError
    if not (args.root / "sat").is_dir() and not (args.root / "unsat").is_dir():
        raise InputError("no sat/ or unsat/ folder of benchmark problems here", str(args.root))

    def progress(done, total, record):
        if done % 100 == 0 or done == total:
            print(f"  {done}/{total}", file=sys.stderr, flush=True)

    summary = run_benchmark(args.root, args.timeout, args.jobs, args.limit, args.seed,
                            args.out, progress)
    print(report(summary))
    if args.summary:
        args.summary.write_text(json.dumps(summary, indent=2, sort_keys=True) + "\n")
    bad = any(summary[k]["wrong"] or summary[k]["rejected"] for k in ("sat", "unsat"))
    return 1 if bad else 0
