"""Certificates and witnesses (SPEC.md) from the prover's results.

Everything here is deterministic: ids are given in order of first use along a
fixed walk (atoms, then the covering tree in pre-order), so the same result
gives the same bytes.
"""
from __future__ import annotations

from collections.abc import Sequence
from fractions import Fraction

from flint import fmpq, fmpz, fmpz_mpoly

from certformat.certificate import (NEG_INF, POS_INF, AtomClaim, Certificate, Inference,
                                    Interval as CertInterval, Lemma, Literal as CertLiteral,
                                    Node as CertNode, Number, Root, Segment, VarDecl)
from .certwrite import compact, poly_text, write_certificate
from certformat.formula import Atom, Problem

from .characterize import PolyStore
from .covering import Bound, Node
from .numbers import RealAlg
from .order import to_certificate_order
from .roots import isolate_real_roots


def _fraction(q: fmpq) -> Fraction:
    return Fraction(int(q.p), int(q.q))


def _poly_dict(f: fmpz_mpoly) -> dict[tuple[int, ...], int]:
    return {tuple(int(x) for x in e): int(c) for e, c in zip(f.monoms(), f.coeffs())}


def number_record(a: RealAlg) -> Number:
    """The ``num`` record of a real algebraic number (irreducible defining polynomial)."""
    if a.is_rational:
        q = _fraction(a.value)
        return Number(None, q, q)
    low, high = canonical_interval(a)
    terms = {(e,): int(c) for e, c in enumerate(a.poly.coeffs()) if c}
    return Number(compact(poly_text(terms, lambda k: "z")), _fraction(low), _fraction(high))


def canonical_interval(a: RealAlg) -> tuple[fmpq, fmpq]:
    """An isolating interval of the irrational ``a`` that depends only on its value.

    The kernel refines intervals in place, so ``a.low``/``a.high`` depend on
    the history of comparisons.  This is the widest dyadic interval
    ``(c/2^k, (c+1)/2^k)``, ``k = 0, 1, …``, around ``a`` that holds no other
    real root of ``a.poly`` (an irreducible polynomial of degree ≥ 2 has no
    rational root, so neither end is a root).  Decided by exact comparisons.
    """
    roots = isolate_real_roots(a.poly)
    j = next(i for i, r in enumerate(roots) if r.compare(a) == 0)
    below = roots[j - 1] if j > 0 else None
    above = roots[j + 1] if j + 1 < len(roots) else None
    k = 0
    while True:
        scale = fmpz(1) << k
        lo, hi = (a.low * scale).floor(), (a.high * scale).floor()
        while lo < hi:
            mid = (lo + hi + 1) // 2
            if a.compare(fmpq(mid, scale)) > 0:
                lo = mid
            else:
                hi = mid - 1
        low, high = fmpq(lo, scale), fmpq(lo + 1, scale)
        if (below is None or below.compare(low) < 0) and (above is None or above.compare(high) > 0):
            return low, high
        k += 1


class _Tables:
    """Poly and number tables with ids in order of first use."""

    def __init__(self, cert: Certificate, store: PolyStore | None):
        self.cert = cert
        self.store = store
        self._poly_ids: dict[str, str] = {}
        self._number_ids: dict[int, str] = {}
        self._number_keys: dict[tuple, str] = {}
        self._keep_alive: list[RealAlg] = []

    def poly(self, f: fmpz_mpoly) -> str:
        key = str(f)
        pid = self._poly_ids.get(key)
        if pid is None:
            pid = f"p{len(self._poly_ids) + 1}"
            self._poly_ids[key] = pid
            self.cert.polys[pid] = compact(poly_text(_poly_dict(f)))
        return pid

    def stored(self, sid: int) -> str:
        return self.poly(self.store.polys[sid])

    def number(self, a: RealAlg) -> str:
        nid = self._number_ids.get(id(a))
        if nid is not None:
            return nid
        record = number_record(a)
        key = (record.poly, record.low, record.high)
        nid = self._number_keys.get(key)
        if nid is None:
            nid = f"n{len(self._number_keys) + 1}"
            self._number_keys[key] = nid
            self.cert.numbers[nid] = record
        self._number_ids[id(a)] = nid
        self._keep_alive.append(a)
        return nid


def _header(problem: Problem, order: Sequence[int], kind: str) -> Certificate:
    variables = [VarDecl(k + 1, j + 1, problem.variables[j]) for k, j in enumerate(order)]
    return Certificate(kind=kind, sha256=problem.sha256, variables=variables)


def _literal(name: str) -> CertLiteral:
    return CertLiteral(name.lstrip("~"), positive=not name.startswith("~"))


def unsat_certificate(problem: Problem, order: Sequence[int], store: PolyStore, tree: Node,
                      atoms: dict[str, Atom], core: Sequence[int]) -> str:
    """The refutation of a conjunction by one lemma proven by ``tree``.

    ``atoms`` maps the lemma's atom ids (``a3``) to the base atoms (problem
    order); ``core`` lists the 1-based assertions holding the lemma's literals
    as unit clauses.  With the lemma clause and those units, unit propagation
    reaches a conflict, so ``infer false`` is the whole refutation.
    """
    return refutation_certificate(problem, order, store, [tree], atoms, core, [()])


def lemma_literals(tree: Node) -> list[str]:
    """The literals of the lemma a covering tree proves, by atom number then sign."""
    return sorted({lit.name for lit in tree.literals()},
                  key=lambda name: (int(name.lstrip("~")[1:]), name.startswith("~")))


def refutation_certificate(problem: Problem, order: Sequence[int], store: PolyStore,
                           trees: Sequence[Node], atoms: dict[str, Atom], core: Sequence[int],
                           steps: Sequence[Sequence[str]]) -> str:
    """A certificate with lemmas ``L1 …`` proven by ``trees`` (literals by
    :func:`lemma_literals`), the ``core`` assertions and the RUP ``steps``
    (each a sequence of literal texts; the last one empty, ``infer false``)."""
    cert = _header(problem, order, "unsat")
    tables = _Tables(cert, store)
    literal_lists = [lemma_literals(tree) for tree in trees]
    used = {name.lstrip("~") for names in literal_lists for name in names}
    for aid in sorted(used, key=lambda a: int(a[1:])):
        atom = atoms[aid]
        cert.atoms[aid] = AtomClaim(tables.poly(to_certificate_order(atom.poly, order)), atom.rel)
    for k, (tree, names) in enumerate(zip(trees, literal_lists), 1):
        root = f"c{len(cert.nodes) + 1}"
        cert.lemmas.append(Lemma(f"L{k}", tuple(_literal(name) for name in names), root))
        _emit_nodes(cert, tables, tree)
    cert.core = tuple(sorted(set(core)))
    cert.steps.extend(Inference(tuple(_literal(name) for name in step)) for step in steps)
    return write_certificate(cert)


def _bound(tables: _Tables, b: Bound | None, infinity: str):
    if b is None:
        return infinity
    return Root(tables.stored(b.poly), b.index)


def _emit_nodes(cert: Certificate, tables: _Tables, tree: Node) -> None:
    """Nodes ``c1, c2, …`` in pre-order, each node's intervals from left to right."""

    def emit(node: Node, sample_ids: tuple[str, ...]) -> None:
        record = CertNode(f"c{len(cert.nodes) + 1}", sample_ids)
        cert.nodes[record.id] = record
        for iv in node.intervals:
            low = _bound(tables, iv.low, NEG_INF)
            interval = (CertInterval(low, low, True) if iv.point
                        else CertInterval(low, _bound(tables, iv.high, POS_INF)))
            seg = Segment(interval, tables.number(iv.sample))
            record.segments.append(seg)
            if iv.literal is not None:
                seg.literal = _literal(iv.literal.name)
            else:
                seg.keep = tuple(tables.stored(q) for q in iv.declared)
                seg.child = f"c{len(cert.nodes) + 1}"
                emit(iv.child, sample_ids + (seg.sample,))

    emit(tree, ())


def trivial_unsat_certificate(problem: Problem, order: Sequence[int],
                              core: Sequence[int]) -> str:
    """The refutation by the core's clauses alone: an assertion that is false by itself,
    or two assertions with complementary unit literals."""
    cert = _header(problem, order, "unsat")
    cert.core = tuple(sorted(set(core)))
    cert.steps.append(Inference(()))
    return write_certificate(cert)


def sat_certificate(problem: Problem, order: Sequence[int], point: Sequence[RealAlg]) -> str:
    """The witness: ``point[k]`` is the value of certificate variable ``x(k+1)``."""
    cert = _header(problem, order, "sat")
    tables = _Tables(cert, None)
    for k, a in enumerate(point):
        cert.values[f"x{k + 1}"] = tables.number(a)
    return write_certificate(cert)
