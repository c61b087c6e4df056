"""Timings of the prover's exact kernel (and, for scale, the checker's).

    python bench/kernel_bench.py [--repeat N]

Each operation is timed cold (kernel caches cleared before every call, fresh
number objects) and warm (caches kept).  Inputs are fixed by a seeded
generator, so runs are comparable.  Prints one table: median time per call.
"""
from __future__ import annotations

import argparse
import random
import statistics
import time

from flint import fmpq, fmpz_poly

from certformat.formula import poly_context
from prover import numbers, roots
from prover.numbers import RealAlg
from prover.roots import isolate_real_roots, real_roots_at, sign_at

try:  # the checker's kernel, for scale only
    from checker import algebraic as ck
    from checker import signs as cks
except ImportError:  # pragma: no cover
    ck = cks = None


def clear_caches() -> None:
    for f in (roots._isolate_key, roots._irreducible_roots, roots._field_of, numbers._factors_of_key):
        f.cache_clear()


def timed(fn, repeat: int, cold: bool) -> float:
    """Median seconds per call."""
    samples = []
    for _ in range(repeat):
        if cold:
            clear_caches()
        t = time.perf_counter()
        fn()
        samples.append(time.perf_counter() - t)
    return statistics.median(samples)


def fmt(seconds: float | None) -> str:
    if seconds is None:
        return "-"
    if seconds < 1e-3:
        return f"{seconds * 1e6:8.1f} us"
    if seconds < 1:
        return f"{seconds * 1e3:8.2f} ms"
    return f"{seconds:8.2f} s "


def to_checker(a: RealAlg):
    return ck.RealAlgebraic.rational(a.value) if a.is_rational else ck.RealAlgebraic(a.poly, a.low, a.high)


def fresh(a: RealAlg) -> RealAlg:
    """A new object for the same number (no refinement carried over)."""
    return a if a.is_rational else RealAlg.root(a.poly, a.low, a.high)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=9)
    args = ap.parse_args()
    rng = random.Random(20240601)
    ctx = poly_context(3)
    x0, x1, x2 = ctx.gens()

    # 1. Degree 20, 60-bit coefficients; and a product with many real roots.
    big = fmpz_poly([rng.randint(-2 ** 60, 2 ** 60) for _ in range(20)] + [2 ** 59 + 1])
    cheb = fmpz_poly.chebyshev_t(20) * fmpz_poly([-3, 0, 1])

    # 2. Dense degree-10 trivariate polynomial at a rational point.
    terms = {(i, j, k): rng.randint(-1000, 1000)
             for i in range(11) for j in range(11 - i) for k in range(11 - i - j)}
    dense = ctx.from_dict(terms)
    rpoint = [RealAlg.from_rational(fmpq(3, 4)), RealAlg.from_rational(fmpq(-5, 8)),
              RealAlg.from_rational(fmpq(7, 16))]

    # 3. An exact zero at (sqrt 2, cbrt 3), and a non-zero value there.
    sqrt2 = RealAlg.root(fmpz_poly([-2, 0, 1]), 1, 2)
    cbrt3 = RealAlg.root(fmpz_poly([-3, 0, 0, 1]), 1, 2)
    r = ctx.from_dict({(rng.randint(0, 3), rng.randint(0, 3), 0): rng.randint(-9, 9) for _ in range(6)})
    s = ctx.from_dict({(rng.randint(0, 3), rng.randint(0, 3), 0): rng.randint(-9, 9) for _ in range(6)})
    zero = (x0 ** 2 - 2) * r + (x1 ** 3 - 3) * s
    mono = (x0 * x1) ** 6 - 72

    # 4. Roots over algebraic samples.
    alpha = isolate_real_roots(fmpz_poly([1, -3, 0, 1]))[2]          # root of x^3 - 3x + 1
    p_one = (x1 ** 2 - x0) * (x1 ** 3 - x0 * x1 + 1) * (x1 - x0 ** 2) + x0 ** 3 - 3 * x0 + 1
    p_two = (x2 ** 2 - x0 * x1) * (x2 - x0 - x1) + x2 * (x0 ** 2 - 2)

    def alg(*coords):
        """Fresh objects when timing cold, the same objects when warm."""
        return lambda cold: [fresh(c) for c in coords] if cold else list(coords)

    rows = [
        ("isolate deg-20, 60-bit coeffs", big, None, isolate_real_roots, ck and ck.real_roots),
        ("isolate T20*(x^2-3), 22 real roots", cheb, None, isolate_real_roots, ck and ck.real_roots),
        ("sign dense deg-10 3-D, rational pt", dense, alg(*rpoint), sign_at, cks and cks.sign_at),
        ("sign = 0 at (sqrt2, cbrt3)", zero, alg(sqrt2, cbrt3), sign_at, cks and cks.sign_at),
        ("sign (xy)^6-72 = 0 at (sqrt2, cbrt3)", mono, alg(sqrt2, cbrt3), sign_at, cks and cks.sign_at),
        ("sign != 0 at (sqrt2, cbrt3)", zero + 1, alg(sqrt2, cbrt3), sign_at, cks and cks.sign_at),
        ("real_roots_at deg-6 over cubic alpha", p_one, alg(alpha), real_roots_at, cks and cks.real_roots_at),
        ("real_roots_at over (sqrt2, cbrt3)", p_two, alg(sqrt2, cbrt3), real_roots_at,
         cks and cks.real_roots_at),
    ]
    print(f"{'operation':40} {'prover cold':>12} {'prover warm':>12} {'checker':>12}")
    for name, p, point, mine, theirs in rows:
        if point is None:
            cold = timed(lambda: mine(p), args.repeat, cold=True)
            warm = timed(lambda: mine(p), args.repeat, cold=False)
            other = timed(lambda: theirs(p), max(1, args.repeat // 3), cold=False) if theirs else None
        else:
            cold = timed(lambda: mine(p, point(True)), args.repeat, cold=True)
            warm_point = point(False)
            warm = timed(lambda: mine(p, warm_point), args.repeat, cold=False)
            theirs_point = [to_checker(c) for c in point(False)]
            other = timed(lambda: theirs(p, theirs_point), max(1, args.repeat // 3), cold=False) \
                if theirs else None
        print(f"{name:40} {fmt(cold):>12} {fmt(warm):>12} {fmt(other):>12}")


if __name__ == "__main__":
    main()
