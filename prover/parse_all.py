"""Parse every problem under a directory and report counts and times.

    python -m prover.parse_all [DIR]

DIR defaults to $TESSELLA_BENCHMARKS, else ../shared/benchmarks/qf_nra beside
the repository.  Files are *.smt2 and *.tess, recursively, in sorted order.  A
file in a directory named sat/ or unsat/ must declare that status.  Exit code 0
when every file parses (and agrees with its directory), 1 otherwise.
"""
from __future__ import annotations

import os
import sys
import time
from pathlib import Path

from certformat.errors import InputError
from certformat.problem import load_problem

DEFAULT = Path(__file__).resolve().parents[1].parent / "shared" / "benchmarks" / "qf_nra"


def parse_all(root: Path, out=sys.stdout) -> int:
    files = sorted(p for p in root.rglob("*") if p.suffix in (".smt2", ".tess") and p.is_file())
    failures, times = [], []
    start = time.perf_counter()
    for path in files:
        t0 = time.perf_counter()
        try:
            problem = load_problem(path)
            if path.parent.name in ("sat", "unsat") and problem.status != path.parent.name:
                failures.append(f"{path}: declared status {problem.status}, "
                                f"directory {path.parent.name}")
        except InputError as err:
            failures.append(str(err))
        times.append((time.perf_counter() - t0, path))
    total = time.perf_counter() - start
    for line in failures:
        print(f"FAIL {line}", file=out)
    print(f"parsed {len(files) - len(failures)}/{len(files)} files from {root} "
          f"in {total:.2f} s", file=out)
    if times:
        ordered = sorted(t for t, _ in times)
        print(f"per file: mean {1000 * total / len(files):.2f} ms, "
              f"median {1000 * ordered[len(ordered) // 2]:.2f} ms, "
              f"max {1000 * ordered[-1]:.2f} ms", file=out)
        for t, path in sorted(times, reverse=True)[:5]:
            print(f"  slowest: {1000 * t:8.2f} ms  {path}", file=out)
    return 1 if failures or not files else 0


def main(argv=None) -> int:
    args = sys.argv[1:] if argv is None else argv
    root = Path(args[0] if args else os.environ.get("TESSELLA_BENCHMARKS") or DEFAULT)
    if not root.is_dir():
        print(f"parse_all: error: {root} is not a directory", file=sys.stderr)
        return 2
    return parse_all(root)


if __name__ == "__main__":
    sys.exit(main())
