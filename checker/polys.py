"""Polynomials as the checker needs them: exact flint objects in the certificate's variables.

Every polynomial here lives in ``poly_context(n)``, whose generators ``x1 … xn`` are the
certificate's variables (lex order, so ``xn`` is the last).  "Level" of a polynomial is
the index of its last variable (0 for constants), as in cylindrical algebraic
decomposition (Collins 1975).
"""
from __future__ import annotations

from math import lcm
from typing import Iterator

from flint import fmpq_mpoly, fmpz_mpoly, fmpz_mpoly_ctx, fmpz_poly



Z = fmpz_mpoly_ctx.get(("z",), "lex")
"""The context of the numbers' defining polynomials, in ``z``."""


def to_flint(text: str, ctx: fmpz_mpoly_ctx) -> fmpz_mpoly:
    """The polynomial of a certificate's text (blanks removed) that the reader matched to SPEC §10 (flint's parser)."""
    return fmpz_mpoly(text, ctx)


def univariate(g: fmpz_mpoly) -> fmpz_poly:
    """g, in one generator, as a dense univariate polynomial (made only once its degree is within the limits)."""
    coeffs = [0] * (g.degrees()[0] + 1)
    for (e,), c in zip(g.monoms(), g.coeffs()):
        coeffs[e] = c
    return fmpz_poly(coeffs)


def permuted(poly: fmpz_mpoly, order: list[int]) -> fmpz_mpoly:
    """Rename problem variable ``order[k]`` to certificate variable ``k`` (0-based)."""
    ctx = poly.context()
    return ctx.from_dict({tuple(e[j] for j in order): c for e, c in zip(poly.monoms(), poly.coeffs())})


def level(f: fmpz_mpoly) -> int:
    """1 + index of the last variable occurring in ``f``; 0 for a constant."""
    degs = f.degrees()
    k = len(degs)
    while k and not degs[k - 1]:
        k -= 1
    return k


def key(f: fmpz_mpoly) -> str:
    """A hashable identity of ``f`` among polynomials of one context: flint's canonical text."""
    return str(f)


def normalized(f: fmpz_mpoly) -> fmpz_mpoly:
    """``f`` made primitive with positive leading coefficient (lex), as atoms are."""
    c = f.content()
    if c != 1:
        f = f // c
    return -f if f.leading_coefficient() < 0 else f


def irreducible_factors(f: fmpz_mpoly) -> list[fmpz_mpoly]:
    """The distinct non-constant irreducible factors of ``f``, normalized (flint's factorization,
    over Q when python-flint 0.9's integer one overflows sorting huge coefficients)."""
    if f.is_zero():
        raise ValueError("factorization of the zero polynomial")
    if f.total_degree() == 1:            # of total degree 1: irreducible (a factor would be constant)
        return [normalized(f)]
    try:
        factors = [g for g, _ in f.factor()[1]]
    except OverflowError:
        factors = [_integral(g, f.context()) for g, _ in fmpq_mpoly(f).factor()[1]]
    return [normalized(g) for g in factors if not g.is_constant()]


def _integral(g: fmpq_mpoly, ctx) -> fmpz_mpoly:
    """A rational polynomial times the lcm of its denominators."""
    terms = g.to_dict()
    den = lcm(*(int(c.q) for c in terms.values()))
    return ctx.from_dict({e: int(c.p) * (den // int(c.q)) for e, c in terms.items()})


def coefficients_in(f: fmpz_mpoly, var: int) -> Iterator[fmpz_mpoly]:
    """Coefficients of ``f`` as a polynomial in variable ``var``, leading one first (each built when reached)."""
    ctx = f.context()
    buckets: dict[int, dict] = {}
    for e, c in zip(f.monoms(), f.coeffs()):
        rest = e[:var] + (0,) + e[var + 1:]
        buckets.setdefault(e[var], {})[rest] = c
    for d in range(max(buckets, default=0), -1, -1):
        yield ctx.from_dict(buckets.get(d, {}))


def discriminant(f: fmpz_mpoly, var: int) -> fmpz_mpoly:
    """Discriminant of ``f`` with respect to ``var`` (flint)."""
    return f.discriminant(f.context().names()[var])


def resultant(f: fmpz_mpoly, g: fmpz_mpoly, var: int) -> fmpz_mpoly:
    """Sylvester resultant of ``f`` and ``g`` with respect to ``var`` (flint)."""
    return f.resultant(g, f.context().names()[var])
