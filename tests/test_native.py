"""The native syntax: declarations, precedence, numbers, errors, and a cross-check
of its polynomials against sympy."""
import random
import re
from fractions import Fraction
from pathlib import Path

import pytest
import sympy

from certformat.errors import InputError
from certformat.formula import And, Atom, BoolConst, BoolVar, Iff, Not, Or
from certformat.native import parse_native
from prover.polytext import poly_to_text
from certformat.problem import load_problem
from certformat.terms import MAX_DEGREE, MAX_NESTING

SAMPLES = Path(__file__).resolve().parents[1] / "samples"


def parse(text):
    return parse_native(text, "t.tess")


def atoms_text(problem):
    return [f"{poly_to_text(a.poly, problem.variables)} {a.rel}" for a in problem.atoms()]


def single(body, decls="real x, y, z\nbool p, q\n"):
    return parse(decls + "assert " + body).assertions[0].formula


def test_declarations_statements_and_status():
    p = parse("# header\nreal x, y\nbool p\nreal z  # late but before use\n"
              "assert x + y + z > 0\nassert p\nexpect unsat\n")
    assert p.variables == ("x", "y", "z") and p.bool_variables == ("p",)
    assert p.status == "unsat" and len(p.assertions) == 2
    assert (p.assertions[0].line, p.assertions[0].text) == (5, "assert x + y + z > 0")


def test_formula_may_span_lines():
    p = parse("real x, y\nassert x > 0 and\n       y > 0\n")
    assert p.assertions[0].text == "assert x > 0 and y > 0"
    assert atoms_text(p) == ["x >", "y >"]


def test_chained_comparisons_and_relations():
    p = parse("real x, y\nassert 0 <= x < 1 != y = 2 * x >= -3\n")
    assert atoms_text(p) == ["x >=", "x - 1 <", "y - 1 !=", "2*x - y =", "2*x + 3 >="]


def test_precedence_of_arithmetic():
    # -x^2 is -(x^2); * and / bind tighter than + and -; left associative.
    p = parse("real x, y\nassert -x^2 + 2*x*y - y/2/2 - x - y = 0\n")
    assert atoms_text(p) == ["4*x^2 - 8*x*y + 4*x + 5*y ="]


def test_precedence_of_connectives():
    x_pos, y_pos = single("x > 0"), single("y > 0")
    p, q = BoolVar("p"), BoolVar("q")
    assert single("not p and q or p") == Or((And((Not(p), q)), p))
    assert single("p -> q -> p") == Or((Not(p), Not(q), p))   # right associative
    assert single("p and x > 0 <-> q or y > 0") == Iff(And((p, x_pos)), Or((q, y_pos)))
    assert single("true and p") == p
    assert single("(p)") == p


def test_implication_and_iff_do_not_mix_without_parentheses():
    with pytest.raises(InputError, match="unexpected"):
        single("p -> q <-> p")
    assert single("(p -> q) <-> p") == Iff(Or((Not(BoolVar("p")), BoolVar("q"))), BoolVar("p"))


def test_numbers_are_exact():
    assert atoms_text(parse("real x\nassert x = 0.1\n")) == ["10*x - 1 ="]
    assert atoms_text(parse("real x\nassert x = 1/3\n")) == ["3*x - 1 ="]
    assert atoms_text(parse("real x\nassert x < 1.5e-3\n")) == ["2000*x - 3 <"]
    assert atoms_text(parse("real x\nassert x < 2E2\n")) == ["x - 200 <"]
    assert single("2^10 = 1024") == BoolConst(True)


def test_powers():
    assert atoms_text(parse("real x, y\nassert (x + y)^3 > 0\n")) == \
        ["x^3 + 3*x^2*y + 3*x*y^2 + y^3 >"]
    assert single("x^0 = 1") == BoolConst(True)
    with pytest.raises(InputError, match="degree above"):
        single(f"(x*y)^{MAX_DEGREE // 2 + 1} > 0")
    with pytest.raises(InputError, match="exponent above"):
        single("2^99999999 > 0")
    with pytest.raises(InputError, match="unexpected"):
        single("x^(2) > 0")
    with pytest.raises(InputError, match="whole number"):
        single("x^2.5 > 0")
    with pytest.raises(InputError, match="unexpected"):
        single("x^-1 > 0")


@pytest.mark.parametrize("body, message", [
    ("2x > 0", "unexpected"),                        # no implicit multiplication
    ("x y > 0", "unexpected"),
    ("x / y > 0", "division by a non-constant"),
    ("x / (y - y) > 0", "division by zero"),
    ("w > 0", "unknown name 'w'"),
    ("x + 1", "expected a formula, got a real expression"),
    ("p + 1 > 0", "expected a real expression, got a formula"),
    ("x and p", "expected a formula"),
    ("not x", "expected a formula"),
    ("(x > 0) > 0", "expected a real expression"),
    ("x > 0 and", "unexpected end of file"),
    ("((x > 0)", "unexpected end of file"),
    ("x > 0)", "unexpected"),
    ("x $ 0", "unexpected character '$'"),
])
def test_errors(body, message):
    with pytest.raises(InputError, match=re.escape(message)) as err:
        single(body)
    assert err.value.line is not None and err.value.column is not None


def test_declaration_errors():
    with pytest.raises(InputError, match="already declared") as err:
        parse("real x\nbool x\n")
    assert (err.value.line, err.value.column) == (2, 6)
    with pytest.raises(InputError, match="unknown name 'y'"):
        parse("real x\nassert y > 0\nreal y\n")
    with pytest.raises(InputError, match="expect"):
        parse("expect maybe\n")
    with pytest.raises(InputError, match="expect"):
        parse("expect sat\nexpect unsat\n")
    with pytest.raises(InputError, match="unexpected"):
        parse("real and\n")


def test_deep_nesting_hits_the_limit_cleanly():
    assert atoms_text(parse("real x\nassert " + "(" * 3000 + "x" + ")" * 3000 + " > 0")) == \
        ["x >"]
    depth = MAX_NESTING + 5
    with pytest.raises(InputError, match="nested deeper"):
        parse("real x\nassert " + "-(" * depth + "x" + ")" * depth + " > 0")


def test_long_flat_sums_and_conjunctions_are_not_nesting():
    terms = " + ".join(["x"] * (3 * MAX_NESTING))
    assert atoms_text(parse(f"real x\nassert {terms} > 0\n")) == ["x >"]
    conjuncts = " and ".join(f"x > {i}" for i in range(3 * MAX_NESTING))
    assert len(parse(f"real x\nassert {conjuncts}\n").atoms()) == 3 * MAX_NESTING


def test_native_and_smtlib_samples_agree():
    native, smt = load_problem(SAMPLES / "arm-reach.tess"), load_problem(SAMPLES / "arm-reach.smt2")
    assert native.variables == smt.variables
    assert native.atoms() == smt.atoms()
    assert native.status == smt.status == "unsat"


def test_sample_witness_of_the_sat_sample(truth):
    p = load_problem(SAMPLES / "panel-fit.tess")
    assert p.status == "sat"
    assert truth(p, {"a": Fraction(1), "b": Fraction(2)}, {"portrait": True})


# Reference: sympy's expand() of the same expression, written in sympy syntax
# (the native syntax with ^ spelled **).  The atom polynomial must be a rational
# multiple of it, positive for "<" and negative when mirrored to ">".

def _random_expression(rng, depth):
    if depth == 0 or rng.random() < 0.2:
        return rng.choice(["x", "y", "z", str(rng.randint(0, 10**12)), "0.25", "(7/3)"])
    op = rng.choice(["+", "-", "*", "*", "/", "^", "neg"])
    if op == "neg":
        return f"(-{_random_expression(rng, depth - 1)})"
    if op == "/":
        return f"({_random_expression(rng, depth - 1)} / {rng.randint(1, 50)})"
    if op == "^":
        return f"({_random_expression(rng, depth - 1)})^{rng.randint(0, 3)}"
    return f"({_random_expression(rng, depth - 1)} {op} {_random_expression(rng, depth - 1)})"


@pytest.mark.parametrize("seed", range(60))
def test_polynomials_agree_with_sympy(seed):
    rng = random.Random(seed)
    text = _random_expression(rng, 4)
    reference = sympy.expand(sympy.sympify(text.replace("^", "**"), rational=True))
    formula = single(f"{text} < 0")
    if reference.is_number:
        assert formula == BoolConst(bool(reference < 0))
        return
    assert isinstance(formula, Atom)
    x, y, z = sympy.symbols("x y z")
    ours = sum(int(c) * x**int(e[0]) * y**int(e[1]) * z**int(e[2])
               for e, c in formula.poly.to_dict().items())
    ratio = sympy.cancel(ours / reference)
    assert ratio.is_Rational and ratio != 0
    assert (formula.rel, ratio > 0) in (("<", True), (">", False))
