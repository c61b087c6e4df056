"""A rotating subset of the SMT-LIB QF_NRA benchmark set parses, and the declared
status of each file equals the directory it sits in (sat/ or unsat/).

The subset changes every day (seed = the date, YYYYMMDD); the seed is part of
every test id and printed, and TESSELLA_BENCH_SEED replays a given day.  The set
is found beside the repository or at TESSELLA_BENCHMARKS; absent, the tests skip.
"""
import datetime
import os
import random
from pathlib import Path

import pytest

from certformat.problem import load_problem

SUBSET = 60
ROOT = Path(os.environ.get("TESSELLA_BENCHMARKS") or
            Path(__file__).resolve().parents[1].parent / "shared" / "benchmarks" / "qf_nra")
SEED = int(os.environ.get("TESSELLA_BENCH_SEED") or datetime.date.today().strftime("%Y%m%d"))


def _subset():
    files = sorted(ROOT.glob("*/*.smt2")) if ROOT.is_dir() else []
    return random.Random(SEED).sample(files, min(SUBSET, len(files)))


FILES = _subset()


@pytest.mark.skipif(not FILES, reason=f"benchmark set not found at {ROOT}")
@pytest.mark.parametrize("path", FILES, ids=[f"seed{SEED}-{p.parent.name}-{p.name}" for p in FILES])
def test_benchmark_parses_with_its_status(path):
    print(f"benchmark seed {SEED} (set TESSELLA_BENCH_SEED={SEED} to replay): {path}")
    problem = load_problem(path)
    assert problem.status == path.parent.name, f"seed {SEED}: {path}"
    assert problem.variables and problem.assertions


def test_benchmark_subset_is_reported():
    if not FILES:
        pytest.skip(f"benchmark set not found at {ROOT}")
    print(f"benchmark seed {SEED}: {len(FILES)} files from {ROOT}")
    assert len(FILES) == min(SUBSET, len(list(ROOT.glob("*/*.smt2"))))
