"""Replay of the propositional refutation: rules CORE and RUP (SOUNDNESS.md §5).

Clauses are tuples of non-zero integers (a negative integer is a negated
variable), numbered as in ``certformat.clauses``.
"""
from __future__ import annotations

from certformat.certificate import Inference

from .limits import Limits, Rejection


def unit_propagation_conflicts(clauses: list[tuple[int, ...]], assumed: set[int]) -> bool:
    """Whether unit propagation from the ``assumed`` literals falsifies some clause."""
    true = set(assumed)
    if any(-lit in true for lit in true):
        return True
    changed = True
    while changed:
        changed = False
        for clause in clauses:
            if any(lit in true for lit in clause):
                continue
            open_lits = {lit for lit in clause if -lit not in true}
            if not open_lits:
                return True
            if len(open_lits) == 1:
                true.add(next(iter(open_lits)))
                changed = True
    return False


def check_rup(clauses: list[tuple[int, ...]], step: tuple[int, ...], line: int) -> None:
    """Rule RUP: assuming every literal of ``step`` false, unit propagation reaches a conflict."""
    if not unit_propagation_conflicts(clauses, {-lit for lit in step}):
        raise Rejection("RUP", "the clause does not follow by unit propagation", line)


def check_refutation(start: list[tuple[int, ...]], steps: list[tuple[Inference, tuple[int, ...]]],
                     limits: Limits) -> None:
    """Rule RUP over all steps: each follows from the clauses before it; the last is empty."""
    clauses = list(start)
    if not steps:
        raise Rejection("RUP", "the refutation is missing ('infer false')", 0)
    for inference, clause in steps:
        limits.tick(inference.line)
        check_rup(clauses, clause, inference.line)
        clauses.append(clause)
    last, clause = steps[-1]
    if clause:
        raise Rejection("RUP", "the refutation must end with 'infer false'", last.line)
