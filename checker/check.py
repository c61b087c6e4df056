"""The checker's top level: replay a certificate against the problem it claims to settle.

:func:`check` reads like the argument of SOUNDNESS.md §6: the certificate is
about *this* problem (HASH, VARS), its numbers and atoms are what they claim
(NUMBER, ATOM), every lemma is refuted by its covering (LEMMA), and the
problem's own clauses plus the lemmas refute propositionally (CORE, RUP) —
or, for ``sat``, the witness satisfies the problem (WITNESS).
"""
from __future__ import annotations

from dataclasses import dataclass

from flint import fmpq

from certformat.certificate import Certificate, Literal
from certformat.clauses import ClausalForm, clausal_form
from certformat.formula import NEGATED, Problem, evaluate, poly_context, relation_holds

from . import polys as P
from .algebraic import KernelError, RealAlgebraic, reduced
from .cover import Replay, check_lemma
from .limits import Limits, Rejection
from .refutation import check_refutation
from .signs import sign_at

CHECKER_VERSION = "1.0"


@dataclass
class Verdict:
    accepted: bool
    kind: str = ""
    rule: str = ""
    reason: str = ""
    line: int = 0


def check(problem: Problem, cert: Certificate, limits: Limits | None = None) -> Verdict:
    """Accept the certificate only if every rule of SOUNDNESS.md holds for it."""
    limits = limits or Limits()
    try:
        require_hash(problem, cert)
        order = require_variables(problem, cert)
        ctx = poly_context(len(order))
        polys = {pid: P.to_flint(p, ctx) for pid, p in cert.polys.items()}
        defining = {nid: P.to_flint(num.poly, P.Z) for nid, num in cert.numbers.items() if num.poly}
        require_size(cert, polys | defining, limits)       # on sparse polynomials, before any is dense
        numbers = {nid: checked_number(nid, num, defining.get(nid), limits)
                   for nid, num in cert.numbers.items()}
        if cert.kind == "sat":
            check_witness(problem, cert, order, numbers)
        else:
            check_unsat(problem, cert, order, polys, numbers, limits)
    except Rejection as rej:
        return Verdict(False, cert.kind, rej.rule, rej.reason, rej.line)
    except KernelError as err:
        return Verdict(False, cert.kind, "NUMBER", str(err), 0)
    return Verdict(True, cert.kind)


def require_hash(problem: Problem, cert: Certificate) -> None:
    """Rule HASH: the certificate names the SHA-256 of exactly this problem file."""
    if cert.sha256 != problem.sha256:
        raise Rejection("HASH", "the certificate is for a different problem file "
                        f"(sha256 {cert.sha256[:16]}…, the problem's is {problem.sha256[:16]}…)", 2)


def require_variables(problem: Problem, cert: Certificate) -> list[int]:
    """Rule VARS: the ``var`` lines list every real variable once, x1 … xn in order."""
    n = len(problem.variables)
    if [v.index for v in cert.variables] != list(range(1, n + 1)):
        raise Rejection("VARS", f"expected var lines x1 … x{n} in order", 3)
    order = [v.problem_index - 1 for v in cert.variables]
    if sorted(order) != list(range(n)):
        raise Rejection("VARS", "the var lines are not a permutation of the problem's variables", 3)
    for v in cert.variables:
        if problem.variables[v.problem_index - 1] != v.name:
            raise Rejection("VARS", f"variable {v.problem_index} is named "
                            f"{problem.variables[v.problem_index - 1]!r}, not {v.name!r}", v.line)
    return order


def require_size(cert: Certificate, polys, limits: Limits) -> None:
    """Rule LIMITS: degrees, coefficient sizes and step counts stay within the limits."""
    steps = len(cert.steps) + sum(1 + len(nd.segments) for nd in cert.nodes.values())
    if steps > limits.max_steps:
        raise Rejection("LIMITS", f"{steps} steps exceed the limit {limits.max_steps}", 0)
    for pid, poly in polys.items():
        if max(poly.degrees(), default=0) > limits.max_degree:
            raise Rejection("LIMITS", f"{pid} has degree above {limits.max_degree}", cert.lines[pid])
        text = cert.polys[pid] if pid in cert.polys else cert.numbers[pid].poly   # d digits: under 4d bits
        if 4 * len(text) > limits.max_coefficient_bits and \
                max(map(abs, poly.coeffs()), default=0).bit_length() > limits.max_coefficient_bits:
            raise Rejection("LIMITS", f"{pid} has a coefficient over "
                            f"{limits.max_coefficient_bits} bits", cert.lines[pid])
    for nid, num in cert.numbers.items():
        ends = [num.low.numerator, num.low.denominator, num.high.numerator, num.high.denominator]
        if max(map(abs, ends)).bit_length() > limits.max_coefficient_bits:
            raise Rejection("LIMITS", f"{nid} has an interval end over "
                            f"{limits.max_coefficient_bits} bits", num.line)


def checked_number(nid: str, num, defining, limits: Limits) -> RealAlgebraic:
    """Rule NUMBER: a rational, or a polynomial with exactly one root in an open interval
    (kept in minimal form: defined by the irreducible factor that vanishes at it)."""
    limits.tick(num.line)
    low = fmpq(num.low.numerator, num.low.denominator)
    if num.poly is None:
        return RealAlgebraic.rational(low)
    high = fmpq(num.high.numerator, num.high.denominator)
    try:
        return reduced(RealAlgebraic(P.univariate(defining), low, high))
    except KernelError as err:
        raise Rejection("NUMBER", f"{nid}: {err}", num.line) from None


def atom_literals(problem: Problem, cert: Certificate, cf: ClausalForm, order: list[int],
                  polys) -> dict[str, tuple]:
    """Rule ATOM: each ``atom aK`` line is the problem's K-th base atom in certificate order."""
    out = {}
    for aid, claim in cert.atoms.items():
        k = int(aid[1:])
        if not 1 <= k <= len(cf.atoms):
            raise Rejection("ATOM", f"the problem has no atom {aid}", claim.line)
        if claim.poly not in polys:
            raise Rejection("ATOM", f"polynomial {claim.poly} is not declared", claim.line)
        atom = cf.atoms[k - 1]
        mine = P.permuted(atom.poly, order) if order != sorted(order) else atom.poly
        if mine != polys[claim.poly] or atom.rel != claim.rel:
            raise Rejection("ATOM", f"{aid} is not the problem's atom {k}", claim.line)
        out[aid] = (polys[claim.poly], atom.rel)
        out["~" + aid] = (polys[claim.poly], NEGATED[atom.rel])
    return out


def clause_of(lits: tuple[Literal, ...], cf: ClausalForm, line: int) -> tuple[int, ...]:
    """The integer clause of certificate literals."""
    out = []
    for lit in lits:
        v = cf.variable_number(lit.name)
        if v is None:
            raise Rejection("RUP", f"literal {lit} names no variable of the clausal form", line)
        out.append(v if lit.positive else -v)
    return tuple(out)


def check_unsat(problem, cert, order, polys, numbers, limits) -> None:
    """Rules LEMMA, CORE and RUP: lemmas hold, and with the core's clauses refute."""
    cf = clausal_form(problem)
    literals = atom_literals(problem, cert, cf, order, polys)
    replay = Replay(cert, polys, numbers, limits=limits)
    lemma_clauses = []
    for lemma in cert.lemmas:
        mine = {}
        for lit in lemma.literals:
            if str(lit) not in literals:
                raise Rejection("LEMMA", f"literal {lit} has no atom line", lemma.line)
            mine[str(lit)] = literals[str(lit)]
        check_lemma(replay, lemma, mine)
        lemma_clauses.append(clause_of(tuple(l.negated() for l in lemma.literals), cf, lemma.line))
    unused = set(cert.nodes) - replay.visited
    if unused:
        first = min(unused, key=lambda c: cert.nodes[c].line)
        raise Rejection("COVER", f"node {first} belongs to no covering", cert.nodes[first].line)
    if any(not 1 <= i <= len(problem.assertions) for i in cert.core):
        raise Rejection("CORE", "the core names an assertion the problem does not have", 0)
    start = [c for i in sorted(set(cert.core)) for c in cf.top[i - 1]]
    start += cf.definitions + lemma_clauses
    steps = [(s, clause_of(s.literals, cf, s.line)) for s in cert.steps]
    check_refutation(start, steps, limits)


def check_witness(problem: Problem, cert: Certificate, order: list[int], numbers) -> None:
    """Rule WITNESS: the exact point and Boolean values satisfy the whole problem."""
    point: list[RealAlgebraic | None] = [None] * len(order)
    for v in cert.variables:
        nid = cert.values.get(f"x{v.index}")
        if nid is None or nid not in numbers:
            raise Rejection("WITNESS", f"x{v.index} has no declared value", v.line)
        point[v.problem_index - 1] = numbers[nid]
    bools = {name: cert.bools.get(j, False) for j, name in enumerate(problem.bool_variables, 1)}

    def atom_true(atom) -> bool:
        return relation_holds(atom.rel, sign_at(atom.poly, point))

    if not evaluate(problem.formula(), atom_true, bools.get):
        raise Rejection("WITNESS", "the witness does not satisfy the problem", 0)
