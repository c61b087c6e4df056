"""What a covering node passes up: the conservative projection rule (DESIGN §4–§5).

Polynomials live in the certificate order (``poly_context(n)``, generator
``x(k-1)`` standing for the certificate's ``xk``).  The *level* of a polynomial
is 1 + the index of its last variable (Collins 1975).  Every polynomial that
enters a characterization is an irreducible factor over the integers, primitive
and *sign-normalized*: the coefficient of its term with the lexicographically
largest exponent tuple (exponent of ``x1`` compared first) is positive — the
rule :func:`certformat.formula.make_atom` applies to atoms.  Such factors are
interned in a :class:`PolyStore` and referred to by integer ids, so that
projections (factorization, coefficients, discriminants, resultants) are
computed once per polynomial or pair.

The rule, for a node at level ``i`` with sample ``s`` (see :meth:`PolyStore.passed_up`):

* ``P_i`` = the irreducible factors of positive degree in ``x_i`` of the node's
  bound polynomials, of its non-nullified direct literals' polynomials, and of
  the level-``i`` members of its lifted intervals' declared sets;
* ``P′`` = for each ``f`` in ``P_i``: the factors of its coefficient chain in
  ``x_i`` (leading coefficient first, zero coefficients skipped, down to the
  first one whose sign at ``s`` is non-zero) and, if ``deg_{x_i} f ≥ 2``, of
  ``disc_{x_i}(f)``; for each unordered pair ``f ≠ g`` of ``P_i`` the factors
  of ``res_{x_i}(f, g)``; plus the factors of level below ``i`` of every
  polynomial named above (bounds, non-nullified direct literals, declared
  sets); plus, for each nullified direct literal, the factors of every non-zero
  coefficient of its polynomial in ``x_i``.  Constants are dropped.
* A member of ``P_i`` (at level ≥ 2) with no coefficient non-zero at ``s``, or
  an identically zero discriminant or resultant, raises :class:`Nullification`:
  the conservative rule cannot characterize the cell (the prover says unknown).

McCallum's projection theorem (McCallum 1988, 1998) is what makes ``P′``
enough; SOUNDNESS.md states the rule and its argument.
"""
from __future__ import annotations

from collections.abc import Iterable, Sequence
from itertools import combinations

from math import lcm

from flint import fmpq_mpoly, fmpz_mpoly

from certformat.formula import poly_context

from .numbers import RealAlg
from .roots import Nullified, real_roots_at, sign_at


class Nullification(Exception):
    """The conservative projection rule does not apply at this sample."""

    reason = "nullified characterization polynomial"

    def __init__(self, detail: str = ""):
        super().__init__(self.reason + (f" ({detail})" if detail else ""))


def poly_level(f: fmpz_mpoly) -> int:
    """1 + the index of the last variable occurring in ``f``; 0 for a constant."""
    level = 0
    for k, d in enumerate(f.degrees()):
        if d:
            level = k + 1
    return level


def normalized(f: fmpz_mpoly) -> fmpz_mpoly:
    """``f`` primitive with positive lex-leading coefficient."""
    c = f.content()
    if c != 1:
        f = f.context().from_dict({e: v // c for e, v in f.to_dict().items()})
    return -f if f.leading_coefficient() < 0 else f


def irreducible_factors(p: fmpz_mpoly) -> list[fmpz_mpoly]:
    """The distinct non-constant irreducible factors of ``p``, normalized.

    python-flint 0.9's ``fmpz_mpoly.factor`` raises OverflowError when it
    sorts two factors that differ only in coefficients beyond a machine word;
    the rational factorization does not sort that way, so it is the fallback
    (its factors are scaled back to primitive integer polynomials).
    """
    try:
        _, fs = p.factor()
        return [normalized(g) for g, _ in fs if not g.is_constant()]
    except OverflowError:
        pass
    _, fs = fmpq_mpoly(p).factor()
    out = []
    for g, _ in fs:
        if g.is_constant():
            continue
        terms = g.to_dict()
        den = 1
        for c in terms.values():
            den = lcm(den, int(c.q))
        out.append(normalized(p.context().from_dict({e: int(c * den) for e, c in terms.items()})))
    return out


class PolyStore:
    """Interned irreducible polynomials (ids ``0, 1, …``) with cached projections."""

    def __init__(self, nvars: int):
        self.nvars = nvars
        self.ctx = poly_context(nvars)
        self.names = self.ctx.names()
        self.polys: list[fmpz_mpoly] = []
        self.levels: list[int] = []
        self.degrees: list[int] = []
        """Degree of each polynomial in its main variable."""
        self.sort_keys: list[tuple] = []
        self._ids: dict[str, int] = {}
        self._factors: dict[str, tuple[int, ...]] = {}
        self._coeffs: dict[int, list[fmpz_mpoly]] = {}
        self._disc: dict[int, tuple[int, ...]] = {}
        self._res: dict[tuple[int, int], tuple[int, ...]] = {}

    # ------------------------------------------------------------ interning

    def intern(self, f: fmpz_mpoly) -> int:
        """The id of an irreducible non-constant polynomial (normalized here)."""
        if f.leading_coefficient() < 0 or f.content() != 1:
            f = normalized(f)
        key = str(f)
        pid = self._ids.get(key)
        if pid is None:
            pid = len(self.polys)
            self._ids[key] = pid
            self.polys.append(f)
            level = poly_level(f)
            self.levels.append(level)
            self.degrees.append(f.degrees()[level - 1])
            self.sort_keys.append((level, self.degrees[-1], f.total_degree(), len(f), key))
            self._factors[key] = (pid,)
        return pid

    def factors(self, p: fmpz_mpoly) -> tuple[int, ...]:
        """Ids of the distinct non-constant irreducible factors of a non-zero ``p``."""
        key = str(p)
        out = self._factors.get(key)
        if out is None:
            if p.is_zero():
                raise ValueError("factorization of the zero polynomial")
            out = tuple(sorted({self.intern(g) for g in irreducible_factors(p)}))
            self._factors[key] = out
        return out

    def sorted_ids(self, ids: Iterable[int]) -> tuple[int, ...]:
        """Ids in the canonical order (level, degree, total degree, terms, text)."""
        return tuple(sorted(set(ids), key=self.sort_keys.__getitem__))

    # ------------------------------------------------------------ projections

    def coefficients(self, pid: int) -> list[fmpz_mpoly]:
        """Coefficients of polynomial ``pid`` in its main variable, leading first, zeros kept."""
        out = self._coeffs.get(pid)
        if out is None:
            out = coefficients_in(self.polys[pid], self.levels[pid] - 1)
            self._coeffs[pid] = out
        return out

    def discriminant(self, pid: int) -> tuple[int, ...]:
        """Factors of the discriminant of ``pid`` in its main variable (degree ≥ 2)."""
        out = self._disc.get(pid)
        if out is None:
            f = self.polys[pid]
            d = f.discriminant(self.names[self.levels[pid] - 1])
            if d.is_zero():
                raise Nullification("zero discriminant")
            out = self.factors(d) if not d.is_constant() else ()
            self._disc[pid] = out
        return out

    def resultant(self, a: int, b: int) -> tuple[int, ...]:
        """Factors of the resultant of ``a`` and ``b`` in their common main variable."""
        key = (a, b) if a < b else (b, a)
        out = self._res.get(key)
        if out is None:
            f, g = self.polys[key[0]], self.polys[key[1]]
            r = f.resultant(g, self.names[self.levels[a] - 1])
            if r.is_zero():
                raise Nullification("zero resultant")
            out = self.factors(r) if not r.is_constant() else ()
            self._res[key] = out
        return out

    # ------------------------------------------------------------ the rule

    def passed_up(self, level: int, sample: Sequence[RealAlg], bounds: Iterable[int],
                  direct: Iterable[fmpz_mpoly], nullified: Iterable[fmpz_mpoly],
                  declared: Iterable[int]) -> tuple[int, ...]:
        """``P′`` of a node (module docstring), as sorted ids.

        ``bounds`` are the ids of the node's bound polynomials, ``direct`` the
        polynomials of its non-nullified direct literals, ``nullified`` those of
        its nullified ones, ``declared`` the union of its lifted intervals'
        declared sets.
        """
        relevant: set[int] = set(bounds) | set(declared)
        for p in direct:
            relevant.update(self.factors(p))
        main = sorted(pid for pid in relevant if self.levels[pid] == level)
        up = {pid for pid in relevant if self.levels[pid] < level}
        if any(self.levels[pid] > level for pid in relevant):
            raise ValueError("a polynomial above the node's level")
        var = level - 1
        for p in nullified:
            for c in coefficients_in(p, var):
                if not c.is_zero() and not c.is_constant():
                    up.update(self.factors(c))
        for pid in main:
            up.update(self.coefficient_chain(pid, sample))
            if self.degrees[pid] >= 2:
                up.update(self.discriminant(pid))
        for a, b in combinations(main, 2):
            up.update(self.resultant(a, b))
        return self.sorted_ids(up)

    def coefficient_chain(self, pid: int, sample: Sequence[RealAlg]) -> set[int]:
        """Factors of the coefficients from the leading one to the first non-zero at ``sample``."""
        out: set[int] = set()
        for c in self.coefficients(pid):
            if c.is_zero():
                continue
            if c.is_constant():
                return out
            out.update(self.factors(c))
            if sign_at(c, sample) != 0:
                return out
        raise Nullification(f"{self.polys[pid]} vanishes identically at the sample")

    # ------------------------------------------------------------ roots

    def roots(self, pid: int, sample: Sequence[RealAlg], cache: dict[int, list[RealAlg]]
              ) -> list[RealAlg]:
        """Distinct real roots of ``pid`` over ``sample`` (cached in ``cache``, one per sample)."""
        out = cache.get(pid)
        if out is None:
            try:
                out = real_roots_at(self.polys[pid], sample)
            except Nullified:
                raise Nullification(f"{self.polys[pid]} vanishes identically at the sample"
                                    ) from None
            cache[pid] = out
        return out


def coefficients_in(f: fmpz_mpoly, var: int) -> list[fmpz_mpoly]:
    """Coefficients of ``f`` as a polynomial in variable ``var``, leading one first."""
    ctx = f.context()
    buckets: dict[int, dict] = {}
    for e, c in zip(f.monoms(), f.coeffs()):
        rest = e[:var] + (0,) + e[var + 1:]
        buckets.setdefault(e[var], {})[rest] = c
    top = max(buckets, default=0)
    return [ctx.from_dict(buckets.get(d, {})) for d in range(top, -1, -1)]
