"""Real algebraic numbers for the prover's kernel (DESIGN §2, §8).

A :class:`RealAlg` is either a rational number, held exactly as an ``fmpq``,
or an irrational real root of an *irreducible* integer polynomial together
with an isolating open interval ``(low, high)`` with rational ends.  The form
is canonical and established once, at construction, as in CPython's
``fractions``:

* a rational ``r = p/q`` (``q > 0``, lowest terms) has ``value = r``,
  ``poly = q*x - p`` and ``low = high = r``;
* an irrational number has ``value = None``, ``poly`` irreducible of degree
  at least 2, primitive, with a positive leading coefficient, and exactly one
  root in ``(low, high)``; neither end is a root (an irreducible polynomial of
  degree >= 2 has no rational roots).

Because the defining polynomial is the (primitive) minimal polynomial, two
irrational numbers with different polynomials are different, which makes
comparison a matter of refining intervals until they are disjoint, and makes
``hash(poly)`` a hash consistent with equality.

Refinement keeps the interval isolating and only ever shrinks it (the object
is mutated, the number it denotes never changes):

* :meth:`RealAlg._bisect` halves the interval by an exact sign evaluation at
  the midpoint;
* :meth:`RealAlg._newton` applies one *interval Newton* step in arb ball
  arithmetic: with ``X`` the current interval and ``m`` its midpoint, the
  root lies in ``m - f(m)/f'(X)`` (mean value theorem) whenever ``f'(X)``
  excludes zero; intersecting with ``X`` gives a rigorous enclosure whose
  exact dyadic ends become the new interval.  Convergence is quadratic, so a
  few hundred bits cost a handful of steps.

Floating point only filters here: every ball is a rigorous enclosure, and a
sign is read from a ball only when the ball excludes zero.

The prover is not trusted (the checker re-verifies every claim), but a wrong
answer here would produce certificates that fail, so everything is exact.
"""
from __future__ import annotations

from fractions import Fraction
from functools import lru_cache

from flint import arb, ctx, fmpq, fmpq_poly, fmpz, fmpz_poly

__all__ = ["RealAlg", "irreducible_factors", "poly_key", "to_fmpq"]


def poly_key(f: fmpz_poly) -> tuple:
    """A hashable identity of a univariate integer polynomial (its coefficients)."""
    return tuple(f.coeffs())


def to_fmpq(q) -> fmpq:
    """An exact ``fmpq`` from an int, fmpz, fmpq or ``Fraction``."""
    if isinstance(q, fmpq):
        return q
    if isinstance(q, Fraction):
        return fmpq(q.numerator, q.denominator)
    if isinstance(q, (int, fmpz)):
        return fmpq(q)
    raise TypeError(f"not an exact rational: {q!r}")


def _sign(v) -> int:
    return (v > 0) - (v < 0)


def _canonical(f: fmpz_poly) -> fmpz_poly:
    """``f`` divided by its content, with a positive leading coefficient."""
    c = f.content()
    if c != 1:
        f = fmpz_poly([a // c for a in f.coeffs()])
    return -f if f.leading_coefficient() < 0 else f


@lru_cache(maxsize=4096)
def _factors_of_key(key: tuple) -> tuple:
    _, factors = fmpz_poly(list(key)).factor()
    return tuple(_canonical(f) for f, _ in factors if f.degree() > 0)


def irreducible_factors(f: fmpz_poly) -> tuple[fmpz_poly, ...]:
    """The distinct irreducible factors of positive degree of ``f``, canonical
    (primitive, positive leading coefficient), in flint's order.  Cached."""
    return _factors_of_key(poly_key(f))


def _arb_point_to_fmpq(x: arb) -> fmpq:
    """The exact value of an arb midpoint or radius (a dyadic number)."""
    man, exp = x.man_exp()
    man, exp = int(man), int(exp)
    return fmpq(man << exp) if exp >= 0 else fmpq(man, 1 << -exp)


def _ball_ends(b: arb) -> tuple[fmpq, fmpq]:
    """Exact rational ends ``(mid - rad, mid + rad)`` of an arb ball."""
    m = _arb_point_to_fmpq(b.mid())
    r = _arb_point_to_fmpq(b.rad())
    return m - r, m + r


def _log2_floor(q: fmpq) -> int:
    """An integer ``e`` with ``2**(e-1) < |q| < 2**(e+1)`` (``q`` non-zero)."""
    return int(abs(q.p).bit_length()) - int(q.q.bit_length())


def _round_dyadic(q: fmpq, e: int, direction: int) -> fmpq:
    """``q`` rounded down (direction -1) or up (+1) to a multiple of ``2**-e``."""
    scaled = q * (1 << e) if e >= 0 else q / (1 << -e)
    n = scaled.floor() if direction < 0 else scaled.ceil()
    return fmpq(n, 1 << e) if e >= 0 else fmpq(n * (1 << -e))


def _width_bits(q: fmpq) -> int:
    """Bits above the binary point of ``|q|``, at least 0."""
    return max(0, int(abs(q.p).bit_length()) - int(q.q.bit_length()) + 1)


class RealAlg:
    """A real algebraic number: rational (exact fmpq) or the unique root of an
    irreducible integer polynomial in an open isolating interval with rational
    ends (module docstring).  Build with :meth:`from_rational` or :meth:`root`.
    """

    __slots__ = ("poly", "low", "high", "value", "_sign_low", "_dpoly", "_hash", "_arbs", "_initial")

    # ------------------------------------------------------------------
    # Construction: the only places where the canonical form is established.

    @classmethod
    def from_rational(cls, q) -> "RealAlg":
        """The rational number ``q`` (int, fmpz, fmpq or Fraction)."""
        q = to_fmpq(q)
        self = object.__new__(cls)
        self.value = q
        self.poly = fmpz_poly([-q.p, q.q])
        self.low = self.high = q
        self._initial = (q, q)
        self._sign_low = 0
        self._dpoly = None
        self._hash = hash((-q.p, q.q))
        self._arbs = None
        return self

    @classmethod
    def root(cls, poly, low, high) -> "RealAlg":
        """The root of ``poly`` in the open interval ``(low, high)``.

        Precondition: ``poly`` is squarefree with exactly one root in
        ``(low, high)`` and none at the ends.  The sign change across the
        interval is checked (ValueError otherwise); the count is trusted.
        The polynomial is replaced by its irreducible factor that changes
        sign there (a rational root becomes a rational number).
        """
        if isinstance(poly, fmpq_poly):
            poly = poly.numer()
        elif not isinstance(poly, fmpz_poly):
            poly = fmpz_poly(poly)
        low, high = to_fmpq(low), to_fmpq(high)
        if not low < high:
            raise ValueError(f"empty interval ({low}, {high})")
        sl, sh = _sign(poly(low)), _sign(poly(high))
        if sl == 0 or sh == 0 or sl == sh:
            raise ValueError(f"{poly} has no sign change over ({low}, {high}) or a root at an end")
        for f in irreducible_factors(poly):
            a, b = _sign(f(low)), _sign(f(high))
            if a != b:
                if f.degree() == 1:
                    return cls.from_rational(fmpq(-f[0], f[1]))
                return cls._irreducible(f, low, high, a)
        raise AssertionError("a sign change of the product must come from a factor")

    @classmethod
    def _irreducible(cls, f: fmpz_poly, low: fmpq, high: fmpq, sign_low: int | None = None) -> "RealAlg":
        """Internal constructor: ``f`` canonical irreducible of degree >= 2 with
        exactly one root in ``(low, high)``; ``sign_low`` is the sign of f(low)."""
        self = object.__new__(cls)
        self.value = None
        self.poly = f
        self.low, self.high = low, high
        self._initial = (low, high)
        self._sign_low = sign_low if sign_low is not None else _sign(f(low))
        self._dpoly = f.derivative()
        self._hash = hash(poly_key(f))
        self._arbs = {}
        return self

    # ------------------------------------------------------------------

    @property
    def is_rational(self) -> bool:
        return self.value is not None

    @property
    def initial_interval(self) -> tuple[fmpq, fmpq]:
        """The isolating interval the number was constructed with.

        ``(low, high)`` shrink whenever anything compares or evaluates with the
        number, and the RealAlg objects returned by the cached isolation are
        shared, so the current interval depends on the history of the process.
        The initial interval does not: for roots from
        :func:`prover.roots.isolate_real_roots` it is a function of the defining
        polynomial alone.  Use it where output must be reproducible
        (certificates, witnesses).  For a rational it is ``(value, value)``.
        """
        return self._initial

    def __repr__(self) -> str:
        if self.value is not None:
            return f"RealAlg({self.value})"
        return f"RealAlg(root of {self.poly} in ({self.low}, {self.high}))"

    def to_float(self) -> float:
        """A float approximation, for display only."""
        if self.value is not None:
            return int(self.value.p) / int(self.value.q)
        return float(self.arb(60).mid())

    # ------------------------------------------------------------------
    # Refinement.

    def _bisect(self) -> None:
        """Halve the interval by the exact sign of ``poly`` at its midpoint."""
        m = (self.low + self.high) / 2
        s = _sign(self.poly(m))
        if s == 0:
            raise AssertionError(f"rational root {m} of irreducible {self.poly}")
        if s == self._sign_low:
            self.low = m
        else:
            self.high = m

    def _newton(self, prec: int) -> bool:
        """One interval Newton step at ``prec`` bits; True if it at least
        quartered the interval (module docstring)."""
        low, high = self.low, self.high
        with ctx.workprec(prec):
            x = arb(low).union(arb(high))
            d = self._dpoly(x)
            if not (d > 0 or d < 0):
                return False
            m = x.mid()
            n = m - self.poly(m) / d
            try:
                y = n.intersection(x)
            except ValueError:
                return False
        a, b = _ball_ends(y)
        if not (low <= a and b <= high and a < b):
            a, b = max(a, low), min(b, high)
        else:
            # Short dyadic ends: round outwards to a quarter of the new width.
            e = 2 - _log2_floor(b - a)
            a, b = max(_round_dyadic(a, e, -1), low), min(_round_dyadic(b, e, 1), high)
        if (b - a) * 4 > high - low:
            return False
        self.low, self.high = a, b
        return True

    def _tighten(self, width: fmpq) -> None:
        """Shrink the isolating interval to width at most ``width`` (> 0)."""
        if self.value is not None:
            return
        target_bits = -_log2_floor(width) + 2
        while self.high - self.low > width:
            w = self.high - self.low
            bits = min(2 * max(-_log2_floor(w), 1), target_bits) + 16
            mag = _width_bits(abs(self.low) + abs(self.high))
            if not self._newton(max(64, bits + mag + 8)):
                self._bisect()

    def refine(self, bits: int) -> "RealAlg":
        """Shrink the interval to width at most ``2**-bits``; returns self."""
        self._tighten(fmpq(1, 1 << bits) if bits >= 0 else fmpq(1 << -bits))
        return self

    def arb(self, prec: int = 64) -> arb:
        """A rigorous arb enclosure with about ``prec`` correct bits (relative
        to ``max(1, |value|)``), computed at working precision ``prec``."""
        if self.value is not None:
            with ctx.workprec(prec):
                return arb(self.value)
        ball = self._arbs.get(prec)
        if ball is None:
            mag = _width_bits(abs(self.low) + abs(self.high))
            self._tighten(fmpq(1 << mag, 1 << prec))
            with ctx.workprec(prec + 8):
                ball = arb(self.low).union(arb(self.high))
            self._arbs[prec] = ball
        return ball

    # ------------------------------------------------------------------
    # Exact comparison.

    def _compare_rational(self, q: fmpq) -> int:
        """Sign of ``self - q``; for an irrational self the interval is cut at
        ``q`` when ``q`` lies inside it."""
        if self.value is not None:
            return _sign(self.value - q)
        if q <= self.low:
            return 1
        if q >= self.high:
            return -1
        s = _sign(self.poly(q))
        if s == 0:
            raise AssertionError(f"rational root {q} of irreducible {self.poly}")
        if s == self._sign_low:
            self.low = q
            return 1
        self.high = q
        return -1

    def compare(self, other) -> int:
        """Sign of ``self - other`` (other a RealAlg or an exact rational), exact."""
        if self is other:
            return 0
        if not isinstance(other, RealAlg):
            return self._compare_rational(to_fmpq(other))
        if other.value is not None:
            return self._compare_rational(other.value)
        if self.value is not None:
            return -other._compare_rational(self.value)
        if self.poly == other.poly:
            lo, hi = max(self.low, other.low), min(self.high, other.high)
            if lo < hi:
                if _sign(self.poly(lo)) != _sign(self.poly(hi)):
                    return 0
                return -1 if self.low < other.low else 1
            return -1 if self.high <= other.low else 1
        # Distinct minimal polynomials: distinct numbers; refine until apart.
        bits = 4
        while True:
            if self.high <= other.low:
                return -1
            if other.high <= self.low:
                return 1
            width = max(self.high - self.low, other.high - other.low) / (1 << bits)
            self._tighten(width)
            other._tighten(width)
            bits = min(2 * bits, 1 << 16)

    def __eq__(self, other):
        if not isinstance(other, (RealAlg, int, fmpz, fmpq, Fraction)):
            return NotImplemented
        return self.compare(other) == 0

    def __ne__(self, other):
        if not isinstance(other, (RealAlg, int, fmpz, fmpq, Fraction)):
            return NotImplemented
        return self.compare(other) != 0

    def __lt__(self, other):
        return self.compare(other) < 0

    def __le__(self, other):
        return self.compare(other) <= 0

    def __gt__(self, other):
        return self.compare(other) > 0

    def __ge__(self, other):
        return self.compare(other) >= 0

    def __hash__(self):
        """Hash of the canonical defining polynomial: equal numbers have equal
        polynomials, conjugates merely collide.  (Not equal to hash of the
        rational as an int/fmpq: mixed-type dict keys are not supported.)"""
        return self._hash
