"""The variable order of the covering, and the renaming into it.

The covering assigns variables ``x1 < x2 < … < xn`` (the certificate order) and
projects from the last one down.  The order is chosen by Brown's heuristic
(C. W. Brown, *Companion to the tutorial "Cylindrical algebraic decomposition"*,
ISSAC 2004; common practice since): the variable projected **first**, i.e. the
*last* one of the order, is the one with

1. the lowest maximum degree over all the input polynomials, then
2. the lowest total degree of the terms that contain it (the largest such
   total degree), then
3. the fewest terms containing it, then
4. the later declaration (so among equals the declaration order is kept, and
   the order is deterministic).

The criteria are applied to the input polynomials greedily: the last variable
is chosen among all, the one before it among the rest, and so on.  A variable
that occurs in no polynomial has maximum degree 0 and so comes last; its level
has no constraint, and any value serves.

One refinement comes before Brown's criteria: variables that a univariate
equation fixes (``x^2 - 3 = 0`` in the conjunction) come *first*, among
themselves in Brown's order.  Their values are then found at the lowest
levels, as roots of those equations, of small degree; otherwise the search
meets them above other variables, over samples that are roots of projection
polynomials of high degree, where root isolation over the sample's number
field is expensive.

:func:`choose_order` returns the permutation ``order``: certificate variable
``k`` (0-based, ``x(k+1)`` in certificate text) is the problem's declared
variable ``order[k]``.  :func:`to_certificate_order` renames a problem
polynomial (declaration-order context) accordingly.
"""
from __future__ import annotations

from collections.abc import Iterable, Sequence

from flint import fmpz_mpoly

from certformat.formula import poly_context


def brown_key(polys: Sequence[fmpz_mpoly], var: int) -> tuple[int, int, int, int]:
    """Brown's criteria for ``var`` (smaller = project earlier), declaration order last."""
    max_degree = 0
    max_term_degree = 0
    terms = 0
    for p in polys:
        for exps in p.monoms():
            if exps[var]:
                max_degree = max(max_degree, exps[var])
                max_term_degree = max(max_term_degree, sum(exps))
                terms += 1
    return (max_degree, max_term_degree, terms, -var)


def choose_order(polys: Iterable[fmpz_mpoly], nvars: int,
                 equations: Iterable[fmpz_mpoly] = ()) -> list[int]:
    """The certificate order as a list of problem variable indices (module docstring).

    ``polys`` are all the input polynomials; ``equations`` those that must
    vanish (the conjunction's equalities), whose univariate members fix
    their variable.
    """
    polys = list(polys)
    fixed = set()
    for p in equations:
        used = [k for k, d in enumerate(p.degrees()) if d > 0]
        if len(used) == 1:
            fixed.add(used[0])
    first = [v for v in range(nvars) if v in fixed]
    rest = [v for v in range(nvars) if v not in fixed]
    return _brown_order(polys, first) + _brown_order(polys, rest)


def _brown_order(polys: list[fmpz_mpoly], variables: list[int]) -> list[int]:
    """``variables`` ordered so that the one projected first (by Brown) is last."""
    remaining = list(variables)
    projected_first: list[int] = []
    while remaining:
        best = min(remaining, key=lambda v: brown_key(polys, v))
        projected_first.append(best)
        remaining.remove(best)
    return projected_first[::-1]


def to_certificate_order(poly: fmpz_mpoly, order: Sequence[int]) -> fmpz_mpoly:
    """``poly`` with problem variable ``order[k]`` renamed to certificate variable ``k``."""
    ctx = poly_context(len(order))
    return ctx.from_dict({tuple(e[j] for j in order): c for e, c in poly.to_dict().items()})


def to_problem_order(poly: fmpz_mpoly, order: Sequence[int]) -> fmpz_mpoly:
    """The inverse renaming of :func:`to_certificate_order`."""
    ctx = poly_context(len(order))
    out = {}
    for e, c in poly.to_dict().items():
        exps = [0] * len(order)
        for k, j in enumerate(order):
            exps[j] = e[k]
        out[tuple(exps)] = c
    return ctx.from_dict(out)
