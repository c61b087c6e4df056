"""Fast polynomial helpers for the prover's kernel (flint objects end to end).

Multivariate polynomials are python-flint ``fmpz_mpoly`` (or ``fmpq_mpoly``
after rational substitution) in the problem's context ``x1 .. xn``, lex
order.  Univariate ones are ``fmpz_poly`` / ``fmpq_poly``.

Profiling notes (python-flint 0.9) that shaped these helpers:

* ``fmpz_mpoly.to_dict()``/``monoms()`` are Python-level and cost a few
  microseconds per term; ``coeffs()``, ``degrees()``, ``subs`` and ``__call__``
  run in C.  So exponent vectors are only read after substitution has made
  the polynomial small.
* ``fmpz_mpoly.__call__``/``subs`` accept integers only; rational points go
  through ``fmpq_mpoly`` (conversion is one C call), whose ``__call__`` and
  ``subs`` are the fastest exact evaluation measured (faster than
  ``compose`` with scaled generators by a factor of about five).

The second half implements polynomials over a simple algebraic extension
``K = Q[z]/(F)`` with ``F`` irreducible: an element is an ``fmpq_poly`` of
degree below ``deg F``; a polynomial over ``K`` is a list of elements, index =
degree, without trailing zeros.  Only what the kernel needs: arithmetic,
division with remainder, gcd and ball evaluation.
"""
from __future__ import annotations

from flint import arb, fmpq, fmpq_mpoly, fmpq_poly, fmpz, fmpz_mpoly, fmpz_poly

# --------------------------------------------------------------------------
# Multivariate helpers.


def to_fmpq_mpoly(p) -> fmpq_mpoly:
    """``p`` as an ``fmpq_mpoly`` (one C call for an ``fmpz_mpoly``)."""
    return p if isinstance(p, fmpq_mpoly) else fmpq_mpoly(p)


def substitute(p, values: dict[int, fmpq]):
    """``p`` with ``x_i`` replaced by the rational ``values[i]``, exactly: an
    ``fmpz_mpoly`` when ``p`` is one and every value is an integer, else an
    ``fmpq_mpoly`` (same context variables)."""
    if not values:
        return p
    if isinstance(p, fmpz_mpoly) and all(v.q == 1 for v in values.values()):
        return p.subs({i: v.p for i, v in values.items()})
    return to_fmpq_mpoly(p).subs(values)


def evaluate(p, values) -> fmpq:
    """``p`` at a rational point ``values`` (variables beyond it must not occur)."""
    n = p.context().nvars()
    values = list(values)[:n]
    if isinstance(p, fmpz_mpoly) and all(v.q == 1 for v in values):
        return fmpq(p(*([v.p for v in values] + [fmpz(0)] * (n - len(values)))))
    return to_fmpq_mpoly(p)(*(values + [fmpq(0)] * (n - len(values))))


def univariate(q, var: int) -> fmpq_poly:
    """The polynomial ``q``, which involves at most ``x_var``, as an fmpq_poly."""
    if q.is_zero():
        return fmpq_poly([])
    coeffs = q.coeffs()
    if q.is_constant():
        return fmpq_poly([coeffs[0]])
    degs = [e[var] for e in q.monoms()]
    out = [0] * (degs[0] + 1) if degs else []
    for d, c in zip(degs, coeffs):
        out[d] = c
    return fmpq_poly(out)


def integer_primitive(f) -> fmpz_poly:
    """A positive rational multiple of ``f`` that is a primitive integer
    polynomial (same roots, same signs)."""
    if isinstance(f, fmpq_poly):
        f = f.numer()
    c = f.content()
    if c > 1:
        f = fmpz_poly([a // c for a in f.coeffs()])
    return f


def coefficients_in(p: fmpz_mpoly, var: int) -> list[fmpz_mpoly]:
    """The coefficients of ``p`` as a polynomial in ``x_var``, ascending by
    degree (index = degree); each coefficient lives in ``p``'s context and
    does not involve ``x_var``."""
    ctx = p.context()
    if p.is_zero():
        return []
    deg = p.degrees()[var]
    groups: list[dict] = [dict() for _ in range(deg + 1)]
    for e, c in zip(p.monoms(), p.coeffs()):
        e = list(e)
        d, e[var] = e[var], 0
        groups[d][tuple(e)] = c
    return [ctx.from_dict(g) for g in groups]


def squarefree_basis(polys) -> list[fmpz_mpoly]:
    """The distinct irreducible factors of positive degree of ``polys``,
    each primitive with a positive leading coefficient (lex), in order of
    first occurrence.  Duplicates up to sign are removed."""
    seen: dict[str, fmpz_mpoly] = {}
    for p in polys:
        if p.is_zero() or p.is_constant():
            continue
        _, factors = p.factor()
        for f, _ in factors:
            if f.is_constant():
                continue
            if f.leading_coefficient() < 0:
                f = -f
            seen.setdefault(str(f), f)
    return list(seen.values())


# --------------------------------------------------------------------------
# Polynomials over K = Q[z]/(F), F irreducible.

Z = fmpq_poly([0, 1])
"""The generator ``z`` of K."""


def k_inverse(a: fmpq_poly, F: fmpq_poly) -> fmpq_poly:
    """``1/a`` in K (``a`` non-zero, reduced)."""
    if a.degree() == 0:
        return fmpq_poly([1 / a[0]])
    g, s, _ = a.xgcd(F)
    if g.degree() != 0:
        raise ZeroDivisionError("not invertible modulo the field polynomial")
    return (s / g[0]) % F


def kpoly_trim(A: list) -> list:
    """Drop zero leading coefficients (in place) and return ``A``."""
    while A and A[-1] == 0:
        A.pop()
    return A


def kpoly_divmod(A: list, B: list, F: fmpq_poly) -> tuple[list, list]:
    """Quotient and remainder of ``A`` by non-zero ``B`` in ``K[y]``."""
    R = list(A)
    db = len(B) - 1
    inv = k_inverse(B[-1], F)
    Q = [fmpq_poly([])] * max(len(R) - db, 0)
    while len(R) - 1 >= db and R:
        shift = len(R) - 1 - db
        c = (R[-1] * inv) % F
        Q[shift] = c
        for i in range(db + 1):
            b = B[i]
            R[shift + i] = R[shift + i] - c * b if b.degree() <= 0 else (R[shift + i] - c * b) % F
        kpoly_trim(R)
    return Q, R


def kpoly_monic(A: list, F: fmpq_poly) -> list:
    inv = k_inverse(A[-1], F)
    return [(c * inv) % F for c in A]


def _k_mul(a: fmpq_poly, b: fmpq_poly, F: fmpq_poly) -> fmpq_poly:
    return a * b if a.degree() <= 0 or b.degree() <= 0 else (a * b) % F


def kpoly_prem(A: list, B: list, F: fmpq_poly) -> list:
    """A pseudo-remainder of ``A`` by non-zero ``B``: ``lc(B)^k * A`` minus a
    multiple of ``B``, of degree below ``deg B``, computed without inverses."""
    R = kpoly_trim(list(A))
    db, lb = len(B) - 1, B[-1]
    while R and len(R) - 1 >= db:
        shift, lr = len(R) - 1 - db, R[-1]
        R = [_k_mul(c, lb, F) for c in R]
        for i in range(db):
            R[shift + i] = R[shift + i] - _k_mul(lr, B[i], F)
        R.pop()                      # lc(B)*lr - lr*lc(B) = 0
        kpoly_trim(R)
    return R


def kpoly_primitive(A: list) -> list:
    """``A`` times the positive rational that makes its coefficients integer
    polynomials with no common integer factor (same gcd up to a unit)."""
    if not A:
        return A
    den = fmpz(1)
    for c in A:
        den = den.lcm(c.denom())
    content = fmpz(0)
    for c in A:
        content = content.gcd(c.numer().content() * (den // c.denom()))
    scale = fmpq(den, content)
    return A if scale == 1 else [c * scale for c in A]


def kpoly_gcd(A: list, B: list, F: fmpq_poly) -> list:
    """The monic gcd of ``A`` and ``B`` in ``K[y]`` (``[]`` if both are zero):
    a primitive pseudo-remainder sequence (rational contents removed at each
    step, which keeps coefficients small), then one inversion."""
    A, B = kpoly_trim(list(A)), kpoly_trim(list(B))
    if len(A) < len(B):
        A, B = B, A
    while B:
        A, B = B, kpoly_primitive(kpoly_prem(A, B, F)) if len(B) > 1 else []
    return kpoly_monic(A, F) if A else A


def k_eval_arb(a: fmpq_poly, theta: arb) -> arb:
    """The ball value of the element ``a`` at an enclosure of the generator
    (at the caller's working precision)."""
    return a.numer()(theta) / a.denom()


def kpoly_eval_arb(A: list, theta: arb, y: arb) -> arb:
    """Ball value of ``A(theta, y)`` by Horner's rule in ``y``."""
    acc = arb(0)
    for c in reversed(A):
        acc = acc * y + k_eval_arb(c, theta)
    return acc


def kpoly_from_rational(f: fmpz_poly) -> list:
    """An integer univariate polynomial as a polynomial over K."""
    return [fmpq_poly([c]) for c in f.coeffs()]


def kpoly_compose_linear(g: fmpz_poly, a: fmpq_poly, b: fmpq, F: fmpq_poly) -> list:
    """``g(a + b*y)`` as a polynomial over K (``a`` in K, ``b`` rational)."""
    lin = [a % F, fmpq_poly([b])]
    acc: list = []
    for c in reversed(g.coeffs()):
        # acc = acc * lin + c
        out = [fmpq_poly([])] * (len(acc) + 1)
        for i, u in enumerate(acc):
            out[i] = (out[i] + u * lin[0]) % F
            out[i + 1] = out[i + 1] + u * lin[1]
        out[0] = out[0] + c
        acc = kpoly_trim(out)
    return acc
