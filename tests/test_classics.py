"""Classic polynomial inequalities, and a rotating subset of the benchmark files.

Each classic inequality is stated negated (some point violates it); the
prover must answer unsat and the checker must accept the certificate.  The
sources are named beside each one.

The benchmark files carry their expected status (the directory they are in,
from the SMT-LIB annotations; see the benchmarks' README): the prover's answer
must be that status or unknown, never the opposite.
"""
import datetime
import itertools
import os
import random
import time
from pathlib import Path

import pytest

from certformat.certio import read_certificate
from certformat.problem import load_problem, parse_problem_text
from checker.check import check
from prover.solve import prove

CLASSICS = {
    # Motzkin 1967, "The arithmetic-geometric inequality" (in Shisha, ed., Inequalities):
    # non-negative, yet not a sum of squares of polynomials.
    "motzkin": """
        real x, y
        assert x^4*y^2 + x^2*y^4 - 3*x^2*y^2 + 1 < 0
    """,
    # The homogeneous Motzkin form x^4 y^2 + x^2 y^4 + z^6 - 3 x^2 y^2 z^2 >= 0 (same source).
    "motzkin form": """
        real x, y, z
        assert x^4*y^2 + x^2*y^4 + z^6 - 3*x^2*y^2*z^2 < 0
    """,
    # AM-GM for three non-negative numbers, (x+y+z)^3 >= 27xyz (classical; e.g. Hardy,
    # Littlewood & Pólya, "Inequalities", 1934).
    "am-gm 3": """
        real x, y, z
        assert x >= 0 and y >= 0 and z >= 0
        assert (x + y + z)^3 < 27*x*y*z
    """,
    # AM-GM for four non-negative numbers, (x+y+z+w)^4 >= 256xyzw (same source).
    "am-gm 4": """
        real x, y, z, w
        assert x >= 0 and y >= 0 and z >= 0 and w >= 0
        assert (x + y + z + w)^4 < 256*x*y*z*w
    """,
    # Schur's inequality, t = 1 (Schur; see Hardy, Littlewood & Pólya, "Inequalities").
    "schur t=1": """
        real x, y, z
        assert x >= 0 and y >= 0 and z >= 0
        assert x*(x - y)*(x - z) + y*(y - x)*(y - z) + z*(z - x)*(z - y) < 0
    """,
    # Schur's inequality, t = 2 (same source).
    "schur t=2": """
        real x, y, z
        assert x >= 0 and y >= 0 and z >= 0
        assert x^2*(x - y)*(x - z) + y^2*(y - x)*(y - z) + z^2*(z - x)*(z - y) < 0
    """,
    # Cauchy-Schwarz in the plane, (ac + bd)^2 <= (a^2 + b^2)(c^2 + d^2) (classical).
    "cauchy-schwarz": """
        real a, b, c, d
        assert (a*c + b*d)^2 > (a^2 + b^2)*(c^2 + d^2)
    """,
}


@pytest.mark.parametrize("name", sorted(CLASSICS))
def test_classic_inequality(name):
    problem = parse_problem_text(CLASSICS[name], f"{name}.tess")
    result = prove(problem, timeout=60)
    assert result.answer == "unsat", result.reason
    verdict = check(problem, read_certificate(result.certificate_text))
    assert verdict.accepted, verdict


# ------------------------------------------------------------------ benchmark subset

def benchmarks_root() -> Path:
    env = os.environ.get("TESSELLA_BENCHMARKS")
    if env:
        return Path(env)
    return Path(__file__).resolve().parents[1].parent / "shared" / "benchmarks" / "qf_nra"


def rotating_seed() -> int:
    env = os.environ.get("TESSELLA_BENCH_SEED")
    return int(env) if env else int(datetime.date.today().strftime("%Y%m%d"))


SUBSET = 20
FILE_TIMEOUT = 10.0


def test_rotating_benchmark_subset():
    """Any benchmark file (pure conjunction or not): the annotated answer or unknown, never
    the opposite (SMT-LIB status annotations), and every certificate accepted."""
    root = benchmarks_root()
    if not (root / "sat").is_dir() or not (root / "unsat").is_dir():
        pytest.skip(f"no benchmarks at {root}")
    seed = rotating_seed()
    files = [(s, p) for s in ("sat", "unsat") for p in sorted((root / s).glob("*.smt2"))]
    random.Random(seed).shuffle(files)
    print(f"benchmark subset seed {seed} (TESSELLA_BENCH_SEED overrides)")
    done, failures = 0, []
    for status, path in files:
        if done == SUBSET:
            break
        problem = load_problem(path)
        done += 1
        result = prove(problem, timeout=FILE_TIMEOUT)
        print(f"  {status}/{path.name}: {result.answer} {result.reason} "
              f"{result.stats.get('time', 0):.2f} s")
        if result.answer not in (status, "unknown"):
            failures.append(f"{path.name}: {result.answer}, expected {status}")
        if result.certificate_text is not None:
            verdict = check(problem, read_certificate(result.certificate_text))
            if not verdict.accepted:
                failures.append(f"{path.name}: certificate rejected: {verdict}")
    assert not failures, f"seed {seed}: {failures}"


def test_certificate_does_not_depend_on_the_clock(monkeypatch):
    """Deterministic output (our requirement): the same certificate when every clock reading
    jumps a minute, as on a very slow machine (conflict minimization counts covering nodes).
    The problem is SMT-LIB's sin-cos-346-b-chunk-0503 (status unsat), where a time budget once
    cut the minimization short."""
    path = benchmarks_root() / "unsat" / "sin-cos-346-b-chunk-0503.smt2"
    if not path.is_file():
        pytest.skip(f"no benchmark file {path}")
    problem = load_problem(path)
    normal = prove(problem).certificate_text
    clock = itertools.count(0, 60.0)
    monkeypatch.setattr(time, "monotonic", lambda: next(clock))
    assert prove(load_problem(path)).certificate_text == normal
