"""Conflict-driven propositional search with a theory, and a trimmed RUP proof.

The search (conflict-driven clause learning: Marques-Silva & Sakallah 1999,
"GRASP"; two watched literals and activity-ordered decisions as is common
practice) runs over the clausal form of ``certformat.clauses``.  Whenever every
atom variable has a value, the theory is asked about the conjunction of the
atom literals: it answers ``sat`` with a model, or a *conflict*: a subset of the
literals that cannot hold together (a lemma, proven by a covering).  The lemma's
clause joins the clause database and the search goes on.

Every learned clause is implied by reverse unit propagation (RUP) from the
database at the time it was learned (first-UIP learning has this property), so
the refutation is the list of learned clauses ending in the empty clause.
:func:`trim` then walks the refutation backwards, keeping only the steps,
lemmas and assertions that the final conflict really depends on; the kept
assertions are the *unsat core*.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Callable, Sequence

Clause = tuple[int, ...]


@dataclass
class TheoryAnswer:
    kind: str                       # 'sat', 'conflict' or 'unknown'
    literals: tuple[int, ...] = ()  # for 'conflict': literals that cannot hold together
    evidence: object = None         # for 'conflict': the proof (a covering tree)
    model: object = None            # for 'sat'
    reason: str = ""                # for 'unknown'


@dataclass
class SearchResult:
    answer: str                     # 'sat', 'unsat' or 'unknown'
    model: object = None
    assignment: list[int] = field(default_factory=list)
    """For sat: the value (+1/-1) of every propositional variable, index 0 unused."""
    reason: str = ""
    lemmas: list[tuple[tuple[int, ...], object]] = field(default_factory=list)
    """(conflict literals, evidence) of each lemma the refutation needs."""
    steps: list[Clause] = field(default_factory=list)
    """The needed learned clauses in order; the last is the empty clause."""
    core: list[int] = field(default_factory=list)
    """1-based assertions whose top clauses the refutation needs."""
    conflicts: int = 0
    theory_calls: int = 0


class _Solver:
    """A small CDCL solver over variables 1..nvars with proof logging."""

    def __init__(self, nvars: int):
        self.nvars = nvars
        self.value: list[int] = [0] * (nvars + 1)     # +1 true, -1 false, 0 unassigned
        self.level: list[int] = [0] * (nvars + 1)
        self.reason: list[int] = [-1] * (nvars + 1)   # clause index or -1
        self.trail: list[int] = []
        self.limits: list[int] = []                   # trail length at each decision
        self.clauses: list[Clause] = []
        self.watches: dict[int, list[int]] = {}
        self.activity = [0.0] * (nvars + 1)
        self.phase = [-1] * (nvars + 1)
        self.bump = 1.0
        self.queue_head = 0
        self.learned: list[int] = []                  # clause indices of learned clauses

    def lit_value(self, lit: int) -> int:
        v = self.value[abs(lit)]
        return v if lit > 0 else -v

    def assign(self, lit: int, reason: int) -> None:
        var = abs(lit)
        self.value[var] = 1 if lit > 0 else -1
        self.level[var] = len(self.limits)
        self.reason[var] = reason
        self.phase[var] = self.value[var]
        self.trail.append(lit)

    def add(self, clause: Clause) -> int | None:
        """Add a clause; returns a conflicting clause index if it is falsified, else None."""
        clause = tuple(dict.fromkeys(clause))
        idx = len(self.clauses)
        self.clauses.append(clause)
        if not clause:
            return idx
        # watch two literals: prefer unassigned/true ones, then the deepest false ones
        order = sorted(clause, key=lambda l: (self.lit_value(l) != -1,
                                              self.level[abs(l)] if self.lit_value(l) == -1 else 1 << 30),
                       reverse=True)
        clause = tuple(order)
        self.clauses[idx] = clause
        for lit in clause[:2]:
            self.watches.setdefault(lit, []).append(idx)
        if len(clause) == 1 or self.lit_value(clause[1]) == -1:
            if self.lit_value(clause[0]) == -1:
                return idx
            if self.lit_value(clause[0]) == 0:
                self.assign(clause[0], idx)
        return None

    def propagate(self) -> int | None:
        """Unit propagation; returns a conflicting clause index or None."""
        while self.queue_head < len(self.trail):
            false_lit = -self.trail[self.queue_head]
            self.queue_head += 1
            watching = self.watches.get(false_lit, [])
            keep = []
            conflict = None
            for k, idx in enumerate(watching):
                if conflict is not None:
                    keep.append(idx)
                    continue
                clause = self.clauses[idx]
                if clause[0] == false_lit:
                    clause = (clause[1], clause[0]) + clause[2:]
                    self.clauses[idx] = clause
                if self.lit_value(clause[0]) == 1:
                    keep.append(idx)
                    continue
                for j in range(2, len(clause)):
                    if self.lit_value(clause[j]) != -1:
                        new = clause[j]
                        self.clauses[idx] = (clause[0], new) + clause[2:j] + (false_lit,) + clause[j + 1:]
                        self.watches.setdefault(new, []).append(idx)
                        break
                else:
                    keep.append(idx)
                    if self.lit_value(clause[0]) == -1:
                        conflict = idx
                    else:
                        self.assign(clause[0], idx)
            self.watches[false_lit] = keep
            if conflict is not None:
                return conflict
        return None

    def analyze(self, conflict: int) -> tuple[Clause, int]:
        """First-UIP learning: the learned clause and the level to jump back to."""
        current = len(self.limits)
        seen = set()
        learned: list[int] = []
        pending = 0
        clause = self.clauses[conflict]
        index = len(self.trail) - 1
        while True:
            for lit in clause:
                var = abs(lit)
                if var in seen or self.level[var] == 0:
                    continue
                seen.add(var)
                self.activity[var] += self.bump
                if self.level[var] == current:
                    pending += 1
                else:
                    learned.append(lit)
            while abs(self.trail[index]) not in seen:
                index -= 1
            lit = self.trail[index]
            index -= 1
            pending -= 1
            if pending == 0:
                learned.insert(0, -lit)
                break
            clause = [l for l in self.clauses[self.reason[abs(lit)]] if l != lit]
        self.bump *= 1.05
        back = max((self.level[abs(l)] for l in learned[1:]), default=0)
        return tuple(learned), back

    def backjump(self, level: int) -> None:
        if len(self.limits) <= level:
            return
        cut = self.limits[level]
        for lit in self.trail[cut:]:
            var = abs(lit)
            self.value[var] = 0
            self.reason[var] = -1
        del self.trail[cut:]
        del self.limits[level:]
        self.queue_head = min(self.queue_head, cut)

    def decide(self, candidates: Sequence[int]) -> bool:
        best = max((v for v in candidates if self.value[v] == 0),
                   key=lambda v: (self.activity[v], -v), default=None)
        if best is None:
            return False
        self.limits.append(len(self.trail))
        self.assign(best * self.phase[best], -1)
        return True


def search(start: list[Clause], owners: list[int | None], atom_count: int, nvars: int,
           theory: Callable[[tuple[int, ...]], TheoryAnswer],
           should_stop: Callable[[], str | None] = lambda: None) -> SearchResult:
    """Decide ``start`` (clauses with their owning assertion, None for definitions) modulo the theory."""
    solver = _Solver(nvars)
    kinds: list[tuple] = []        # per clause index: ('start', owner) | ('lemma', k) | ('step', k)
    lemmas: list[tuple[tuple[int, ...], object]] = []
    steps: list[Clause] = []
    result = SearchResult("unknown")

    def add(clause: Clause, kind: tuple) -> int | None:
        kinds.append(kind)
        return solver.add(clause)

    conflict = None
    for clause, owner in zip(start, owners):
        c = add(clause, ("start", owner))
        conflict = conflict if conflict is not None else c
    atoms = range(1, atom_count + 1)
    everything = range(1, nvars + 1)
    while True:
        stop = should_stop()
        if stop:
            result.reason = stop
            return result
        if conflict is None:
            conflict = solver.propagate()
        if conflict is not None:
            result.conflicts += 1
            top = max((solver.level[abs(l)] for l in solver.clauses[conflict]), default=0)
            solver.backjump(top)
            if not solver.limits:
                steps.append(())
                kinds.append(("step", len(steps) - 1))
                solver.clauses.append(())
                return trim(solver, kinds, lemmas, steps, result)
            learned, back = solver.analyze(conflict)
            solver.backjump(back)
            steps.append(learned)
            conflict = add(learned, ("step", len(steps) - 1))
            continue
        if solver.decide(atoms) or solver.decide(everything):
            continue
        result.theory_calls += 1
        assigned = tuple(v * solver.value[v] for v in atoms)
        answer = theory(assigned)
        if answer.kind == "sat":
            result.answer, result.model = "sat", answer.model
            result.assignment = list(solver.value)
            return result
        if answer.kind != "conflict":
            result.reason = answer.reason
            return result
        lemmas.append((answer.literals, answer.evidence))
        conflict = add(tuple(-l for l in answer.literals), ("lemma", len(lemmas) - 1))
        if conflict is None:
            conflict = solver.propagate()


def _antecedents(clauses: list[Clause], step: Clause) -> list[int]:
    """Indices of the clauses a unit-propagation refutation of ``¬step`` uses."""
    value: dict[int, bool] = {}
    reason: dict[int, int] = {}
    queue: list[int] = []
    occurs: dict[int, list[int]] = {}
    for idx, clause in enumerate(clauses):
        for lit in clause:
            occurs.setdefault(-lit, []).append(idx)

    def set_true(lit: int, why: int) -> bool:
        if value.get(abs(lit)) is not None:
            return value[abs(lit)] == (lit > 0)
        value[abs(lit)] = lit > 0
        reason[abs(lit)] = why
        queue.append(lit)
        return True

    def status(idx: int):
        free = None
        for lit in clauses[idx]:
            v = value.get(abs(lit))
            if v is None:
                if free is not None:
                    return "open", None
                free = lit
            elif v == (lit > 0):
                return "sat", None
        return ("unit", free) if free is not None else ("conflict", None)

    conflict = None
    for lit in step:
        set_true(-lit, -1)
    for idx, clause in enumerate(clauses):
        if conflict is None and len(clause) <= 1:
            st, lit = status(idx)
            if st == "conflict":
                conflict = idx
            elif st == "unit":
                set_true(lit, idx)
    head = 0
    while conflict is None and head < len(queue):
        lit = queue[head]
        head += 1
        for idx in occurs.get(lit, []):
            st, unit = status(idx)
            if st == "conflict":
                conflict = idx
                break
            if st == "unit":
                set_true(unit, idx)
    if conflict is None:
        raise RuntimeError("a learned clause is not implied by unit propagation")
    used, todo, seen = [], [conflict], set()
    while todo:
        idx = todo.pop()
        if idx in seen:
            continue
        seen.add(idx)
        used.append(idx)
        for lit in clauses[idx]:
            why = reason.get(abs(lit), -1)
            if why >= 0:
                todo.append(why)
    return used


def trim(solver: _Solver, kinds: list[tuple], lemmas, steps, result: SearchResult) -> SearchResult:
    """Keep only what the final empty clause depends on (backward check, common practice)."""
    clauses = [tuple(c) for c in solver.clauses]
    step_index = {k[1]: idx for idx, k in enumerate(kinds) if k[0] == "step"}
    needed_steps = {len(steps) - 1}
    needed_lemmas: set[int] = set()
    core: set[int] = set()
    for s in range(len(steps) - 1, -1, -1):
        if s not in needed_steps:
            continue
        idx = step_index[s]
        before = [i for i in range(idx) if kinds[i][0] != "step" or kinds[i][1] < s]
        sub = [clauses[i] for i in before]
        for j in _antecedents(sub, steps[s]):
            kind = kinds[before[j]]
            if kind[0] == "step":
                needed_steps.add(kind[1])
            elif kind[0] == "lemma":
                needed_lemmas.add(kind[1])
            elif kind[1] is not None:
                core.add(kind[1])
    result.answer = "unsat"
    result.steps = [steps[s] for s in sorted(needed_steps)]
    result.lemmas = [lemmas[k] for k in sorted(needed_lemmas)]
    result.core = sorted(core)
    return result
