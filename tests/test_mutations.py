"""Mutation suite: certificates changed at random must never prove a false claim.

Oracle (outside the checker): for an unsat problem P whose certificate has a lemma
``excludes λ1 … λk``, we drop one literal λ whose removal leaves a *satisfiable* conjunction —
satisfiability shown by an exact witness that sympy confirms (sympy: a reference library
outside the project). Such a lemma is false, so every certificate claiming it must be
rejected, whatever else hypothesis changes in it (segments dropped or swapped, root indices
shifted, justifications replaced, declared sets shrunk, samples moved, lines reordered or
truncated). A second family re-binds a certificate to a satisfiable variant Q of P (same
atoms, one assertion made a tautology): the hash then matches and only the propositional
rules stand between the certificate and a false claim.

Counts of mutants tried and accepted are printed (``pytest -s``) and accepted must be 0.
"""
from __future__ import annotations

import hashlib
import re

import pytest
import sympy
from hypothesis import HealthCheck, given, settings, strategies as st

from certformat.certio import read_certificate
from certformat.errors import InputError
from certformat.clauses import clausal_form
from certformat.formula import And, Problem
from certformat.problem import parse_problem_text
from checker.check import check
from prover.solve import prove

# Unsat problems of our own invention (demo data): small enough for quick proofs.
PROBLEMS = {
    "parabola": "(declare-fun x () Real)(declare-fun y () Real)"
                "(assert (> y (* x x)))(assert (< y 0))(assert (< x 3))",
    "discs": "(declare-fun x () Real)(declare-fun y () Real)"
             "(assert (< (+ (* x x) (* y y)) 1))(assert (< (+ (* (- x 3) (- x 3)) (* y y)) 1))"
             "(assert (> y (- 2)))",
    "hyperbola": "(declare-fun x () Real)(declare-fun y () Real)"
                 "(assert (> (* x y) 1))(assert (< (+ (* x x) (* y y)) 1))(assert (> x (- 5)))",
    "three": "(declare-fun x () Real)(declare-fun y () Real)(declare-fun z () Real)"
             "(assert (< (+ (* x x) (* y y) (* z z)) 1))(assert (> (+ x y z) 2))",
}

STATS = {"tried": 0, "accepted": 0, "syntax": 0}


def _problem(name: str) -> Problem:
    return parse_problem_text(PROBLEMS[name], f"{name}.smt2")


_CERTS: dict[str, str] = {}


def certificate(name: str) -> str:
    if name not in _CERTS:
        result = prove(_problem(name), timeout=60)
        assert result.answer == "unsat", (name, result.reason)
        _CERTS[name] = result.certificate_text
    return _CERTS[name]


def _sympy_satisfies(problem: Problem, model) -> bool:
    """Exact check of a witness with sympy (reference outside the project)."""
    values = {}
    for name, a in model.items():
        if a.is_rational:
            values[name] = sympy.Rational(int(a.value.p), int(a.value.q))
        else:
            z = sympy.Symbol("z")
            poly = sum(int(c) * z**k for k, c in enumerate(a.poly.coeffs()))
            lo = sympy.Rational(int(a.low.p), int(a.low.q))
            hi = sympy.Rational(int(a.high.p), int(a.high.q))
            roots = [r for r in sympy.Poly(poly, z).real_roots() if lo < r < hi]
            assert len(roots) == 1
            values[name] = roots[0]
    gens = [sympy.Symbol(f"x{i}") for i in range(len(problem.variables))]
    subs = {gens[i]: values[v] for i, v in enumerate(problem.variables)}
    for assertion in problem.assertions:
        for atom in (assertion.formula.args if isinstance(assertion.formula, And)
                     else (assertion.formula,)):
            expr = sum(int(c) * sympy.Mul(*[g**e for g, e in zip(gens, exps)])
                       for exps, c in atom.poly.to_dict().items())
            value = sympy.simplify(expr.subs(subs))
            sign = 0 if value == 0 else (1 if bool(value > 0) else -1)
            ok = {"<": sign < 0, "<=": sign <= 0, "=": sign == 0, "!=": sign != 0,
                  ">=": sign >= 0, ">": sign > 0}[atom.rel]
            if not ok:
                return False
    return True


def false_lemmas(name: str) -> list[str]:
    """Certificate texts whose lemma drops one literal and so claims a satisfiable conjunction."""
    text = certificate(name)
    problem = _problem(name)
    cf = clausal_form(problem)
    m = re.search(r"^lemma (L\d+) excludes (.*) by (c\d+)$", text, re.M)
    lits = m.group(2).split()
    out = []
    for drop in lits:
        number = int(drop.lstrip("~a")) * (-1 if drop.startswith("~") else 1)
        keep = [a for a, clauses in zip(problem.assertions, cf.top)
                if all(number not in c for c in clauses)]
        sub = Problem(problem.path, problem.sha256, problem.variables, keep)
        result = prove(sub, timeout=30)
        if result.answer == "sat" and _sympy_satisfies(sub, result.model):
            rest = " ".join(l for l in lits if l != drop)
            out.append(text.replace(m.group(0), f"lemma {m.group(1)} excludes {rest} by {m.group(3)}"))
    return out


MUTATIONS = ("drop_line", "swap_lines", "shift_index", "replace_justification",
             "shrink_keep", "move_sample", "truncate", "flip_literal", "corrupt_coefficient")


def mutate(text: str, how: str, rnd) -> str:
    lines = text.splitlines()
    body = [i for i, l in enumerate(lines) if l.strip().startswith(("seg", "node", "num", "poly"))]
    if how == "drop_line" and body:
        del lines[rnd.choice(body)]
    elif how == "swap_lines" and len(body) > 1:
        i, j = rnd.sample(body, 2)
        lines[i], lines[j] = lines[j], lines[i]
    elif how == "shift_index":
        segs = [i for i, l in enumerate(lines) if re.search(r"p\d+#\d+", l)]
        if segs:
            i = rnd.choice(segs)
            lines[i] = re.sub(r"(p\d+)#(\d+)", lambda m: f"{m.group(1)}#{int(m.group(2)) + rnd.choice((1, -1)) or 1}",
                              lines[i], count=1)
    elif how == "replace_justification":
        segs = [i for i, l in enumerate(lines) if " by " in l]
        lits = sorted(set(re.findall(r" by (~?a\d+)", text)))
        if segs and lits:
            i = rnd.choice(segs)
            lines[i] = re.sub(r" by ~?a\d+", " by " + rnd.choice(lits), lines[i])
    elif how == "shrink_keep":
        segs = [i for i, l in enumerate(lines) if re.search(r"keep( p\d+)+", l)]
        if segs:
            i = rnd.choice(segs)
            keep = lines[i].split(" keep")[1].split()
            keep.remove(rnd.choice(keep))
            lines[i] = lines[i].split(" keep")[0] + " keep" + "".join(" " + k for k in keep)
    elif how == "move_sample":
        nums = re.findall(r"^num (n\d+)", text, re.M)
        segs = [i for i, l in enumerate(lines) if " at n" in l]
        if segs and nums:
            i = rnd.choice(segs)
            lines[i] = re.sub(r" at n\d+", " at " + rnd.choice(nums), lines[i])
    elif how == "corrupt_coefficient":
        polys = [i for i, l in enumerate(lines) if l.startswith(("poly", "num")) and
                 re.search(r"\d", l.split("=", 1)[1])]
        if polys:
            i = rnd.choice(polys)
            head, body = lines[i].split("=", 1)
            digits = [m.start() for m in re.finditer(r"\d", body)]
            k = rnd.choice(digits)
            body = body[:k] + str((int(body[k]) + rnd.randrange(1, 10)) % 10) + body[k + 1:]
            lines[i] = head + "=" + body
    elif how == "truncate":
        lines = lines[:rnd.randrange(1, len(lines))] if len(lines) > 1 else lines
    elif how == "flip_literal":
        segs = [i for i, l in enumerate(lines) if " by " in l]
        if segs:
            i = rnd.choice(segs)
            lines[i] = re.sub(r" by (~?)(a\d+)", lambda m: " by " + ("" if m.group(1) else "~") + m.group(2), lines[i])
    return "\n".join(lines) + "\n"


def verdict_of(problem: Problem, text: str):
    try:
        return check(problem, read_certificate(text))
    except InputError:
        STATS["syntax"] += 1
        return None


@pytest.fixture(scope="module", autouse=True)
def report():
    yield
    print(f"\nmutation suite: {STATS['tried']} mutants tried, {STATS['accepted']} accepted, "
          f"{STATS['syntax']} rejected as malformed text")


@pytest.mark.parametrize("name", sorted(PROBLEMS))
def test_false_lemmas_are_rejected_whatever_the_mutation(name):
    problem = _problem(name)
    texts = false_lemmas(name)
    assert texts, f"{name}: no literal of the lemma could be dropped to a satisfiable rest"

    @settings(max_examples=100, deadline=None, suppress_health_check=list(HealthCheck))
    @given(st.sampled_from(texts), st.lists(st.sampled_from(MUTATIONS), max_size=3), st.randoms())
    def run(text, hows, rnd):
        for how in hows:
            text = mutate(text, how, rnd)
        STATS["tried"] += 1
        v = verdict_of(problem, text)
        if v is not None and v.accepted:
            STATS["accepted"] += 1
        assert v is None or not v.accepted, text

    run()


@pytest.mark.parametrize("name", sorted(PROBLEMS))
def test_certificate_rebound_to_satisfiable_variant_is_rejected(name):
    """Q: the same atoms with the first assertion made a tautology (ℓ or not ℓ); Q is sat."""
    src = PROBLEMS[name]
    first = src.index("(assert ")
    end = src.index(")(assert", first) + 1
    body = src[first + len("(assert "):end - 1]
    q_text = src[:first] + f"(assert (or {body} (not {body})))" + src[end:]
    q = parse_problem_text(q_text, f"{name}-variant.smt2")
    assert prove(q, timeout=30).answer == "sat"
    text = certificate(name).replace(_problem(name).sha256, q.sha256)
    STATS["tried"] += 1
    v = verdict_of(q, text)
    assert v is not None and not v.accepted and v.rule in ("RUP", "ATOM", "CORE"), v
