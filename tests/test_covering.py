"""The covering prover for conjunctions: answers, certificates, witnesses.

Problems are built directly from atoms (formula.make_atom).  Satisfiable ones
are planted: every atom is made true at a chosen point, so the answer must be
sat, and the model the prover returns is re-verified exactly with sympy (a
reference library outside the project).  Unsatisfiable ones are contradictory
by construction (a sum of squares below zero, disjoint discs, p > 0 ∧ q > 0 ∧
p + q < 0, …), so the answer must be unsat.  Every certificate is replayed by
the checker, and the declared sets are compared with what the checker
computes each node passes up.
"""
import hashlib
from fractions import Fraction

import pytest
import sympy as sp
from flint import fmpq, fmpz_poly
from hypothesis import assume, given, settings, strategies as st

from certformat.certio import read_certificate
from certformat.formula import Assertion, Atom, Problem, make_atom, poly_context
from checker.check import check
from prover.characterize import PolyStore, irreducible_factors
from prover.covering import Bound, Covering, Interval, Literal, Model, Node, between, prune
from prover.numbers import RealAlg
from prover.order import choose_order, to_certificate_order, to_problem_order
from prover.roots import isolate_real_roots, sample_between
from prover.solve import prove

NAMES = ("x", "y", "z", "w")


# ------------------------------------------------------------------ helpers

def problem_of(atoms, nvars: int, extra=()) -> Problem:
    """A problem asserting each atom (make_atom results) in turn."""
    assertions = []
    for k, a in enumerate(atoms, 1):
        assertions.append(Assertion(a, k, str(a)))
    assertions += list(extra)
    digest = hashlib.sha256(repr([(str(a.formula)) for a in assertions]).encode()).hexdigest()
    return Problem("<test>", digest, NAMES[:nvars], assertions)


def atom(text: str, rel: str, nvars: int = 2):
    """make_atom of a polynomial written with x, y, z, w."""
    ctx = poly_context(nvars)
    gens = dict(zip(NAMES, ctx.gens()))
    return make_atom(eval(text, {}, gens) + ctx.constant(0), rel)


def sympy_poly(p, nvars):
    syms = sp.symbols(NAMES[:nvars])
    return sp.Add(*[int(c) * sp.Mul(*[s ** int(e) for s, e in zip(syms, exps)])
                    for exps, c in p.to_dict().items()]), syms


def sympy_number(a: RealAlg):
    """The exact sympy number of a RealAlg (CRootOf indexed by a Sturm count in sympy)."""
    if a.is_rational:
        return sp.Rational(int(a.value.p), int(a.value.q))
    x = sp.Symbol("t")
    f = sp.Poly([int(c) for c in reversed(a.poly.coeffs())], x)
    below = f.count_roots(-sp.oo, sp.Rational(int(a.low.p), int(a.low.q)))
    return sp.CRootOf(f.as_expr(), below)


def sympy_sign(value) -> int:
    """Exact zero test by minimal polynomial; the sign of a value proven non-zero
    is read from a 60-digit evaluation."""
    value = sp.sympify(value)
    if value.is_Rational:
        return int(sp.sign(value))
    z = sp.Symbol("z")
    if sp.minimal_polynomial(value, z) == z:
        return 0
    return 1 if sp.N(value, 60) > 0 else -1


def sympy_holds(problem: Problem, model: dict) -> bool:
    """Whether every atom of the (conjunctive) problem holds at the model, by sympy."""
    n = len(problem.variables)
    values = {sp.Symbol(name): sympy_number(model[name]) for name in problem.variables}
    for a in problem.atoms():
        expr, _ = sympy_poly(a.poly, n)
        s = sympy_sign(sp.expand(expr.subs(values)))
        ok = {"<": s < 0, "<=": s <= 0, "=": s == 0, "!=": s != 0, ">=": s >= 0, ">": s > 0}
        if not ok[a.rel]:
            return False
    return True


def checker_verdict(problem: Problem, text: str):
    return check(problem, read_certificate(text))


def prove_checked(problem: Problem, timeout: float = 30.0):
    """Prove; every certificate must be accepted by the checker."""
    result = prove(problem, timeout=timeout)
    if result.certificate_text is not None:
        verdict = checker_verdict(problem, result.certificate_text)
        assert verdict.accepted, (verdict, result.certificate_text)
    return result


# ------------------------------------------------------------------ small units

def test_order_puts_lowest_degree_variable_last():
    ctx = poly_context(3)
    x, y, z = ctx.gens()
    polys = [x**3 * y + z, y**2 + z * x, x * y * z - 1]
    # z has maximum degree 1 (projected first, last in the order); y: 2; x: 3.
    assert choose_order(polys, 3) == [0, 1, 2]
    assert choose_order([x + y**3 + z**2], 3) == [1, 2, 0]


def test_order_puts_univariate_equations_first():
    ctx = poly_context(2)
    x, y = ctx.gens()
    assert choose_order([x**5 * y + 1, y**2 - 3], 2) == [0, 1]
    assert choose_order([x**5 * y + 1, y**2 - 3], 2, [y**2 - 3]) == [1, 0]


def test_order_renaming_round_trip():
    ctx = poly_context(3)
    x, y, z = ctx.gens()
    p = 3 * x**2 * y - z**5 + x * z
    order = [2, 0, 1]
    q = to_certificate_order(p, order)
    a, b, c = ctx.gens()
    assert q == 3 * b**2 * c - a**5 + b * a
    assert to_problem_order(q, order) == p


def test_factorization_with_huge_coefficients():
    # python-flint 0.9's fmpz_mpoly.factor overflows sorting such factors.
    ctx = poly_context(2)
    x, y = ctx.gens()
    big = 10**30
    p = -6 * (x * y - big) * (3 * x * y + big + 1) ** 2
    assert sorted(map(str, irreducible_factors(p))) == sorted(
        [str(x * y - big), str(3 * x * y + big + 1)])


@given(st.lists(st.integers(-30, 30), min_size=2, max_size=6),
       st.lists(st.fractions(min_value=-20, max_value=20, max_denominator=6), max_size=3))
@settings(max_examples=200, deadline=None)
def test_between_is_the_kernels_simplest_rational(coeffs, rationals):
    f = fmpz_poly(coeffs)
    assume(f.degree() >= 1)
    points = list(isolate_real_roots(f)) + [RealAlg.from_rational(fmpq(q.numerator, q.denominator))
                                           for q in rationals]
    points.sort()
    for a, b in zip([None] + points, points + [None]):
        if a is not None and b is not None and a.compare(b) >= 0:
            continue
        assert between(a, b).compare(sample_between(a, b)) == 0


def test_prune_keeps_a_small_cover():
    r = [RealAlg.from_rational(k) for k in range(4)]
    b = [Bound(0, k + 1, r[k]) for k in range(4)]
    lit = Literal("a1", poly_context(1).gens()[0], ">")
    ivs = [Interval(None, b[1], False, r[0], lit),        # (-inf, 1)
           Interval(None, b[0], False, r[0], lit),        # (-inf, 0)  redundant
           Interval(b[1], b[1], True, r[1], lit),         # [1]
           Interval(b[0], b[3], False, r[2], lit),        # (0, 3)
           Interval(b[2], None, False, r[3], lit),        # (2, +inf)
           Interval(b[3], None, False, r[3], lit)]        # (3, +inf) redundant
    kept = prune(ivs)
    assert kept == [ivs[0], ivs[3], ivs[4]]


def test_passed_up_follows_the_conservative_rule():
    ctx = poly_context(2)
    x, y = ctx.gens()
    store = PolyStore(2)
    circle = store.intern(x**2 + y**2 - 1)
    line = store.intern(y - x)
    sample = (RealAlg.from_rational(0),)
    up = store.passed_up(2, sample, bounds=[circle, line], direct=[x * (y - x)],
                         nullified=[], declared=[])
    got = {str(store.polys[q]) for q in up}
    # chain: leading coefficients 1 and 1 (constants); disc(circle) = -4(x^2-1) -> x-1, x+1;
    # res(circle, line) = 2x^2 - 1; lower factor x of the direct literal.
    assert got == {"x1 - 1", "x1 + 1", "2*x1^2 - 1", "x1"}


def test_covering_returns_a_model_or_a_tree():
    ctx = poly_context(2)
    x, y = ctx.gens()
    store = PolyStore(2)
    lits = [Literal("a1", x**2 + y**2 - 1, "<"), Literal("a2", x * y - 1, ">")]
    tree = Covering(store, lits).run()
    assert isinstance(tree, Node) and {l.name for l in tree.literals()} == {"a1", "a2"}
    model = Covering(store, lits[:1]).run()
    assert isinstance(model, Model)


# ------------------------------------------------------------------ fixed problems

UNSAT = {
    "p<0 and p>0": [("x**2*y - x + 3", "<"), ("x**2*y - x + 3", ">")],
    "sum of squares below zero": [("x**2 + y**2 + 1", "<")],
    "disjoint discs": [("x**2 + y**2", "<", 1), ("(x-3)**2 + y**2", "<", 1)],
    "disc and hyperbola": [("x**2 + y**2 - 1", "<"), ("x*y - 1", ">")],
    "two parabolas": [("y - x**2", ">"), ("y + x**2 + 1", "<")],
    "equation without real root": [("x**2 + 2", "=")],
    "two circles meet nowhere": [("x**2 + y**2 - 1", "="), ("x**2 + y**2 - 4", "=")],
}


def _atoms(spec, nvars=2):
    out = []
    for item in spec:
        text, rel = item[0], item[1]
        if len(item) == 3:
            text = f"{text} - {item[2]}"
        out.append(atom(text, rel, nvars))
    return out


@pytest.mark.parametrize("name", sorted(UNSAT))
def test_unsat_examples(name):
    problem = problem_of(_atoms(UNSAT[name]), 2)
    result = prove_checked(problem)
    assert result.answer == "unsat", result.reason


SAT = {
    "disc": [("x**2 + y**2 - 1", "<")],
    "on the circle above the line": [("x**2 + y**2 - 2", "="), ("y - x", ">")],
    "sqrt two": [("x**2 - 2", "="), ("x*y - 1", ">")],
    "touching": [("x**2 + y**2 - 1", "<="), ("(x - 2)**2 + y**2 - 1", "<=")],
}


@pytest.mark.parametrize("name", sorted(SAT))
def test_sat_examples(name):
    problem = problem_of(_atoms(SAT[name]), 2)
    result = prove_checked(problem)
    assert result.answer == "sat", result.reason
    assert sympy_holds(problem, result.model)
    assert all(dict(result.atom_signs))


def test_touching_discs_have_the_algebraic_model():
    problem = problem_of(_atoms(SAT["touching"]), 2)
    result = prove(problem)
    assert sympy_number(result.model["x"]) == 1 and sympy_number(result.model["y"]) == 0


def test_free_variable_gets_zero():
    problem = problem_of([atom("x - 3", ">", 3)], 3)
    result = prove_checked(problem)
    assert result.answer == "sat"
    assert result.model["y"].value == 0 and result.model["z"].value == 0


def test_false_assertion_and_complementary_units():
    from certformat.formula import BoolConst
    problem = problem_of([atom("x - 1", ">")], 2,
                         extra=[Assertion(BoolConst(False), 9, "false")])
    result = prove_checked(problem)
    assert result.answer == "unsat" and "core 2\n" in result.certificate_text
    problem = problem_of([atom("x - 1", ">"), atom("y", "<"), atom("x - 1", "<=")], 2)
    result = prove_checked(problem)
    assert result.answer == "unsat" and "core 1 3\n" in result.certificate_text


def test_boolean_structure_is_decided():
    from certformat.formula import Or
    a, b = atom("x", ">"), atom("y", ">")
    problem = problem_of([atom("x", "<")], 2, extra=[Assertion(Or((a, b)), 1, "or")])
    result = prove_checked(problem)
    assert result.answer == "sat"
    problem = problem_of([atom("x", "<"), atom("y", "<")], 2,
                         extra=[Assertion(Or((a, b)), 1, "or")])
    assert prove_checked(problem).answer == "unsat"


def test_time_limit_is_unknown():
    problem = problem_of(_atoms(UNSAT["disc and hyperbola"]), 2)
    result = prove(problem, timeout=0.0)
    assert result.answer == "unknown" and result.reason == "time limit"


def test_certificates_are_deterministic():
    problem = problem_of(_atoms(UNSAT["disc and hyperbola"]) + [atom("x**3 - 2*x - 1", "!=")], 2)
    first = prove(problem).certificate_text
    assert first == prove(problem).certificate_text
    problem = problem_of(_atoms(SAT["sqrt two"]), 2)
    first = prove(problem).certificate_text
    assert first == prove(problem).certificate_text


def test_lemma_uses_only_needed_literals():
    problem = problem_of(_atoms(UNSAT["disjoint discs"]) + [atom("x + y - 100", "<")], 2)
    result = prove_checked(problem)
    assert "lemma L1 excludes a1 a2 by c1" in result.certificate_text
    assert "core 1 2\n" in result.certificate_text


def test_declared_sets_equal_what_the_checker_derives():
    """The declared set of every lifted interval is exactly the checker's P′ of its child."""
    from checker import polys as CP
    from checker.check import atom_literals, checked_number, require_variables
    from checker.cover import Replay, check_node
    from checker.limits import Limits
    from certformat.clauses import clausal_form

    problem = problem_of(_atoms(UNSAT["disc and hyperbola"]) + [atom("x**2*y - 2", "<")], 2)
    text = prove(problem).certificate_text
    cert = read_certificate(text)
    order = require_variables(problem, cert)
    polys = {pid: CP.to_flint(p, poly_context(2)) for pid, p in cert.polys.items()}
    numbers = {nid: checked_number(nid, num, num.poly and CP.to_flint(num.poly, CP.Z), Limits()) for nid, num in cert.numbers.items()}
    literals = atom_literals(problem, cert, clausal_form(problem), order, polys)
    compared = 0
    for node in cert.nodes.values():
        for seg in node.segments:
            if seg.child is None:
                continue
            replay = Replay(cert, polys, numbers, literals)
            child = cert.nodes[seg.child]
            passed = check_node(replay, child, child.sample)
            assert passed == {CP.key(polys[p]) for p in seg.keep}
            compared += 1
    assert compared > 0


# ------------------------------------------------------------------ planted problems

coefficient = st.integers(-3, 3)
small_rational = st.fractions(min_value=-3, max_value=3, max_denominator=3)


@st.composite
def polynomials(draw, nvars: int, max_degree: int = 2, max_terms: int = 4):
    ctx = poly_context(nvars)
    terms = draw(st.dictionaries(
        st.tuples(*[st.integers(0, max_degree) for _ in range(nvars)]),
        coefficient.filter(bool), min_size=1, max_size=max_terms))
    return ctx.from_dict(terms)


def _value(p, point):
    """Exact value at a point of sympy numbers."""
    expr, syms = sympy_poly(p, len(point))
    return sympy_sign(sp.expand(expr.subs(dict(zip(syms, point)))))


@st.composite
def planted_sat(draw, algebraic: bool):
    nvars = draw(st.integers(2, 3))
    point = [sp.Rational(q.numerator, q.denominator) for q in draw(st.lists(
        small_rational, min_size=nvars, max_size=nvars))]
    atoms = []
    if algebraic:
        point[0] = sp.sqrt(2)
        atoms.append(make_atom(poly_context(nvars).gens()[0] ** 2 - 2, "="))
    for p in draw(st.lists(polynomials(nvars), min_size=1, max_size=4)):
        sign = _value(p, point)
        rel = draw(st.sampled_from({-1: ("<", "<=", "!="), 0: ("=", "<=", ">="),
                                    1: (">", ">=", "!=")}[sign]))
        a = make_atom(p, rel)
        if isinstance(a, Atom):
            atoms.append(a)
    assume(atoms)
    return problem_of(atoms, nvars)


def _assert_planted_sat(problem):
    result = prove_checked(problem, timeout=60)
    assert result.answer != "unsat"
    if result.answer == "unknown":
        # the conservative rule may meet a nullified characterization polynomial
        assert "nullified" in result.reason, result.reason
        return
    assert sympy_holds(problem, result.model)


@given(planted_sat(algebraic=False))
@settings(max_examples=60, deadline=None)
def test_planted_rational_point_gives_sat(problem):
    _assert_planted_sat(problem)


@given(planted_sat(algebraic=True))
@settings(max_examples=40, deadline=None)
def test_planted_algebraic_point_gives_sat(problem):
    _assert_planted_sat(problem)


@st.composite
def contradictory(draw):
    nvars = 2
    ctx = poly_context(nvars)
    kind = draw(st.sampled_from(["opposite", "squares", "sum", "discs", "hyperbola"]))
    x, y = ctx.gens()
    if kind == "opposite":
        p = draw(polynomials(nvars, 3))
        atoms = [make_atom(p, "<"), make_atom(p, ">")]
    elif kind == "squares":
        p, q = draw(polynomials(nvars)), draw(polynomials(nvars))
        atoms = [make_atom(p * p + q * q + draw(st.integers(1, 5)), "<")]
    elif kind == "sum":
        p, q = draw(polynomials(nvars)), draw(polynomials(nvars))
        atoms = [make_atom(p, ">"), make_atom(q, ">="), make_atom(p + q, "<=")]
    elif kind == "discs":
        a, b, r = draw(st.integers(-3, 3)), draw(st.integers(-3, 3)), draw(st.integers(1, 2))
        c, d = draw(st.integers(-3, 3)), draw(st.integers(-3, 3))
        assume((a - c) ** 2 + (b - d) ** 2 > (r + 1) ** 2)
        atoms = [make_atom((x - a) ** 2 + (y - b) ** 2 - r * r, "<"),
                 make_atom((x - c) ** 2 + (y - d) ** 2 - 1, "<=")]
    else:
        k = draw(st.integers(1, 4))
        atoms = [make_atom(x * x + y * y - 2 * k, "<"), make_atom(x * y - k, ">=")]
    assume(all(isinstance(a, Atom) for a in atoms))
    return problem_of(atoms, nvars)


@given(contradictory())
@settings(max_examples=80, deadline=None)
def test_contradictions_give_unsat(problem):
    result = prove_checked(problem, timeout=60)
    assert result.answer != "sat"
    if result.answer == "unknown":
        assert "nullified" in result.reason, result.reason
