"""The SMT-LIB reader: every construct of the fragment, ite elimination, and a
cross-check of the polynomials it builds against sympy."""
import random
import re
from fractions import Fraction

import pytest
import sympy

from certformat.errors import InputError
from certformat.formula import And, Atom, BoolConst, BoolVar, Iff, Not, Or
from prover.polytext import poly_to_text
from certformat.smtlib import MAX_ITE_CASES, parse_smtlib
from certformat.terms import MAX_NESTING

HEADER = "(declare-fun x () Real)(declare-fun y () Real)(declare-fun z () Real)" \
         "(declare-fun b () Bool)(declare-const c Bool)\n"


def parse(body, header=HEADER):
    return parse_smtlib(header + body, "t.smt2")


def atoms_text(problem):
    """The atoms as ``poly rel`` strings, in order of first occurrence."""
    return [f"{poly_to_text(a.poly, problem.variables)} {a.rel}" for a in problem.atoms()]


def single(body):
    """The formula of a problem with one assertion ``body``."""
    return parse(f"(assert {body})").assertions[0].formula


# ------------------------------------------------------------------ declarations and metadata

def test_declarations_in_order_and_booleans():
    p = parse("(assert (and b (> (+ x y z) 0)))")
    assert p.variables == ("x", "y", "z")
    assert p.bool_variables == ("b", "c")
    assert p.assertions[0].formula == And((BoolVar("b"), p.atoms()[0]))


def test_metadata_is_kept_but_not_interpreted():
    p = parse_smtlib('(set-info :smt-lib-version 2.6)(set-logic QF_NRA)(set-info :status unsat)'
                     '(set-info :source |multi\nline|)(set-info :category "industrial")'
                     '(set-option :produce-models true)(declare-fun x () Real)'
                     '(assert (> x 0))(check-sat)(get-model)(get-info :reason-unknown)(exit)')
    assert (p.status, p.logic) == ("unsat", "QF_NRA")
    assert p.info["source"] == "multi\nline"
    assert p.info["category"] == "industrial"


def test_commands_after_exit_are_ignored():
    p = parse("(assert (> x 0))(exit)(assert (< x 0))(bogus)")
    assert len(p.assertions) == 1


def test_quoted_symbols_and_comments():
    p = parse_smtlib("; a comment\n(declare-fun |a b| () Real) ; trailing\n"
                     "(declare-fun |x| () Real)\n(assert (< |a b| x)) ; |x| is x\n")
    assert p.variables == ("a b", "x")
    assert atoms_text(p) == ["|a b| - x <"]


def test_assertion_line_and_text():
    p = parse_smtlib("(declare-fun x () Real)\n\n(assert   (>\n   x\t 0))\n")
    (a,) = p.assertions
    assert (a.line, a.text) == (3, "(assert (> x 0))")


def test_long_assertion_text_is_truncated():
    term = "(+ " + " ".join(["x"] * 200) + ")"
    text = parse(f"(assert (> {term} 0))").assertions[0].text
    assert len(text) == 200 and text.endswith("...")


# ------------------------------------------------------------------ numbers

def test_decimals_are_exact():
    # 0.1 is 1/10 exactly, so x = 0.1 is the atom 10x - 1 = 0.
    assert atoms_text(parse("(assert (= x 0.1))")) == ["10*x - 1 ="]
    assert atoms_text(parse("(assert (< (* 0.125 x) 3.0))")) == ["x - 24 <"]


def test_large_numerals_are_exact():
    big = "1" + "0" * 5000
    p = parse(f"(assert (> x (/ 1 {big})))")
    (atom,) = p.atoms()
    assert atom.rel == ">"
    assert {e: int(c) for e, c in atom.poly.to_dict().items()} == {(1, 0, 0): 10**5000,
                                                                  (0, 0, 0): -1}


def test_negative_literals_and_unary_minus():
    assert atoms_text(parse("(assert (> x (- 5)))")) == ["x + 5 >"]
    assert atoms_text(parse("(assert (> (- x) 5))")) == ["x + 5 <"]


def test_constant_comparisons_fold():
    assert single("(< 1 2)") == BoolConst(True)
    assert single("(= (* 0.5 4) 3)") == BoolConst(False)
    assert single("(= (- x x) 0)") == BoolConst(True)


# ------------------------------------------------------------------ arithmetic and comparisons

def test_nary_arithmetic():
    assert atoms_text(parse("(assert (= (- x y z) (* 2 x y) ))")) == ["2*x*y - x + y + z ="]
    assert atoms_text(parse("(assert (> (+ x) (/ y 2 3)))")) == ["6*x - y >"]


def test_chained_comparisons():
    f = single("(< 0 x y 1)")
    assert isinstance(f, And) and len(f.args) == 3
    assert atoms_text(parse("(assert (<= 0 x 1))")) == ["x >=", "x - 1 <="]
    assert atoms_text(parse("(assert (>= x y z))")) == ["x - y >=", "y - z >="]


def test_equality_chain_on_reals_and_booleans():
    assert atoms_text(parse("(assert (= x y z))")) == ["x - y =", "y - z ="]
    assert single("(= b c)") == Iff(BoolVar("b"), BoolVar("c"))
    f = single("(= b c true)")
    assert f == And((Iff(BoolVar("b"), BoolVar("c")), BoolVar("c")))


def test_distinct_is_pairwise():
    p = parse("(assert (distinct x y z))")
    assert atoms_text(p) == ["x - y !=", "x - z !=", "y - z !="]
    assert single("(distinct b c)") == Not(Iff(BoolVar("b"), BoolVar("c")))


def test_boolean_connectives():
    b, c = BoolVar("b"), BoolVar("c")
    assert single("(not b)") == Not(b)
    assert single("(or b c b)") == Or((b, c, b))
    assert single("(=> b c)") == Or((Not(b), c))
    # => is right-associative: b => (c => b)
    assert single("(=> b c b)") == Or((Not(b), Not(c), b))
    # xor is left-associative: (b xor c) xor b
    assert single("(xor b c b)") == Not(Iff(Not(Iff(b, c)), b))
    assert single("(and true b)") == b
    assert single("(or false (not true))") == BoolConst(False)


def test_annotations_are_ignored():
    assert single("(! (> x 0) :named a1)") == single("(> x 0)")


# ------------------------------------------------------------------ let and define-fun

def test_let_binds_in_parallel():
    # The y in the binding of z is the declared y, not the y bound beside it.
    p = parse("(assert (let ((y 1) (z y)) (= z 2)))")
    assert atoms_text(p) == ["y - 2 ="]


def test_let_shadowing_and_scope_end():
    p = parse("(assert (and (let ((x 1)) (let ((x (+ x 1))) (= y x))) (= y x)))")
    # inner x is 1 + 1 = 2; after both lets, x is the declared variable again
    assert atoms_text(p) == ["y - 2 =", "x - y ="]


def test_let_of_booleans_and_reals():
    p = parse("(assert (let ((q (> x 0)) (s (* x x))) (and q (< s 4))))")
    assert atoms_text(p) == ["x >", "x^2 - 4 <"]


def test_define_fun_is_substitution():
    p = parse("(define-fun sq ((a Real)) Real (* a a))"
              "(define-fun inside ((a Real) (r Real)) Bool (< (sq a) (sq r)))"
              "(define-fun two () Real 2)(define-fun pos () Bool (> x 0))"
              "(assert (and pos (inside (+ x y) two)))")
    assert atoms_text(p) == ["x >", "x^2 + 2*x*y + y^2 - 4 <"]


def test_define_fun_body_is_lexically_scoped():
    # The y in the body is the declared y, never a y bound by let at the call.
    p = parse("(define-fun f ((a Real)) Real (+ a y))(assert (let ((y 5)) (= (f 1) 0)))")
    assert atoms_text(p) == ["y + 1 ="]


def test_define_fun_cannot_see_later_symbols_or_itself():
    with pytest.raises(InputError, match="unknown symbol 'w'"):
        parse("(define-fun f ((a Real)) Real (+ a w))(declare-fun w () Real)"
              "(assert (= (f 1) 0))")
    with pytest.raises(InputError, match="unknown or unsupported function 'f'"):
        parse("(define-fun f ((a Real)) Real (f a))(assert (= (f 1) 0))")


def test_define_fun_sorts_are_checked():
    with pytest.raises(InputError, match="expected a Real term"):
        parse("(define-fun f ((a Real)) Real a)(assert (= (f b) 0))")
    with pytest.raises(InputError, match="does not have sort Real"):
        parse("(define-fun f ((a Real)) Real (> a 0))(assert (= (f 1) 0))")
    with pytest.raises(InputError, match="expected 1 arguments"):
        parse("(define-fun f ((a Real)) Real a)(assert (= (f 1 2) 0))")


# ------------------------------------------------------------------ ite

def test_boolean_ite():
    b, c = BoolVar("b"), BoolVar("c")
    assert single("(ite b c (> x 0))") == Or((And((b, c)), And((Not(b), single("(> x 0)")))))
    assert single("(ite true c b)") == c


def test_real_ite_becomes_guarded_disjunction():
    p = parse("(assert (> (ite b x y) 0))")
    b = BoolVar("b")
    x_pos, y_pos = p.atoms()
    assert p.assertions[0].formula == Or((And((b, x_pos)), And((Not(b), y_pos))))


def test_ite_case_limit():
    term = "x"
    for i in range(9):  # 2^9 = 512 cases > MAX_ITE_CASES
        term = f"(+ {term} (ite b{i} 1 2))"
    header = HEADER + "".join(f"(declare-fun b{i} () Bool)" for i in range(9))
    with pytest.raises(InputError, match=f"more than {MAX_ITE_CASES} ite cases"):
        parse(f"(assert (> {term} 0))", header)


# A reference interpreter of the SMT-LIB terms used below, written independently
# of the reader (recursive, Python Fractions), used as the oracle.

def _tokens(text):
    return re.findall(r"\(|\)|[^\s()]+", text)


def _sexp(tokens):
    stack = [[]]
    for t in tokens:
        if t == "(":
            stack.append([])
        elif t == ")":
            done = stack.pop()
            stack[-1].append(done)
        else:
            stack[-1].append(t)
    return stack[0][0]


def _eval(e, env):
    if isinstance(e, str):
        if e in env:
            return env[e]
        if e in ("true", "false"):
            return e == "true"
        return Fraction(e)
    op, args = e[0], e[1:]
    if op == "let":
        inner = dict(env)
        for name, term in args[0]:
            inner[name] = _eval(term, env)
        return _eval(args[1], inner)
    v = [_eval(a, env) for a in args]
    if op == "ite":
        return v[1] if v[0] else v[2]
    chain = {"<": lambda a, b: a < b, "<=": lambda a, b: a <= b, ">": lambda a, b: a > b,
             ">=": lambda a, b: a >= b, "=": lambda a, b: a == b}
    if op in chain:
        return all(chain[op](a, b) for a, b in zip(v, v[1:]))
    if op == "distinct":
        return len(set(v)) == len(v)
    if op == "-" and len(v) == 1:
        return -v[0]
    folds = {"+": lambda a, b: a + b, "-": lambda a, b: a - b, "*": lambda a, b: a * b,
             "/": lambda a, b: a / b, "and": lambda a, b: a and b, "or": lambda a, b: a or b,
             "xor": lambda a, b: a != b}
    if op in folds:
        result = v[0]
        for b in v[1:]:
            result = folds[op](result, b)
        return result
    if op == "not":
        return not v[0]
    if op == "=>":
        result = v[-1]
        for a in reversed(v[:-1]):
            result = (not a) or result
        return result
    raise ValueError(op)


def _random_real(rng, depth):
    if depth == 0 or rng.random() < 0.25:
        return rng.choice(["x", "y", "1", "2", "0.5", "(- 3)", "z"])
    kind = rng.choice(["+", "-", "*", "ite", "/", "let"])
    if kind == "ite":
        return f"(ite {_random_bool(rng, depth - 1)} {_random_real(rng, depth - 1)} " \
               f"{_random_real(rng, depth - 1)})"
    if kind == "/":
        return f"(/ {_random_real(rng, depth - 1)} {rng.choice(['2', '(- 3)', '0.25'])})"
    if kind == "let":
        return f"(let ((z {_random_real(rng, depth - 1)})) {_random_real(rng, depth - 1)})"
    n = rng.choice([1, 2, 3]) if kind == "-" else rng.choice([2, 3])
    return f"({kind} " + " ".join(_random_real(rng, depth - 1) for _ in range(n)) + ")"


def _random_bool(rng, depth):
    if depth == 0 or rng.random() < 0.2:
        return rng.choice(["b", "c", "true"])
    kind = rng.choice(["cmp", "cmp", "cmp", "and", "or", "not", "=>", "xor", "ite", "=b",
                       "distinct"])
    if kind == "cmp":
        rel = rng.choice(["<", "<=", ">", ">=", "="])
        n = rng.choice([2, 2, 3])
        return f"({rel} " + " ".join(_random_real(rng, depth - 1) for _ in range(n)) + ")"
    if kind == "distinct":
        return "(distinct " + " ".join(_random_real(rng, depth - 1) for _ in range(3)) + ")"
    if kind == "not":
        return f"(not {_random_bool(rng, depth - 1)})"
    if kind == "ite":
        return "(ite " + " ".join(_random_bool(rng, depth - 1) for _ in range(3)) + ")"
    op = "=" if kind == "=b" else kind
    return f"({op} {_random_bool(rng, depth - 1)} {_random_bool(rng, depth - 1)})"


@pytest.mark.parametrize("seed", range(60))
def test_parsed_formula_agrees_with_direct_evaluation(seed, truth):
    """ite elimination, let, chains, distinct and the connectives, checked by brute force:
    the parsed formula and the reference interpreter agree at many rational points."""
    rng = random.Random(seed)
    body = _random_bool(rng, 4)
    problem = parse_smtlib("(declare-fun x () Real)(declare-fun y () Real)"
                           "(declare-fun z () Real)(declare-fun b () Bool)"
                           f"(declare-fun c () Bool)(assert {body})")
    tree = _sexp(_tokens(body))
    values = [Fraction(v) for v in ("-2", "-1", "-1/2", "0", "1/3", "1/2", "1", "2", "3")]
    for _ in range(40):
        point = {v: rng.choice(values) for v in "xyz"}
        bools = {"b": rng.random() < 0.5, "c": rng.random() < 0.5}
        expected = _eval(tree, {**point, **bools})
        assert truth(problem, point, bools) == expected, (body, point, bools)


# ------------------------------------------------------------------ cross-check with sympy
# Reference: sympy's expand() of the same arithmetic term.  The reader's atom
# polynomial must be a rational multiple of it: positive for "<", negative when
# the canonical form mirrored the relation to ">".

X, Y, Z = sympy.symbols("x y z")


def _random_term(rng, depth):
    if depth == 0 or rng.random() < 0.2:
        choice = rng.choice(["x", "y", "z", "n", "d"])
        if choice == "n":
            n = rng.randint(0, 10**rng.randint(1, 30))
            return str(n), sympy.Integer(n)
        if choice == "d":
            whole, frac = rng.randint(0, 999), rng.randint(0, 9999)
            return f"{whole}.{frac:04d}", sympy.Rational(f"{whole}.{frac:04d}")
        return choice, {"x": X, "y": Y, "z": Z}[choice]
    op = rng.choice(["+", "-", "*", "*", "/", "neg"])
    if op == "neg":
        text, expr = _random_term(rng, depth - 1)
        return f"(- {text})", -expr
    if op == "/":
        text, expr = _random_term(rng, depth - 1)
        k = rng.randint(1, 99)
        return f"(/ {text} {k})", expr / k
    parts = [_random_term(rng, depth - 1) for _ in range(rng.choice([2, 3]))]
    expr = parts[0][1]
    for _, e in parts[1:]:
        expr = expr + e if op == "+" else expr - e if op == "-" else expr * e
    return f"({op} " + " ".join(t for t, _ in parts) + ")", expr


def _to_sympy(atom, names):
    symbols = sympy.symbols(names)
    return sum(int(c) * sympy.Mul(*[s**e for s, e in zip(symbols, exps)])
               for exps, c in atom.poly.to_dict().items())


@pytest.mark.parametrize("seed", range(80))
def test_polynomials_agree_with_sympy(seed):
    rng = random.Random(1000 + seed)
    text, expr = _random_term(rng, 4)
    reference = sympy.expand(expr)
    formula = parse(f"(assert (< {text} 0))").assertions[0].formula
    if reference.is_number:
        assert formula == BoolConst(bool(reference < 0))
        return
    assert isinstance(formula, Atom)
    ratio = sympy.cancel(_to_sympy(formula, ["x", "y", "z"]) / reference)
    assert ratio.is_Rational and ratio != 0
    assert (formula.rel, ratio > 0) in (("<", True), (">", False))


# ------------------------------------------------------------------ nesting and errors

def test_deep_nesting_within_the_limit_is_fine():
    depth = MAX_NESTING - 10
    term = "(- " * depth + "x" + ")" * depth
    assert atoms_text(parse(f"(assert (> {term} 0))")) == ["x >"]


def test_deep_let_chain():
    depth = 3000
    text = "".join(f"(let ((v{i} (+ v{i - 1} 1))) " for i in range(1, depth)) 
    p = parse(f"(assert (let ((v0 x)) {text} (> v{depth - 1} 0) {')' * (depth - 1)}))")
    assert atoms_text(p) == [f"x + {depth - 1} >"]


def test_nesting_beyond_the_limit_is_an_input_error():
    depth = MAX_NESTING + 5
    term = "(- " * depth + "x" + ")" * depth
    with pytest.raises(InputError, match="nested deeper") as err:
        parse(f"(assert (> {term} 0))")
    assert err.value.line == 2


@pytest.mark.parametrize("body, message", [
    ("(assert (> x))", "expects at least 2"),
    ("(assert (+ x 1))", "assert needs a Bool term"),
    ("(assert (> b 0))", "expected a Real term, got a Bool term"),
    ("(assert (and x b))", "expected a Bool term, got a Real term"),
    ("(assert (= x b))", "expected a Real term"),
    ("(assert (ite b x c))", "different sorts"),
    ("(assert (> (/ x y) 0))", "division by a non-constant"),
    ("(assert (> (/ x (- 2 2)) 0))", "division by zero"),
    ("(assert (> x (/ 1 (ite b 1 0))))", "division by zero"),
    ("(assert (let ((a 1) (a 2)) (> a 0)))", "bound twice"),
    ("(assert (exists ((t Real)) (> t 0)))", "'exists' is not supported"),
    ("(assert ((_ extract 1 0) x))", "indexed or qualified"),
    ("(assert (> (abs x) 0))", "unknown or unsupported function 'abs'"),
    ("(assert (> x #x1F))", "literal #x1F is not supported"),
    ("(assert (> x \"s\"))", "literal"),
    ("(declare-fun x () Real)", "already declared"),
    ("(declare-fun + () Real)", "built in"),
    ("(define-fun f ((a Real) (a Real)) Real a)", "appears twice"),
    ("(set-info :status maybe)", "status must be"),
    ("(push 1)", "unsupported command 'push'"),
    ("(frobnicate)", "unknown command 'frobnicate'"),
    ("(check-sat)(assert true)", "after check-sat"),
])
def test_errors_name_the_construct(body, message):
    with pytest.raises(InputError, match=re.escape(message)) as err:
        parse(body)
    assert err.value.line == 2 and err.value.column is not None


def test_nested_ite_chain_case_limit():
    term = "0"
    for i in range(MAX_ITE_CASES):
        term = f"(ite (> x {i}) {i} {term})"
    with pytest.raises(InputError, match="ite cases"):
        parse(f"(assert (> {term} y))")


def test_division_by_an_ite_of_constants_is_case_by_case(truth):
    p = parse("(assert (= y (/ x (ite b 2 4))))")
    half, quarter = {"x": Fraction(1), "y": Fraction(1, 2), "z": Fraction(0)}, \
        {"x": Fraction(1), "y": Fraction(1, 4), "z": Fraction(0)}
    assert truth(p, half, {"b": True}) and not truth(p, half, {"b": False})
    assert truth(p, quarter, {"b": False}) and not truth(p, quarter, {"b": True})
