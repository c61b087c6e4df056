"""Problems with Boolean structure: the propositional search with the covering as theory.

The clausal form is the checker's own (:func:`certformat.clauses.clausal_form`).
:func:`prover.search.search` assigns the atoms; for each full assignment the
covering procedure decides the conjunction of the assigned atom literals.  A
covering tree refutes a subset of them — the literals that justify its direct
intervals — which becomes a lemma; the lemma is then shrunk by trying to drop
each literal in turn (deletion-based minimization, common practice) while the
time budget allows, because lemmas are what auditors read.  A model of the
literals, together with the Boolean values, is a model of the problem: it is
evaluated exactly against the whole formula before ``sat`` is said.
"""
from __future__ import annotations

import time
from collections.abc import Callable

from certformat.clauses import ClausalForm, clausal_form
from certformat.formula import NEGATED, Problem, evaluate, relation_holds

from . import emit
from .characterize import PolyStore
from .covering import Covering, Literal, Model, Node, TimeLimit
from .order import to_certificate_order
from .roots import sign_at
from .search import TheoryAnswer, search

MINIMIZE_BUDGET, MINIMIZE_NODES = 0.25, 16
"""A conflict's minimization may explore MINIMIZE_BUDGET times the covering nodes its first
covering took, plus MINIMIZE_NODES (per lemma): counted in nodes, not seconds, so that the
certificate never depends on the machine's speed."""


class _Theory:
    """The covering procedure as the search's theory, over base-atom literals."""

    def __init__(self, cf: ClausalForm, order: list[int], store: PolyStore,
                 deadline: float | None, progress: Callable[[dict], None] | None):
        self.cf, self.store, self.deadline, self.progress = cf, store, deadline, progress
        self.polys = [to_certificate_order(a.poly, order) for a in cf.atoms]
        self.nodes = 0

    def literal(self, lit: int) -> Literal:
        atom = self.cf.atoms[abs(lit) - 1]
        rel = atom.rel if lit > 0 else NEGATED[atom.rel]
        return Literal(("~" if lit < 0 else "") + f"a{abs(lit)}", self.polys[abs(lit) - 1], rel)

    def cover(self, lits: tuple[int, ...]) -> Node | Model:
        run = Covering(self.store, [self.literal(l) for l in lits], self.deadline, self.progress)
        try:
            return run.run()
        finally:
            self.nodes += run.stats.nodes

    def __call__(self, assigned: tuple[int, ...]) -> TheoryAnswer:
        first = self.nodes
        result = self.cover(assigned)
        if isinstance(result, Model):
            return TheoryAnswer("sat", model=result)
        used = _literal_numbers(result)
        budget = self.nodes + MINIMIZE_BUDGET * (self.nodes - first) + MINIMIZE_NODES
        for lit in sorted(used, key=abs, reverse=True):
            if self.nodes > budget or len(used) == 1:
                break
            fewer = tuple(l for l in used if l != lit)
            smaller = self.cover(fewer)
            if isinstance(smaller, Node):
                result, used = smaller, _literal_numbers(smaller)
        return TheoryAnswer("conflict", tuple(sorted(used, key=abs)), evidence=result)


def _literal_numbers(tree: Node) -> tuple[int, ...]:
    """The clause-literal numbers of the literals a covering tree uses."""
    out = []
    for lit in tree.literals():
        k = int(lit.name.lstrip("~")[1:])
        out.append(-k if lit.name.startswith("~") else k)
    return tuple(sorted(out, key=abs))


def prove_boolean(problem: Problem, order: list[int], deadline: float | None,
                  progress: Callable[[dict], None] | None = None):
    """``('sat', witness text, point, bools)``, ``('unsat', certificate text, stats)`` or
    ``('unknown', reason, stats)`` for a problem of any Boolean structure."""
    cf = clausal_form(problem)
    store = PolyStore(len(problem.variables))
    theory = _Theory(cf, order, store, deadline, progress)
    start, owners = [], []
    for index, clauses in enumerate(cf.top, 1):
        start += clauses
        owners += [index] * len(clauses)
    start += cf.definitions
    owners += [None] * len(cf.definitions)
    nvars = len(cf.atoms) + len(cf.bool_names) + cf.ndefs

    def should_stop() -> str | None:
        return "time limit" if deadline is not None and time.monotonic() > deadline else None

    try:
        result = search(start, owners, len(cf.atoms), nvars, theory, should_stop)
    except TimeLimit:
        return "unknown", "time limit", {"nodes": theory.nodes}
    stats = {"nodes": theory.nodes, "conflicts": result.conflicts,
             "theory_calls": result.theory_calls, "lemmas": len(result.lemmas),
             "steps": len(result.steps)}
    if result.answer == "unknown":
        return "unknown", result.reason, stats
    if result.answer == "sat":
        return _sat(problem, cf, order, result.model, result.assignment, stats)
    atoms = {f"a{k}": atom for k, atom in enumerate(cf.atoms, 1)}
    trees = [tree for _, tree in result.lemmas]
    steps = [[cf.literal_name(l) for l in step] for step in result.steps]
    text = emit.refutation_certificate(problem, order, store, trees, atoms, result.core, steps)
    return "unsat", text, stats


def _sat(problem: Problem, cf: ClausalForm, order: list[int], model: Model,
         assignment: list[int], stats: dict):
    """The witness, after evaluating the whole formula exactly at the model."""
    point = [None] * len(order)
    for k, j in enumerate(order):
        point[j] = model.point[k]
    m = len(cf.atoms)
    bools = {name: assignment[m + j] > 0 for j, name in enumerate(cf.bool_names, 1)}

    def atom_true(atom) -> bool:
        return relation_holds(atom.rel, sign_at(atom.poly, tuple(point)))

    if not evaluate(problem.formula(), atom_true, bools.get):
        return "unknown", "internal error: the model does not satisfy the problem", stats
    text = emit.sat_certificate(problem, order, model.point)
    text += "".join(f"bool {j} true\n" for j, name in enumerate(cf.bool_names, 1) if bools[name])
    return "sat", text, tuple(point), bools, stats
