"""The prover's entry point: decide a problem and write its certificate or witness.

Every problem goes the same way: the checker's own clausal form
(:mod:`certformat.clauses`), the conflict-driven search of :mod:`prover.search`
with the covering procedure (:mod:`prover.covering`) as theory
(:mod:`prover.boolean`), and the certificate or witness of :mod:`prover.emit`.
A pure conjunction is the special case where every clause is a unit: the search
calls the theory once, and the covering tree becomes the one lemma.

Every answer is exact: a model is re-evaluated against the whole formula before
``sat`` is said, and anything unexpected ends in ``unknown`` with the reason.
"""
from __future__ import annotations

import signal
import threading
import time
from collections.abc import Callable
from dataclasses import dataclass, field

from certformat.clauses import clausal_form
from certformat.formula import Atom, Problem

from .boolean import prove_boolean
from .characterize import Nullification
from .covering import TimeLimit
from .numbers import RealAlg
from .order import choose_order
from .roots import sign_at


@dataclass
class ProveResult:
    answer: str
    """``sat``, ``unsat`` or ``unknown``."""
    reason: str = ""
    """Why the answer is ``unknown``."""
    certificate_text: str | None = None
    """The certificate (unsat) or witness (sat) text."""
    model: dict[str, RealAlg] | None = None
    """For sat: each real variable's value."""
    bool_model: dict[str, bool] | None = None
    """For sat: each Boolean variable's value."""
    atom_signs: list[tuple[Atom, int]] | None = None
    """For sat: each atom of the problem with the sign of its polynomial at the model."""
    stats: dict = field(default_factory=dict)


class _HardDeadline:
    """Interrupt a long kernel computation at the deadline (SIGALRM raises TimeLimit).

    The search checks the deadline between steps; this catches the steps that run long in
    Python code.  Signals exist only in the main thread: elsewhere (e.g. a Dask worker thread)
    the cooperative checks alone apply.
    """

    def __init__(self, timeout: float | None):
        self.armed = (timeout is not None and
                      threading.current_thread() is threading.main_thread())
        if self.armed:
            self.previous = signal.signal(signal.SIGALRM, self._expire)
            signal.setitimer(signal.ITIMER_REAL, max(timeout, 0) + 0.5)

    @staticmethod
    def _expire(signum, frame):
        raise TimeLimit()

    def cancel(self) -> None:
        if self.armed:
            signal.setitimer(signal.ITIMER_REAL, 0)
            signal.signal(signal.SIGALRM, self.previous)


def unit_equations(problem: Problem) -> list:
    """Polynomials that every model must zero: the top-level unit clauses ``p = 0``."""
    cf = clausal_form(problem)
    return [cf.atoms[c[0] - 1].poly for clauses in cf.top for c in clauses
            if len(c) == 1 and 0 < c[0] <= len(cf.atoms) and cf.atoms[c[0] - 1].rel == "="]


def prove(problem: Problem, timeout: float | None = None,
          progress: Callable[[dict], None] | None = None) -> ProveResult:
    """Decide ``problem`` (module docstring); never raises for a well-formed problem."""
    started = time.monotonic()
    deadline = started + timeout if timeout is not None else None
    result = ProveResult("unknown")
    alarm = _HardDeadline(timeout)
    try:
        order = choose_order([a.poly for a in problem.atoms()], len(problem.variables),
                             unit_equations(problem))
        outcome = prove_boolean(problem, order, deadline, progress)
        if outcome[0] == "sat":
            _, text, point, bools, result.stats = outcome
            result = ProveResult("sat", certificate_text=text, bool_model=bools,
                                 model=dict(zip(problem.variables, point)),
                                 atom_signs=[(a, sign_at(a.poly, point)) for a in problem.atoms()],
                                 stats=result.stats)
        elif outcome[0] == "unsat":
            result = ProveResult("unsat", certificate_text=outcome[1], stats=outcome[2])
        else:
            result = ProveResult("unknown", outcome[1], stats=outcome[2])
    except TimeLimit:
        result = ProveResult("unknown", "time limit")
    except Nullification as err:
        result = ProveResult("unknown", str(err))
    except RecursionError:
        result = ProveResult("unknown", "internal error: recursion too deep")
    except Exception as err:  # never a guess: any inconsistency is an unknown with its reason
        result = ProveResult("unknown", f"internal error: {type(err).__name__}: {err}")
    finally:
        alarm.cancel()
    result.stats["time"] = time.monotonic() - started
    return result


def prove_file(path: str, timeout: float | None = None,
               progress: Callable[[dict], None] | None = None) -> ProveResult:
    """Load the problem file at ``path`` and :func:`prove` it."""
    from certformat.problem import load_problem
    return prove(load_problem(path), timeout, progress)
