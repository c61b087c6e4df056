"""The checker's rules on a hand-written certificate, and mutants broken in exactly one way.

Problem (invented for this test): y > x^2 and y < 0 — unsatisfiable because x^2 >= 0
(common-practice fact). The certificate covers the x-line by the section x = 0 and the two
sectors around it, and each y-line by the parabola's root and the axis.
"""
import hashlib
from pathlib import Path

import pytest

from certformat.certio import read_certificate
from certformat.formula import Assertion, Problem, make_atom, poly_context
from checker.check import check

TEXT = "(declare-fun x () Real)\n(declare-fun y () Real)\n(assert (> y (* x x)))\n(assert (< y 0))\n"
SHA = hashlib.sha256(TEXT.encode()).hexdigest()
CERT = (Path(__file__).parent / "data" / "parabola_below_axis.cert.in").read_text().format(sha=SHA)


def problem() -> Problem:
    x, y = poly_context(2).gens()
    return Problem("p.smt2", SHA, ("x", "y"), [Assertion(make_atom(y - x**2, ">"), 3, ""),
                                                 Assertion(make_atom(y, "<"), 4, "")])


def verdict(text: str):
    return check(problem(), read_certificate(text))


def test_hand_written_certificate_is_accepted():
    v = verdict(CERT)
    assert v.accepted, v


MUTANTS = [
    # (what is broken, old text, new text, rule that must reject)
    ("hash of another problem", f"sha256 {SHA}", "sha256 " + "0" * 64, "HASH"),
    ("variable renamed", 'var x2 = 2 "y"', 'var x2 = 2 "z"', "VARS"),
    ("variables not a permutation", 'var x2 = 2 "y"', 'var x2 = 1 "x"', "VARS"),
    ("atom relation flipped", "atom a2 = p2 < 0", "atom a2 = p2 > 0", "ATOM"),
    ("atom polynomial corrupted", "poly p2 = x2", "poly p2 = 2*x2", "ATOM"),
    ("projection factor dropped", "lift c3 keep p3", "lift c3 keep", "PROJECT"),
    ("wrong projection polynomial", "poly p3 = x1", "poly p3 = x1 - 1", "PROJECT"),
    ("gap opened", "  seg (p1#1, +inf) at n4 by a2\nnode c2", "node c2", "COVER"),
    ("covered point dropped", "  seg [p3#1] at n1 lift c2 keep p3\n", "", "COVER"),
    ("intervals not left to right", "  seg (-inf, p1#1) at n1 by a1\n  seg [p1#1] at n3 by a1\n"
     "  seg (p1#1, +inf) at n4 by a2\nnode c2", "  seg [p1#1] at n3 by a1\n  seg (-inf, p1#1) at n1 "
     "by a1\n  seg (p1#1, +inf) at n4 by a2\nnode c2", "COVER"),
    ("sample outside interval", "seg (-inf, p1#1) at n1 by a1", "seg (-inf, p1#1) at n4 by a1",
     "COVER"),
    ("root index shifted", "seg (-inf, p3#1) at n2", "seg (-inf, p3#2) at n2", "BOUND"),
    ("satisfied atom as justification", "seg (p1#1, +inf) at n4 by a2\nnode c2",
     "seg (p1#1, +inf) at n4 by a1\nnode c2", "DIRECT"),
    ("sector instead of section", "seg [p3#1] at n1 lift c2", "seg (p3#1, p3#1) at n1 lift c2",
     "BOUND"),
    ("child sample differs", "node c4 sample n3", "node c4 sample n4", "COVER"),
    ("literal not in lemma", "lemma L1 excludes a1 a2", "lemma L1 excludes a1 ~a2", "DIRECT"),
    ("core too small", "core 1 2", "core 1", "RUP"),
    ("refutation missing", "infer false\n", "", "RUP"),
    ("number not isolating", "num n4 = 2", "num n4 = z^2 - 2 @ (-2, 2)", "NUMBER"),
]


@pytest.mark.parametrize("what, old, new, rule", MUTANTS, ids=[m[0] for m in MUTANTS])
def test_mutant_is_rejected_by_the_right_rule(what, old, new, rule):
    assert old in CERT, what
    v = verdict(CERT.replace(old, new, 1))
    assert not v.accepted, what
    assert v.rule == rule, (what, v)


@pytest.mark.parametrize("limits, message", [
    ({"max_degree": 1}, "degree above 1"),
    ({"max_coefficient_bits": 0}, "coefficient over 0 bits"),
    ({"max_steps": 5}, "steps exceed the limit 5"),
    ({"max_seconds": 0.0}, "time limit"),
    ({"max_sample_degree": 0}, "algebraic degree"),
], ids=["degree", "coefficients", "steps", "wall time", "sample degree"])
def test_limits_reject_with_a_clear_message(limits, message):
    from checker.limits import Limits
    v = check(problem(), read_certificate(CERT), Limits(**limits))
    assert not v.accepted and v.rule == "LIMITS" and message in v.reason, v


def test_certificate_over_the_size_limit_is_an_input_error(tmp_path):
    from certformat.certio import load_certificate
    from certformat.errors import InputError
    path = tmp_path / "big.cert"
    path.write_text(CERT)
    with pytest.raises(InputError, match="over the limit"):
        load_certificate(str(path), max_bytes=100)


@pytest.mark.parametrize("old, new", [
    ("num n4 = 2", "num n4 = z^999999999999 - 2 @ (1, 2)"),
    ("poly p3 = x1", "poly p3 = x1^999999999999*x2^999999999999 + x1"),
], ids=["number", "polynomial"])
def test_huge_exponents_are_rejected_before_anything_is_expanded(old, new):
    # a dense coefficient list of degree 10^12 would exhaust memory: the degree limit is read
    # off the sparse polynomial first
    v = verdict(CERT.replace(old, new, 1))
    assert not v.accepted and v.rule == "LIMITS" and "degree above" in v.reason, v
