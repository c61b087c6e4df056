"""The checker's exact kernel (checker/algebraic.py, checker/signs.py).

Reference values come from sympy (an independent library: its own root
isolation, resultants and radical arithmetic), from hand computation, or from
common-practice facts; each check names its source beside it.
"""
from __future__ import annotations

from fractions import Fraction

import pytest
import sympy
from flint import arb, fmpq, fmpz_poly
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from certformat.formula import poly_context
from checker.algebraic import (
    KernelError, RealAlgebraic, root_bound, check_isolating, compare, count_roots,
    ball, isolate_quadratic, real_roots, reduced, refine, squarefree_part, sturm_sequence,
)
from checker.signs import _eliminate, is_nullified, real_roots_at, sign_at

X = sympy.symbols("x0:3")
Y = sympy.Symbol("y")
CTX = poly_context(3)
x0, x1, x2 = CTX.gens()


def examples(n):
    """Hypothesis settings with n examples and no deadline (sympy references are slow)."""
    return settings(max_examples=n, deadline=None, suppress_health_check=[HealthCheck.too_slow])


# --------------------------------------------------------------------------
# Helpers: one dictionary of terms, built as a flint and as a sympy polynomial.

def ra(coeffs, low, high) -> RealAlgebraic:
    """A RealAlgebraic from integer coefficients (constant first) and rational bounds."""
    return RealAlgebraic(fmpz_poly(coeffs), fmpq(*Fraction(low).as_integer_ratio()),
                         fmpq(*Fraction(high).as_integer_ratio()))


# The algebraic numbers used as coordinates, with their sympy values.
SQRT2 = (ra([-2, 0, 1], 1, 2), sympy.sqrt(2))
MINUS_SQRT2 = (ra([-2, 0, 1], -2, -1), -sympy.sqrt(2))
CBRT3 = (ra([-3, 0, 0, 1], 1, 2), sympy.cbrt(3))
PHI = (ra([-1, -1, 1], 1, 2), (1 + sympy.sqrt(5)) / 2)          # golden ratio: x^2 - x - 1 (common-practice fact)
# Non-minimal definitions of the same numbers: (x^2-2)^2 (x+1) and 2x^3 - 6 (x^3 - 3 times 2).
SQRT2_SQUARED_DEF = (RealAlgebraic(fmpz_poly([-2, 0, 1]) ** 2 * fmpz_poly([1, 1]), fmpq(1), fmpq(3, 2)), sympy.sqrt(2))
CBRT3_SCALED_DEF = (ra([-6, 0, 0, 2], 0, 5), sympy.cbrt(3))
HALF = (RealAlgebraic.rational(Fraction(1, 2)), sympy.Rational(1, 2))
MINUS_THREE = (RealAlgebraic.rational(-3), sympy.Integer(-3))
TWO_AS_ROOT = (ra([-4, 0, 1], 1, 3), sympy.Integer(2))           # 2 given as the root of x^2 - 4 in (1, 3)
COORDS = [SQRT2, MINUS_SQRT2, CBRT3, PHI, SQRT2_SQUARED_DEF, CBRT3_SCALED_DEF, HALF, MINUS_THREE, TWO_AS_ROOT]
RADICAL = [SQRT2, MINUS_SQRT2, CBRT3, PHI, SQRT2_SQUARED_DEF, CBRT3_SCALED_DEF]


def terms_strategy(nvars, max_deg, max_terms=6, coeff=5):
    """Random polynomials as {exponent tuple: non-zero small integer}."""
    exps = st.tuples(*[st.integers(0, max_deg)] * nvars)
    return st.dictionaries(exps, st.integers(-coeff, coeff).filter(bool), min_size=1, max_size=max_terms)


def to_flint(terms: dict) -> object:
    return CTX.from_dict({tuple(e) + (0,) * (3 - len(e)): c for e, c in terms.items()})


def to_sympy(terms: dict) -> sympy.Expr:
    return sympy.Add(*[c * sympy.Mul(*[X[i] ** k for i, k in enumerate(e)]) for e, c in terms.items()])


def sympy_sign(value: sympy.Expr) -> int:
    """Exact zero by sympy's radical arithmetic (expand is canonical in a basis of the field), else sign at 60 digits."""
    value = sympy.expand(value)
    if value == 0:
        return 0
    approx = sympy.N(value, 60)
    assert abs(approx) > sympy.Float("1e-40")    # a non-zero algebraic value of small height is far from 0
    return 1 if approx > 0 else -1


def contains(a: RealAlgebraic, value: sympy.Expr) -> bool:
    """Whether the 50-digit sympy value lies in a's interval refined to width 2^-150 (with 1e-40 slack)."""
    r = refine(a, fmpq(1, 2 ** 150))
    v = sympy.Rational(str(sympy.N(value, 50)))
    slack = sympy.Rational(1, 10 ** 40)
    return sympy.Rational(str(r.low)) - slack <= v <= sympy.Rational(str(r.high)) + slack


# --------------------------------------------------------------------------
# Worked examples.

def test_sturm_sequence_worked_example():
    # worked by hand (long division) and identical to sympy.sturm(x**3 - x): x^3-x, 3x^2-1, 2x/3, 1;
    # the checker scales each remainder by a positive rational to a primitive integer
    # polynomial (2x/3 -> x), which keeps every sign and so every count
    seq = sturm_sequence(squarefree_part(fmpz_poly([0, -1, 0, 1])))
    assert [list(map(Fraction, map(str, s.coeffs()))) for s in seq] == [
        [0, -1, 0, 1], [-1, 0, 3], [0, 1], [1]]
    # roots -1, 0, 1 (x^3 - x = x(x-1)(x+1), common-practice fact)
    assert count_roots(seq, fmpq(-2), fmpq(2)) == 3
    assert count_roots(seq, fmpq(-1, 2), fmpq(1, 2)) == 1
    assert count_roots(seq, fmpq(1, 2), fmpq(3, 4)) == 0


def test_root_bound_worked_example():
    # Fujiwara's bound rounded up to a power of two, by hand: 2x^2 - 6x + 1: |-6/2| = 3 < 2^2,
    # |1/2|^(1/2) < 2^0, so 2^(1+2) = 8 (the roots are (3 ± sqrt 7)/2, below 2.83; arithmetic)
    assert root_bound(fmpz_poly([1, -6, 2])) == 8
    # x^3 - 1000: 1000^(1/3) = 10 < 2^4 (|1000| < 2^10, ceil(11/3) = 4), so 2^5 = 32 > 10
    assert root_bound(fmpz_poly([-1000, 0, 0, 1])) == 32


@pytest.mark.parametrize("coeffs", [[-2, 0, 0, 1], [-31250000000000, 3750000000, -225000, 9],
                                    [1, -5, 0, 0, 0, 1], [-1, 1, 1, 0, 0, 0, 0, 1]])
def test_isolation_agrees_with_sympy(coeffs):
    # sympy's real_roots as the reference library: same count, each inside its interval, increasing
    import sympy
    found = real_roots(fmpz_poly(coeffs))
    z = sympy.Symbol("z")
    ref = sympy.Poly(list(reversed(coeffs)), z).real_roots()
    assert len(found) == len(ref)
    for r, expected in zip(found, ref):
        assert sympy.Rational(int(r.low.p), int(r.low.q)) < expected < sympy.Rational(int(r.high.p), int(r.high.q))
        assert root_bound(r.poly) > abs(sympy.N(expected, 30))


def test_sqrt2_against_convergent():
    # arithmetic: 99^2 = 9801 > 2*70^2 = 9800, so 99/70 > sqrt 2; 41^2 = 1681 < 2*29^2 = 1682
    s2 = SQRT2[0]
    assert sign_at(70 * x0 - 99, [s2]) == -1
    assert sign_at(29 * x0 - 41, [s2]) == 1
    assert compare(s2, RealAlgebraic.rational(Fraction(99, 70))) == -1
    assert compare(s2, RealAlgebraic.rational(Fraction(41, 29))) == 1


def test_tiny_nonzero_values_are_not_called_zero():
    """Values far below the first filter precision: the root-gap rule must not decide zero."""
    # convergents P/Q of sqrt 2 (P + Q sqrt2 = (1 + sqrt2)^n) satisfy P^2 - 2Q^2 = ±1 (Pell, common-practice
    # fact); Q sqrt2 - P = (2Q^2 - P^2) / (Q sqrt2 + P), so its sign is that of the integer 2Q^2 - P^2
    P, Q = 1, 1
    for _ in range(120):
        P, Q = P + 2 * Q, P + Q
        assert sign_at(Q * x0 - P, [SQRT2[0]]) == (1 if 2 * Q * Q > P * P else -1)   # exact integers
    # a rational P/Q within 2^-300 of sqrt2 * cbrt3: the sign of xy - P/Q is that of 72 Q^6 - P^6
    Q = 2 ** 300
    P = int(sympy.floor(sympy.sqrt(2) * sympy.cbrt(3) * Q))          # sympy as reference library
    for p_ in (P, P + 1):
        expected = 1 if 72 * Q ** 6 > p_ ** 6 else -1                  # exact integers
        assert sign_at(Q * x0 * x1 - p_, [SQRT2[0], CBRT3[0]]) == expected


@pytest.mark.parametrize("a,b,c", [(1, 0, -1), (1, 2, 1), (1, 0, 1), (3, -7, 2), (2, 2, 5), (4, -4, 1)])
def test_quadratic_roots_follow_discriminant(a, b, c):
    # common-practice fact: a x^2 + b x + c has 2, 1, 0 distinct real roots as b^2 - 4ac is >, =, < 0
    disc = b * b - 4 * a * c
    assert sympy.discriminant(a * Y ** 2 + b * Y + c, Y) == disc     # sympy as reference library
    expected = 2 if disc > 0 else 1 if disc == 0 else 0
    assert len(real_roots(fmpz_poly([c, b, a]))) == expected
    assert len(real_roots_at(a * x1 ** 2 + b * x1 + c, [RealAlgebraic.rational(7)])) == expected


@settings(max_examples=300, deadline=None)
@given(st.integers(-50, 50).filter(bool), st.integers(-10**6, 10**6), st.integers(-10**6, 10**6))
def test_closed_form_quadratic_isolation_matches_sympy(a, b, c):
    # sympy as reference library: the real roots of an irreducible quadratic, each strictly
    # inside exactly one of the closed-form intervals, which are disjoint and hold no other root
    g = fmpz_poly([c, b, a])
    assume(len(g.factor()[1]) == 1 and g.factor()[1][0][1] == 1 and g.content() == 1)
    found = isolate_quadratic(g)
    expected = sorted(sympy.Poly([a, b, c], Y).real_roots())
    assert len(found) == len(expected)
    for r, e in zip(found, expected):
        assert sympy.Rational(r.low.p, r.low.q) < e < sympy.Rational(r.high.p, r.high.q)
        check_isolating(r)                                    # one root by Sturm's theorem too
    if found:
        assert found[0].high <= found[1].low


def test_equality_of_roots_with_overlapping_intervals():
    # g = z^3 - 3z + 1 is irreducible with three real roots near -1.879, 0.347, 1.532 (values
    # recalled from memory, checked against sympy below); equality must hold exactly when the
    # intersection of two isolating intervals holds a root
    g = fmpz_poly([1, -3, 0, 1])
    roots = [float(sympy.N(r)) for r in sympy.Poly([1, 0, -3, 1], Y).real_roots()]
    assert [round(r, 3) for r in roots] == [-1.879, 0.347, 1.532]       # sympy as reference library
    a = RealAlgebraic(g, fmpq(1), fmpq(2), minimal=True)                # the root 1.532
    b = RealAlgebraic(g, fmpq(3, 2), fmpq(3), minimal=True)             # the same root
    c = RealAlgebraic(g, fmpq(0), fmpq(1, 2), minimal=True)             # the root 0.347
    d = RealAlgebraic(g, fmpq(-2), fmpq(1), minimal=True)               # not isolating: 2 roots
    assert compare(a, b) == 0 and compare(b, a) == 0
    assert compare(c, a) == -1 and compare(a, c) == 1
    with pytest.raises(KernelError):
        check_isolating(d)
    e = RealAlgebraic(g, fmpq(1, 3), fmpq(3, 2), minimal=True)          # 0.347 again; overlaps a
    assert compare(e, a) == -1 and compare(e, c) == 0


def test_golden_ratio_and_its_conjugate():
    # common-practice fact: x^2 - x - 1 has roots (1 ± sqrt 5)/2; phi^2 = phi + 1; phi * (1 - phi) = -1
    low, high = real_roots(fmpz_poly([-1, -1, 1]))
    assert compare(high, PHI[0]) == 0
    assert sign_at(x0 ** 2 - x0 - 1, [PHI[0]]) == 0
    assert sign_at(x0 * x1 + 1, [high, low]) == 0


def test_exact_zero_at_sqrt2_cbrt3():
    # by construction: (x^2 - 2) r + (y^3 - 3) s vanishes at (sqrt 2, cbrt 3)
    p = (x0 ** 2 - 2) * (x0 * x1 + 3 * x1 ** 2 - 1) + (x1 ** 3 - 3) * (x0 ** 3 - x1 + 7)
    point = [SQRT2[0], CBRT3[0]]
    assert sign_at(p, point) == 0
    assert sign_at(p + 1, point) == 1 and sign_at(p - 1, point) == -1
    # (sqrt 2)^6 = 8 and (cbrt 3)^6 = 9 (common-practice fact), so x^6 - y^6 + 1 = 0 there
    assert sign_at(x0 ** 6 - x1 ** 6 + 1, point) == 0
    # (x - y)^2 at (sqrt 2, sqrt 2) given by two different definitions
    assert sign_at((x0 - x1) ** 2, [SQRT2[0], SQRT2_SQUARED_DEF[0]]) == 0


def test_exact_zero_in_three_algebraic_coordinates():
    # by construction: x*y*z - sqrt2*cbrt3*phi written through the defining relations
    point = [SQRT2[0], CBRT3[0], PHI[0]]
    p = (x0 * x1 * x2) ** 6 - 8 * 9 * (x2 ** 2) ** 3     # (xyz)^6 = 8*9*phi^6
    assert sign_at(p, point) == 0
    # phi^6 = 8 phi + 5 (Fibonacci identity phi^n = F(n) phi + F(n-1), common-practice fact)
    assert sign_at(x2 ** 6 - 8 * x2 - 5, point) == 0
    assert sign_at(x2 ** 6 - 8 * x2 - 5 + x0 * x1 - x1 * x0, point) == 0


def test_roots_over_sqrt2_worked_example():
    # by construction: at x = sqrt 2, (y^2 - x)(y - x - 1)(y + 5) has roots -5, ±2^(1/4), 1 + sqrt 2
    p = (x1 ** 2 - x0) * (x1 - x0 - 1) * (x1 + 5)
    roots = real_roots_at(p, [SQRT2[0]])
    expected = [-5, -sympy.root(2, 4), sympy.root(2, 4), 1 + sympy.sqrt(2)]
    assert len(roots) == 4
    assert all(contains(r, e) for r, e in zip(roots, expected))
    assert reduced(roots[0]).is_rational() and reduced(roots[0]).low == -5   # a rational value, isolated or a point


def test_roots_over_two_algebraic_coordinates():
    # sympy as reference library: real roots over Q(sqrt 2, cbrt 3)
    p = x2 ** 3 - x0 * x1 * x2 + 1
    expected = sympy.real_roots(sympy.Poly(Y ** 3 - sympy.sqrt(2) * sympy.cbrt(3) * Y + 1, Y, extension=True))
    roots = real_roots_at(p, [SQRT2[0], CBRT3[0]])
    assert len(roots) == len(expected) == 3
    assert all(contains(r, e) for r, e in zip(roots, expected))
    # by construction: z^2 = sqrt2 * cbrt3 has roots ±(sqrt2 cbrt3)^(1/2)
    roots = real_roots_at(x2 ** 2 - x0 * x1, [SQRT2[0], CBRT3[0]])
    value = sympy.sqrt(sympy.sqrt(2) * sympy.cbrt(3))
    assert len(roots) == 2 and contains(roots[0], -value) and contains(roots[1], value)
    assert sign_at(x2 ** 4 - 2 * x1 ** 2, [SQRT2[0], CBRT3[0], roots[1]]) == 0   # z^4 = 2 cbrt3^2


def test_degenerate_norm_is_handled():
    # at (sqrt 2, -sqrt 2) the conjugate tuple (sqrt 2, sqrt 2) nullifies (x0 - x1) x2,
    # so the plain norm is identically zero; the root is x2 = 0 (by inspection: 2 sqrt2 x2 = 0)
    point = [SQRT2[0], MINUS_SQRT2[0]]
    assert not is_nullified((x0 - x1) * x2, point)
    roots = real_roots_at((x0 - x1) * x2, point)
    assert len(roots) == 1 and reduced(roots[0]).is_rational() and reduced(roots[0]).low == 0
    # (x0 - x1)(x2^2 - x0): roots ±2^(1/4) (by inspection)
    roots = real_roots_at((x0 - x1) * (x2 ** 2 - x0), point)
    assert len(roots) == 2 and contains(roots[1], sympy.root(2, 4))


def test_nullified():
    # by construction: every coefficient in x1 is a multiple of x0^2 - 2
    p = (x0 ** 2 - 2) * (x1 ** 3 + x0 * x1 - 4)
    assert is_nullified(p, [SQRT2[0]])
    assert not is_nullified(p, [CBRT3[0]])
    with pytest.raises(KernelError):
        real_roots_at(p, [SQRT2[0]])
    with pytest.raises(KernelError):
        real_roots_at(x0 - x1 + x1, [RealAlgebraic.rational(0)])


def test_variable_discipline():
    with pytest.raises(KernelError):
        sign_at(x0 + x1, [SQRT2[0]])                  # involves x1 with only x0 given
    with pytest.raises(KernelError):
        real_roots_at(x0 + x1 * x2, [SQRT2[0]])        # involves x2 beyond x_k = x1
    assert real_roots_at(x0 - 1, [SQRT2[0]]) == []     # free of x1, non-zero there: no roots


def test_refinement_is_rigorous_and_tight():
    from flint import ctx
    for prec in (10, 53, 100, 300, 2000):
        r = refine(SQRT2_SQUARED_DEF[0], fmpq(1, 2 ** prec))
        assert r.high - r.low <= fmpq(1, 2 ** prec)
        assert r.low ** 2 < 2 < r.high ** 2      # exact: low < sqrt 2 < high
        with ctx.workprec(prec + 64):
            assert ball(r).overlaps(arb(2).sqrt())     # python-flint's own arb square root as reference
    assert refine(HALF[0], fmpq(1, 2 ** 20)) == HALF[0]


# --------------------------------------------------------------------------
# Adversarial: check_isolating rejects every malformed claim.

@pytest.mark.parametrize("number,why", [
    (ra([-2, 0, 1], -2, 2), "two roots"),
    (ra([-2, 0, 1], 2, 3), "no root"),
    (ra([-4, 0, 1], 2, 3), "root at the lower end"),
    (ra([-4, 0, 1], 1, 2), "root at the upper end"),
    (ra([-2, 0, 1], 2, 1), "low > high"),
    (ra([5], 1, 2), "degree 0"),
    (ra([0], 1, 2), "zero polynomial"),
    (ra([-2, 0, 1], Fraction(3, 2), Fraction(3, 2)), "rational that is not a root"),
    (RealAlgebraic(fmpz_poly([-2, 0, 1]) ** 2, fmpq(-2), fmpq(2)), "two double roots"),
    (RealAlgebraic(fmpz_poly([-2, 0, 1]) ** 2, fmpq(2), fmpq(3)), "squared, no root"),
])
def test_check_isolating_rejects(number, why):
    with pytest.raises(KernelError):
        check_isolating(number)
    with pytest.raises(KernelError):
        sign_at(x0, [number])


def test_check_isolating_accepts():
    for number, _ in COORDS:
        check_isolating(number)
    check_isolating(RealAlgebraic(fmpz_poly([-2, 0, 1]) ** 3, fmpq(-2), fmpq(0)))   # triple root -sqrt 2


def test_constructor_types():
    with pytest.raises(TypeError):
        RealAlgebraic(fmpz_poly([1, 1]), 0, 1)
    assert RealAlgebraic.rational(Fraction(-3, 4)) == RealAlgebraic(fmpz_poly([3, 4]), fmpq(-3, 4), fmpq(-3, 4))
    assert RealAlgebraic.rational(5).poly == fmpz_poly([-5, 1])


# --------------------------------------------------------------------------
# Property tests against sympy.

small_factor = st.lists(st.integers(-6, 6), min_size=2, max_size=4).filter(lambda c: c[-1] != 0)


@examples(250)
@given(terms_strategy(3, 3, 6, 9), st.lists(st.fractions(-5, 5, max_denominator=7), min_size=3, max_size=3))
def test_sign_at_rational_points_matches_fractions(terms, values):
    """Rational points: exact evaluation with Python's fractions module as reference."""
    value = sum(c * values[0] ** e[0] * values[1] ** e[1] * values[2] ** e[2] for e, c in terms.items())
    point = [RealAlgebraic.rational(v) for v in values]
    assert sign_at(to_flint(terms), point) == (value > 0) - (value < 0)


@pytest.mark.parametrize("coeffs", [
    [0, -1, 0, 1],                      # x^3 - x: the first split point, 0, is a root
    [0, 6, -5, -2, 1],                  # x (x - 3)(x^2 + x - 2) = x (x - 3)(x - 1)(x + 2)
    [0, 0, 0, -1, 0, 1],                # x^3 (x^2 - 1): squarefree part x^3 - x
    [12, -4, -3, 1],                    # (x^2 - 4)(x - 3)
], ids=["x^3-x", "four rational roots", "multiple root at a split point", "(x^2-4)(x-3)"])
def test_isolation_splits_beside_rational_roots(coeffs):
    """Isolation of the squarefree part (SOUNDNESS ROOTS): a split point that is a root is moved, so every
    interval isolates one root with no root at its ends; values checked against sympy (reference library)."""
    f = fmpz_poly(coeffs)
    expected = sorted(set(sympy.real_roots(sympy.Poly(list(reversed(f.coeffs())), Y))), key=float)
    ours = real_roots(f)
    assert len(ours) == len(expected)
    for r, e in zip(ours, expected):
        check_isolating(r)                          # Sturm: one root inside, none at the ends
        assert contains(r, e)
        assert compare(r, RealAlgebraic.rational(Fraction(int(e.p), int(e.q)))) == 0


def test_equality_of_isolating_numbers_by_gcd():
    """Two isolating numbers of different, reducible polynomials are equal iff their gcd changes sign across
    the common part of their intervals (SOUNDNESS COMPARE); sqrt 2 = 1.41421356... (common-practice fact)."""
    sqrt2_cubic = RealAlgebraic(fmpz_poly([-2, 0, 1]) * fmpz_poly([-7, 1]), fmpq(1), fmpq(2), isolating=True)
    sqrt2_quartic = RealAlgebraic(fmpz_poly([-2, 0, 1]) * fmpz_poly([1, 0, 1]), fmpq(5, 4), fmpq(3), isolating=True)
    root7 = RealAlgebraic(fmpz_poly([-2, 0, 1]) * fmpz_poly([-7, 1]), fmpq(3), fmpq(8), isolating=True)
    assert compare(sqrt2_cubic, sqrt2_quartic) == 0
    assert compare(sqrt2_cubic, root7) == -1 and compare(root7, sqrt2_quartic) == 1
    assert compare(root7, RealAlgebraic.rational(7)) == 0     # a rational value inside an interval
    assert compare(sqrt2_cubic, RealAlgebraic.rational(Fraction(141421, 100000))) == 1


def test_reduced_picks_the_factor_that_changes_sign():
    """NUMBER's minimal form: after the Sturm check, the factor holding the root changes sign across the interval."""
    a = reduced(RealAlgebraic(fmpz_poly([-2, 0, 1]) * fmpz_poly([-3, 0, 1]), fmpq(3, 2), fmpq(2)))   # sqrt 3
    assert a.poly == fmpz_poly([-3, 0, 1]) and a.minimal
    assert reduced(RealAlgebraic(fmpz_poly([-2, 0, 1]) * fmpz_poly([-5, 2]), fmpq(2), fmpq(3))).low == fmpq(5, 2)


@examples(200)
@given(st.lists(st.tuples(small_factor, st.integers(1, 3)), min_size=1, max_size=3))
def test_real_roots_match_sympy(factors):
    """Distinct real roots, in order, of products of random factors with multiplicities."""
    f = fmpz_poly([1])
    for coeffs, mult in factors:
        f *= fmpz_poly(coeffs) ** mult
    expected = sorted(set(sympy.real_roots(sympy.Poly(list(reversed(f.coeffs())), Y))),
                      key=lambda r: sympy.N(r, 50))                               # sympy as reference library
    ours = real_roots(f)
    assert len(ours) == len(expected)
    for r, e in zip(ours, expected):
        check_isolating(r)
        assert contains(r, e)
        if e.is_Rational:
            assert reduced(r).is_rational() and Fraction(str(reduced(r).low)) == Fraction(int(e.p), int(e.q))
    for a, b in zip(ours, ours[1:]):
        assert compare(a, b) == -1 and compare(b, a) == 1 and compare(a, a) == 0


@examples(150)
@given(st.lists(st.integers(-9, 9), min_size=2, max_size=7).filter(lambda c: c[-1] != 0),
       st.fractions(-10, 10, max_denominator=8), st.fractions(-10, 10, max_denominator=8))
def test_sturm_count_matches_sympy(coeffs, a, b):
    p = sympy.Poly(list(reversed(coeffs)), Y)
    assume(a < b and p.eval(a) != 0 and p.eval(b) != 0)
    s = squarefree_part(fmpz_poly(coeffs))
    n = count_roots(sturm_sequence(s), fmpq(a.numerator, a.denominator), fmpq(b.numerator, b.denominator))
    assert n == p.count_roots(a, b)                                           # sympy as reference library


@examples(250)
@given(st.lists(st.integers(-9, 9), min_size=2, max_size=6).filter(lambda c: c[-1] != 0))
def test_sturm_sequence_matches_sympy(coeffs):
    as_sympy = lambda f: sympy.Poly([sympy.Rational(str(c)) for c in reversed(f.coeffs())], Y)
    part = as_sympy(squarefree_part(fmpz_poly(coeffs)))
    reference = sympy.sqf_part(sympy.Poly(list(reversed(coeffs)), Y))         # sympy as reference library
    assert sympy.expand(part.as_expr() - part.LC() / reference.LC() * reference.as_expr()) == 0
    monic = squarefree_part(fmpz_poly(coeffs))
    monic = monic / monic.leading_coefficient()
    ours = [as_sympy(s) for s in sturm_sequence(monic)]
    theirs = sympy.sturm(part)                           # sympy as reference library (it makes p monic)
    assert len(ours) == len(theirs)
    for o, t in zip(ours, theirs):   # equal up to a positive factor
        ratio = o.LC() / t.LC()
        assert ratio > 0 and sympy.expand(o.as_expr() - ratio * t.as_expr()) == 0


@examples(350)
@given(terms_strategy(2, 3), st.sampled_from(COORDS), st.sampled_from(COORDS))
def test_sign_at_matches_sympy(terms, c0, c1):
    p = to_flint(terms)
    value = to_sympy(terms).subs({X[0]: c0[1], X[1]: c1[1]})
    assert sign_at(p, [c0[0], c1[0]]) == sympy_sign(value)                   # sympy as reference library


@examples(150)
@given(terms_strategy(2, 2, 4, 3), terms_strategy(2, 2, 4, 3), st.integers(-2, 2),
       st.sampled_from(RADICAL), st.sampled_from(RADICAL))
def test_sign_at_constructed_zeros(r, s, shift, c0, c1):
    """p = d0(x0) r + d1(x1) s + shift, d_i the minimal polynomial of coordinate i: its value is shift."""
    d0, d1 = (sympy.minimal_polynomial(c[1], Y) for c in (c0, c1))           # sympy as reference library
    poly = lambda d, x: sum(int(d.coeff(Y, j)) * x ** j for j in range(sympy.degree(d, Y) + 1))
    p = poly(d0, x0) * to_flint(r) + poly(d1, x1) * to_flint(s) + shift
    assert sign_at(p, [c0[0], c1[0]]) == (shift > 0) - (shift < 0)             # by construction


@examples(150)
@given(terms_strategy(3, 2, 5, 4), st.sampled_from(COORDS), st.sampled_from(RADICAL), st.sampled_from(RADICAL))
def test_sign_at_three_coordinates_matches_sympy(terms, c0, c1, c2):
    p = to_flint(terms)
    value = to_sympy(terms).subs({X[0]: c0[1], X[1]: c1[1], X[2]: c2[1]})
    assert sign_at(p, [c0[0], c1[0], c2[0]]) == sympy_sign(value)            # sympy as reference library


@examples(120)
@given(terms_strategy(2, 2, 4, 3), terms_strategy(2, 2, 4, 3), st.sampled_from(RADICAL), st.sampled_from(RADICAL))
def test_sign_of_squares_and_differences(u, v, c0, c1):
    """(u - v)^2 with u, v equal at the point by construction (the defining relation of coordinate 0 added)."""
    d0 = sympy.minimal_polynomial(c0[1], Y)                                    # sympy as reference library
    d0 = sum(int(d0.coeff(Y, j)) * x0 ** j for j in range(sympy.degree(d0, Y) + 1))
    U, V = to_flint(u), to_flint(v)
    point = [c0[0], c1[0]]
    assert sign_at((U - (U + d0 * V)) ** 2, point) == 0                       # by construction
    expected = sympy_sign(((to_sympy(u) - to_sympy(v)) ** 2).subs({X[0]: c0[1], X[1]: c1[1]}))
    assert sign_at((U - V) ** 2, point) == expected                           # sympy as reference library


@examples(50)
@given(terms_strategy(2, 3, 6, 4), st.sampled_from([SQRT2, MINUS_SQRT2, SQRT2_SQUARED_DEF, PHI]))
def test_roots_over_quadratic_irrational_match_sympy(terms, coord):
    """Roots of p(a, y), a = s + t sqrt(c): reference from sympy's real roots of A^2 - c B^2 in Q[y],
    where p(a, y) = A(y) + sqrt(c) B(y); a real root of the norm is a root of p(a, y) iff
    A and B have opposite signs there or both vanish (since A = ±sqrt(c) B)."""
    p = to_flint(terms)
    assume(not is_nullified(p, [coord[0]]))
    e = sympy.expand(to_sympy(terms).subs({X[0]: coord[1], X[1]: Y}))
    c = 2 if coord[1].has(sympy.sqrt(2)) else 5
    A = sympy.Poly(e.subs(sympy.sqrt(c), 0), Y)
    B = sympy.Poly(sympy.expand((e - A.as_expr()) / sympy.sqrt(c)), Y)
    norm = A ** 2 - c * B ** 2
    expected = []
    for rho in sorted(set(sympy.real_roots(sympy.sqf_part(norm))), key=lambda r: sympy.N(r, 50)):
        sa, sb = (sympy_sign_at_root(P, rho) for P in (A, B))
        if sa == -sb:
            expected.append(rho)                                               # sympy as reference library
    ours = real_roots_at(p, [coord[0]])
    assert len(ours) == len(expected)
    assert all(contains(r, e) for r, e in zip(ours, expected))


def sympy_sign_at_root(P: sympy.Poly, rho) -> int:
    """Sign of the rational polynomial P at a sympy real root: zero iff the minimal polynomial divides P."""
    if P.is_zero:
        return 0
    m = sympy.Poly(sympy.minimal_polynomial(rho, Y), Y)
    if P.rem(m).is_zero:
        return 0
    return 1 if sympy.N(P.as_expr().subs(Y, rho), 50) > 0 else -1


@examples(20)
@given(terms_strategy(2, 2, 5, 3), st.sampled_from([CBRT3, PHI, MINUS_SQRT2]))
def test_roots_over_algebraic_match_sympy_extension(terms, coord):
    """Roots of p(a, y) against sympy's real roots over the algebraic field Q(a)."""
    p = to_flint(terms)
    e = sympy.expand(to_sympy(terms).subs({X[0]: coord[1], X[1]: Y}))
    assume(e.has(Y))
    P = sympy.Poly(e, Y, extension=True)
    expected = sympy.real_roots(P.sqf_part())                                   # sympy as reference library
    ours = real_roots_at(p, [coord[0]])
    assert len(ours) == len(expected)
    assert all(contains(r, e) for r, e in zip(ours, expected))


@examples(60)
@given(terms_strategy(1, 4, 5, 6), st.sampled_from(RADICAL), st.sampled_from(COORDS))
def test_compare_matches_sympy(terms, c0, c1):
    """Compare a root of a random polynomial with the coordinates."""
    f = fmpz_poly([terms.get((j,), 0) for j in range(5)])
    assume(f.degree() >= 1)
    for r in real_roots(f):
        for c in (c0, c1):
            # equal iff f(c) = 0 exactly (sympy radical arithmetic) and c is in r's interval; else the
            # sign of the difference at 60 digits (sympy as reference library)
            f_at_c = sympy.expand(sum(int(a) * c[1] ** j for j, a in enumerate(f.coeffs())))
            if f_at_c == 0 and contains(r, c[1]):
                expected = 0
            else:
                expected = 1 if sympy.N(r_value(f, r) - c[1], 60) > 0 else -1
            assert compare(r, c[0]) == expected
            assert compare(c[0], r) == -expected


def r_value(f: fmpz_poly, r: RealAlgebraic) -> sympy.Expr:
    """The sympy real root of f in r's interval (sympy as reference library)."""
    for root in sympy.real_roots(sympy.Poly(list(reversed([int(c) for c in f.coeffs()])), Y)):
        if contains(r, root):
            return root
    raise AssertionError("no sympy root in the interval")


@examples(100)
@given(terms_strategy(2, 2, 4, 4), st.sampled_from(RADICAL), st.sampled_from(RADICAL))
def test_elimination_matches_sympy_resultant(terms, c0, c1):
    """R(z) = Res_x1(Res_x0(z - q, d0), d1) equals sympy's iterated resultant up to sign."""
    q = to_flint(terms)
    a0, a1 = reduced(c0[0]), reduced(c1[0])
    R, z = _eliminate(q, [a0, a1])
    Z = sympy.Symbol("z")
    d0 = sum(int(c) * X[0] ** j for j, c in enumerate(a0.poly.coeffs()))
    d1 = sum(int(c) * X[1] ** j for j, c in enumerate(a1.poly.coeffs()))
    expected = Z - to_sympy(terms)
    for var, d in ((X[0], d0), (X[1], d1)):
        if sympy.Poly(expected, var).degree() > 0:
            expected = sympy.resultant(expected, d, var)                         # sympy as reference library
    ours = sympy.Add(*[int(c) * Z ** e[z] * sympy.Mul(*[X[i] ** k for i, k in enumerate(e[:3])])
                       for e, c in R.terms()])
    assert sympy.expand(ours - expected) == 0 or sympy.expand(ours + expected) == 0


@examples(60)
@given(terms_strategy(2, 3, coeff=9),
       st.sampled_from([[-2, 0, 1], [-3, 0, 0, 1], [-1, -1, 1], [1, -3, 0, 1], [-5, 0, 2]]),
       st.sampled_from([[-2, 0, 1], [-3, 0, 0, 1], [2, 0, -3, 0, 1], [-7, 0, 3]]))
def test_zero_bound_is_below_every_nonzero_conjugate_value(terms, d0, d1):
    # the root-gap bound of SOUNDNESS.md (rule SIGN) against sympy as reference library: over
    # every tuple of complex roots (t0, t1) of the two defining polynomials, q(t0, t1) is either
    # zero or larger in modulus than the bound
    from checker.signs import zero_bound
    q = CTX.from_dict({e + (0,): c for e, c in terms.items()})
    assume(not q.is_constant())
    point = [RealAlgebraic(fmpz_poly(d0), fmpq(-10), fmpq(10), minimal=True),
             RealAlgebraic(fmpz_poly(d1), fmpq(-10), fmpq(10), minimal=True)]
    bound = zero_bound(q, point)
    Z = sympy.Symbol("z")
    roots0 = sympy.Poly(list(reversed(d0)), Z).all_roots()
    roots1 = sympy.Poly(list(reversed(d1)), Z).all_roots()
    expr = sum(c * X[0] ** e[0] * X[1] ** e[1] for e, c in terms.items())
    deg = q.degrees()
    for t0 in (roots0 if deg[0] else roots0[:1]):
        for t1 in (roots1 if deg[1] else roots1[:1]):
            value = sympy.N(expr.subs({X[0]: t0, X[1]: t1}), 60)
            if abs(value) > sympy.Float(10) ** -50:                     # numerically non-zero
                assert abs(value) > sympy.Rational(int(bound.p), int(bound.q))


# --------------------------------------------------------------------------
# Descartes isolation, Newton hints, and the rational fast path of AtSample.

def test_descartes_bound_worked_example():
    from checker.algebraic import descartes_bound
    # by hand: (1+x)^2 g(2x/(1+x)) for g = x^2 - 2 is 2x^2 - 4x - 2: one variation, one root (sqrt 2) in (0, 2);
    # on (-2, 2): (2x-2)^2 - 2(1+x)^2 = 2x^2 - 12x + 2: two variations (the roots -sqrt 2 and sqrt 2)
    g = fmpz_poly([-2, 0, 1])
    assert descartes_bound(g, fmpq(0), fmpq(2)) == 1
    assert descartes_bound(g, fmpq(-2), fmpq(2)) == 2
    assert descartes_bound(g, fmpq(2), fmpq(3)) == 0


def test_refinement_survives_a_cycling_newton_hint():
    # Newton's method for x^3 - 2x + 2 started at 0 cycles 0 -> 1 -> 0 (a textbook example of
    # non-convergence; common-practice fact); its one real root is about -1.7693 (sympy as reference)
    a = RealAlgebraic(fmpz_poly([2, -2, 0, 1]), fmpq(-2), fmpq(2))
    r = refine(a, fmpq(1, 2 ** 80))
    assert r.high - r.low <= fmpq(1, 2 ** 80)
    assert r.poly(r.low) * r.poly(r.high) < 0
    root = sympy.real_roots(sympy.Poly(Y ** 3 - 2 * Y + 2, Y))[0]
    assert contains(r, root)


@examples(150)
@given(terms_strategy(3, 3, 6, 9), st.lists(st.fractions(-5, 5, max_denominator=7), min_size=2, max_size=2))
def test_real_roots_at_rational_points_match_sympy(terms, values):
    """Roots of p(v0, v1, x2) at rational (v0, v1): sympy's real roots of the substituted polynomial."""
    p = to_flint(terms)
    point = [RealAlgebraic.rational(v) for v in values]
    expr = sympy.expand(to_sympy(terms).subs({X[0]: sympy.Rational(values[0].numerator, values[0].denominator),
                                              X[1]: sympy.Rational(values[1].numerator, values[1].denominator)}))
    if expr == 0:
        with pytest.raises(KernelError):
            real_roots_at(p, point)
        return
    expected = sorted(set(sympy.real_roots(sympy.Poly(expr, X[2]))), key=lambda r: sympy.N(r, 50)) \
        if expr.has(X[2]) else []
    ours = real_roots_at(p, point)
    assert len(ours) == len(expected) and all(contains(r, e) for r, e in zip(ours, expected))


@examples(120)
@given(terms_strategy(3, 3, 6, 9), st.lists(st.fractions(-4, 4, max_denominator=5), min_size=2, max_size=2),
       st.fractions(-4, 4, max_denominator=5))
def test_node_memo_at_rational_samples_agrees_with_the_kernel(terms, values, t):
    """cover.AtSample's substitution path gives what the kernel's general functions give."""
    from checker.cover import AtSample
    p = to_flint(terms)
    sample = tuple(RealAlgebraic.rational(v) for v in values)
    here = AtSample(sample, str)
    assert here.rational and here.nullified(p) == is_nullified(p, list(sample))
    if not here.nullified(p):
        assert [(r.low, r.high) for r in here.roots(p)] == [(r.low, r.high) for r in real_roots_at(p, list(sample))]
    point = RealAlgebraic.rational(t)
    assert here.sign_next(p, point) == sign_at(p, list(sample) + [point])
    c = CTX.from_dict({e[:2] + (0,): v for e, v in terms.items()})     # free of x2: a sign at the sample
    assert here.sign(c) == sign_at(c, list(sample))
    if any(e[2] for e in terms):
        with pytest.raises(KernelError):
            here.sign(p)



@examples(300)
@given(st.lists(st.integers(-50, 50), min_size=1, max_size=12), st.fractions(-9, 9, max_denominator=2 ** 70),
       st.booleans())
def test_sign_of_value_matches_exact_evaluation(coeffs, x, make_root):
    """The Arb filter never changes a sign: Python's fractions module as reference (zeros included)."""
    from checker.algebraic import sign_of_value
    g = fmpz_poly(coeffs)
    if make_root:                                   # force g(x) = 0 exactly
        g *= fmpz_poly([-x.numerator, x.denominator])
    value = sum(int(c) * x ** i for i, c in enumerate(g.coeffs()))
    assert sign_of_value(g, fmpq(x.numerator, x.denominator)) == (value > 0) - (value < 0)


@examples(120)
@given(terms_strategy(1, 7, 6, 9))
def test_node_memo_at_the_empty_sample_uses_known_factors(terms):
    """cover.AtSample at the empty sample: roots per known irreducible factor (SOUNDNESS ROOTS)
    equal the kernel's roots of the univariate polynomial, which it isolates on the squarefree part
    (and which test_real_roots_match_sympy checks against sympy)."""
    from checker.cover import AtSample
    from checker.polys import irreducible_factors
    p = to_flint(terms)
    known = {str(p): {str(g): g for g in irreducible_factors(p)}}
    here = AtSample((), str, known.get)
    u = fmpz_poly([terms.get((d,), 0) for d in range(max(e[0] for e in terms) + 1)])
    mine, theirs = here.roots(p), real_roots(u)
    assert len(mine) == len(theirs) and all(compare(a, b) == 0 for a, b in zip(mine, theirs))
