"""Problems with Boolean structure: corner cases with known answers, and mutations of the
propositional part of a certificate.

The expected answers follow from propositional truth tables and elementary algebra
(common-practice facts), argued beside each case.
"""
import re
from pathlib import Path

import pytest

from certformat.certio import read_certificate
from certformat.problem import parse_problem_text
from checker.check import check
from prover.solve import prove

ROOT = Path(__file__).resolve().parents[1]
DECL = "(declare-fun x () Real)(declare-fun y () Real)(declare-fun z () Real)"

CASES = [
    # (name, assertions, expected, why)
    ("tautology", "(assert (or (> x 0) (not (> x 0))))", "sat", "excluded middle"),
    ("contradiction by structure", "(assert (and (> x 0) (not (> x 0))))", "unsat",
     "p and not p"),
    ("boolean xor with itself", "(declare-fun b () Bool)(assert (xor b b))", "unsat",
     "b xor b is false"),
    ("boolean iff", "(declare-fun b () Bool)(assert (= b (> x 1)))(assert b)(assert (< x 0))",
     "unsat", "b forces x > 1"),
    ("ite chain", "(assert (= y (ite (> x 0) 1 (ite (< x 0) (- 1) 0))))(assert (> (* x y) 0))"
     "(assert (= x 0))", "unsat", "y = sign(x), and x = 0 makes x*y = 0"),
    ("ite chain sat", "(assert (= y (ite (> x 0) 1 (ite (< x 0) (- 1) 0))))"
     "(assert (> (* x y) 0))", "sat", "any x != 0"),
    ("distinct", "(assert (distinct x y z))(assert (= x y))", "unsat", "x = y contradicts"),
    ("distinct sat", "(assert (distinct x y z))(assert (< x 1))", "sat", "x, y, z = 0, 1, 2"),
    ("let shadowing", "(assert (not (let ((a x)) (let ((a (+ a 1))) (> a x)))))", "unsat",
     "the inner a is x + 1 > x"),
    ("implication chain", "(assert (=> (> x 1) (> x 2)))(assert (= (* 2 x) 3))", "unsat",
     "x = 3/2 satisfies x > 1 but not x > 2"),
    ("disjunction of regions", "(assert (or (> (* x x) 4) (< (+ (* x x) (* y y)) 1)))"
     "(assert (< x 1))(assert (> x (- 1)))(assert (> y 1))", "unsat",
     "|x| < 1 rules out x^2 > 4, and y > 1 rules out the disc"),
]


@pytest.mark.parametrize("name, text, expected, why", CASES, ids=[c[0] for c in CASES])
def test_boolean_corner_case(name, text, expected, why):
    problem = parse_problem_text(DECL + text, f"{name}.smt2")
    result = prove(problem, timeout=60)
    assert result.answer == expected, (why, result.reason)
    verdict = check(problem, read_certificate(result.certificate_text))
    assert verdict.accepted, verdict


def _lemmas_and_steps():
    """The divider sample: two lemmas, a core of four assertions."""
    from certformat.problem import load_problem
    sample = ROOT / "samples" / "divider-tolerance.tess"
    return load_problem(sample), (ROOT / "samples" / "divider-tolerance.tess.cert").read_text()


def _needs_learning():
    """A problem whose refutation needs learned clauses, not unit propagation alone:
    (a ∨ b)(a ∨ ¬b) forces a, and then the four clauses over c, d are contradictory
    (truth tables: common-practice fact)."""
    a, b, c, d = "(> x 0)", "(> y 0)", "(> z 0)", "(> w 0)"
    clauses = [(a, b), (a, f"(not {b})")] + [
        (f"(not {a})", c1, d1) for c1 in (c, f"(not {c})") for d1 in (d, f"(not {d})")]
    text = "(declare-fun w () Real)" + DECL + "".join(
        "(assert (or " + " ".join(k) + "))" for k in clauses)
    problem = parse_problem_text(text, "learning.smt2")
    return problem, prove(problem, timeout=60).certificate_text


def _without_lemma(text: str, lemma: str) -> str:
    """Remove a lemma line and the nodes of its tree."""
    out, skipping = [], False
    for line in text.splitlines():
        if line.startswith("lemma "):
            skipping = line.startswith(f"lemma {lemma} ")
            if skipping:
                continue
        elif not line.startswith(("node", "  seg")):
            skipping = False
        if not skipping:
            out.append(line)
    return "\n".join(out) + "\n"


def _first_step(text: str) -> str:
    return next(l for l in text.splitlines() if l.startswith("infer ") and l != "infer false")


def _flip_first_step(text: str) -> str:
    step = _first_step(text)
    lits = [l[1:] if l.startswith("~") else "~" + l for l in step.split()[1:]]
    return text.replace(step + "\n", "infer " + " ".join(lits) + "\n", 1)


PROPOSITIONAL_MUTANTS = [
    ("drop a step", _needs_learning, lambda t: t.replace(_first_step(t) + "\n", "", 1), "RUP"),
    ("flip a literal of a step", _needs_learning, _flip_first_step, "RUP"),
    ("drop the empty clause", _needs_learning, lambda t: t.replace("infer false\n", ""), "RUP"),
    ("drop a lemma", _lemmas_and_steps, lambda t: _without_lemma(t, "L2"), "RUP"),
    ("shrink the core", _lemmas_and_steps, lambda t: t.replace("core 1 2 3 4", "core 1 2 3"),
     "RUP"),
    ("core names a missing assertion", _lemmas_and_steps,
     lambda t: t.replace("core 1 2 3 4", "core 1 2 3 4 9"), "CORE"),
    ("flip a lemma literal", _lemmas_and_steps,
     lambda t: re.sub(r"excludes ~a1", "excludes a1", t, count=1), "DIRECT"),
    ("literal of no variable", _lemmas_and_steps,
     lambda t: t.replace("infer false", "infer d9\ninfer false"), "RUP"),
]


@pytest.mark.parametrize("what, source, mutate, rule", PROPOSITIONAL_MUTANTS,
                         ids=[m[0] for m in PROPOSITIONAL_MUTANTS])
def test_propositional_mutant_is_rejected(what, source, mutate, rule):
    problem, text = source()
    assert check(problem, read_certificate(text)).accepted
    mutated = mutate(text)
    assert mutated != text
    verdict = check(problem, read_certificate(mutated))
    assert not verdict.accepted and verdict.rule == rule, (what, verdict)
