"""Certificate reader/writer round trip, syntax errors, and the clausal form."""
from fractions import Fraction

import pytest
from hypothesis import given, settings, strategies as st

from certformat.certificate import Certificate, Number, VarDecl
from certformat.certio import read_certificate
from prover.certwrite import poly_terms, poly_text, write_certificate
from certformat.clauses import clausal_form
from certformat.errors import InputError
from certformat.formula import (And, Assertion, Iff, Not, Or, Problem, BoolVar, make_atom,
                                poly_context)

EXAMPLE = """\
tessella 1 unsat
problem sha256 9f86d081884c7d659a2feaa0c55ad015a3bf4f1b2b0b822cd15d6c15b0f00a08
var x1 = 2 "skoY"
var x2 = 1 "a \\"quoted\\" name"
poly p1 = x1^2 + x2^2 - 1
poly p2 = -3*x1*x2 + 7
poly p3 = x1
num n1 = 3/2
num n2 = z^2 - 2 @ (1, 3/2)
num n3 = -7
atom a1 = p1 < 0
atom a3 = p2 > 0
lemma L1 excludes a1 ~a3 by c1
node c1 sample -
  seg (-inf, p3#1) at n3 by a1
  seg [p3#1] at n2 lift c2 keep p1 p2
  seg (p3#1, +inf) at n1 lift c3 keep
node c2 sample n2
  seg (-inf, +inf) at n3 by ~a3
node c3 sample n1
  seg (-inf, +inf) at n3 by ~a3
core 1 3
infer ~a1 a3
infer false
"""


def test_round_trip_is_exact():
    cert = read_certificate(EXAMPLE)
    assert write_certificate(cert) == EXAMPLE
    assert cert.numbers["n2"] == Number("z^2-2", Fraction(1), Fraction(3, 2), line=9)
    assert cert.variables[1].name == 'a "quoted" name'
    assert cert.nodes["c1"].segments[1].keep == ("p1", "p2")


def test_comments_and_blank_lines_are_ignored():
    text = EXAMPLE.replace("poly p3 = x1\n", "poly p3 = x1   % the first variable\n\n")
    assert write_certificate(read_certificate(text)) == EXAMPLE


@pytest.mark.parametrize("text, line", [
    ("tessella 2 unsat\n", 1),
    ("problem sha256 " + "0" * 64 + "\n", 1),
    (EXAMPLE.replace("poly p2 = -3*x1*x2 + 7", "poly p2 = -3*x1*x9 + 7"), 6),
    (EXAMPLE.replace("num n3 = -7", "num n3 = 1/0"), 10),
    (EXAMPLE.replace("num n3 = -7", "num n1 = -7"), 10),
    (EXAMPLE.replace("seg (-inf, p3#1)", "seg (-inf p3#1)"), 15),
    (EXAMPLE[:EXAMPLE.index("node c1")] + "  seg (-inf, +inf) at n1 by a1\n", 14),
    (EXAMPLE.replace("infer false", "infer maybe"), 24),
])
def test_malformed_certificates_name_their_line(text, line):
    with pytest.raises(InputError) as err:
        read_certificate(text, "c.cert")
    assert str(err.value).startswith("c.cert")
    if line is not None:
        assert err.value.line == line


@settings(max_examples=200, deadline=None)
@given(st.dictionaries(st.tuples(*[st.integers(0, 4)] * 3), st.integers(-10**30, 10**30),
                       max_size=6))
def test_polynomial_text_round_trip(poly):
    poly = {e: c for e, c in poly.items() if c}
    cert = Certificate("unsat", "0" * 64, [VarDecl(k, k, f"v{k}") for k in (1, 2, 3)],
                       polys={"p1": poly_text(poly)})
    again = read_certificate(write_certificate(cert))
    assert poly_terms(again.polys["p1"], 3) == poly          # the text flint reads is the dictionary written


def _problem(*formulas, bools=()):
    return Problem("t", "0" * 64, ("x", "y"), [Assertion(f, i + 1, "") for i, f in
                                              enumerate(formulas)], bool_variables=bools)


def test_clausal_form_base_atoms_and_definitions():
    x, y = poly_context(2).gens()
    le = make_atom(x - y, "<=")       # the negation of x - y > 0
    gt = make_atom(x - y, ">")
    eq = make_atom(x * y - 1, "=")
    cf = clausal_form(_problem(And((le, eq)), Or((gt, And((eq, BoolVar("b"))))),
                               Iff(eq, Not(BoolVar("b"))), bools=("b",)))
    assert [a.rel for a in cf.atoms] == [">", "="]      # x - y > 0 is a1, x*y - 1 = 0 is a2
    assert cf.top[0] == [(-1,), (2,)]
    assert cf.top[1] == [(1, 4)]                          # d1 ↔ (a2 ∧ b1)
    assert cf.top[2] == [(5,)]                            # d2 ↔ (a2 ↔ ¬b1)
    assert cf.definitions[:3] == [(-4, 2), (-4, 3), (4, -2, -3)]
    assert [cf.literal_name(v) for v in (1, -3, 4)] == ["a1", "~b1", "d1"]
    assert cf.variable_number("d2") == 5 and cf.variable_number("d3") is None


def test_numbers_longer_than_cpython_int_text_limit_round_trip():
    # CPython refuses int(str) beyond 4300 digits by default (common-practice fact, CPython 3.11
    # release notes); certificates may carry longer coefficients within the checker's limits
    big = 10 ** 5000 + 1
    cert = Certificate("unsat", "0" * 64, [VarDecl(1, 1, "x")], polys={"p1": poly_text({(1,): -big, (0,): 3})},
                       numbers={"n1": Number(None, Fraction(big, 7), Fraction(big, 7))})
    text = write_certificate(cert)
    again = read_certificate(text)
    assert poly_terms(again.polys["p1"], 1) == {(1,): -big, (0,): 3}
    assert again.numbers["n1"].low == Fraction(big, 7)
    assert write_certificate(again) == text


def test_whitespace_tabs_crlf_and_percent_in_names():
    # SPEC.md §10: tokens may be separated by tabs or left unseparated next to a mark, '%' outside a
    # string starts a comment, lines may end in CRLF; the same certificate must result
    text = (EXAMPLE.replace("poly p2 = -3*x1*x2 + 7", "poly\tp2 =-3 * x1*x2+7")
            .replace("seg (-inf, p3#1) at n3 by a1", "seg(-inf,p3#1)at n3 by a1 % a comment")
            .replace('"a \\"quoted\\" name"', '"50% \\"quoted\\""').replace("\n", "\r\n"))
    cert = read_certificate(text)
    assert write_certificate(cert) == EXAMPLE.replace('"a \\"quoted\\" name"', '"50% \\"quoted\\""')
    assert cert.variables[1].name == '50% "quoted"'


@pytest.mark.parametrize("bad, words", [
    ("seg (-inf, p3#1) at n3 by", ["'seg'", "SPEC.md"]),       # a statement cut short
    ("seg (-inf, p3#1) at n3 by a1 $", ["'$'"]),               # a character of no token
    ("poly p3 = x1 2", ["'poly'"]),                             # two words with no mark between
    ("poly p3 = x1 ^", ["'poly'"]),
])
def test_malformed_statements_are_named(bad, words):
    # each line breaks the grammar of SPEC.md §10 in one place; the error names the line and statement
    line = next(k for k, l in enumerate(EXAMPLE.split("\n"), 1) if l.strip().startswith(bad.split(" =")[0][:8]))
    text = "\n".join(bad if k == line else l for k, l in enumerate(EXAMPLE.split("\n"), 1))
    with pytest.raises(InputError) as err:
        read_certificate(text, "c.cert")
    assert err.value.line == line and all(w in str(err.value) for w in words), str(err.value)


@pytest.mark.parametrize("bad", [
    "poly p3 = " + "*".join(["x1"] * 20000) + " $",            # a long product, bad at the end
    "poly p3 = " + " - ".join(["- x1^2"] * 20000) + " -",       # a long sum of doubled signs, cut short
    "node c1 sample " + " ".join(f"n{i}" for i in range(20000)) + " x",
    "lemma L1 excludes " + " ".join(f"~a{i}" for i in range(20000)) + " by",
])
def test_long_malformed_lines_are_rejected_without_backtracking(bad):
    # each form is matched against the raw line: a line of 20 000 tokens that fails only at its end must
    # still be rejected, naming its line (a pattern that backtracked badly would hang here instead)
    text = EXAMPLE.replace("poly p3 = x1\n", bad + "\n") if bad.startswith("poly") else EXAMPLE + bad + "\n"
    with pytest.raises(InputError) as err:
        read_certificate(text, "c.cert")
    assert err.value.line == text[:text.index(bad)].count("\n") + 1
