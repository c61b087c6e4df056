"""The clausal form of a problem, built the same way by prover and checker (SPEC §4, §7).

Propositional variables, numbered from 1:

* atoms ``a1 … am``: the distinct *base atoms* of the problem in order of first
  occurrence, where an atom's relation is one of ``< = >``; an atom written
  with ``<= != >=`` is the negation of its complement (``p <= 0`` is ``~(p > 0)``);
* Boolean variables ``b1 … bk`` in declaration order (numbers m+1 … m+k);
* definitions ``d1, d2, …`` (numbers m+k+1, …) for compound subformulas, in the
  order a left-to-right, depth-first walk of the assertions first meets them.

Each assertion contributes *top* clauses (an ``and`` is split, an ``or`` is one
clause, a literal a unit clause); a compound subformula in a clause gets a
definition ``d ↔ subformula`` by the usual equivalence clauses (Tseitin 1968).
Definition clauses only name subformulas, so adding all of them preserves
satisfiability of any set of top clauses (SOUNDNESS.md, rule CLAUSES).
"""
from __future__ import annotations

from dataclasses import dataclass, field

from .formula import NEGATED, And, Atom, BoolConst, BoolVar, Iff, Not, Or, Problem

BASE_RELATIONS = ("<", "=", ">")

Clause = tuple[int, ...]


def base_literal(atom: Atom) -> tuple[Atom, bool]:
    """``(base atom, polarity)`` with ``atom ≡ base`` (True) or ``atom ≡ ¬base`` (False)."""
    if atom.rel in BASE_RELATIONS:
        return atom, True
    return Atom(atom.poly, NEGATED[atom.rel], atom.key[1]), False


@dataclass
class ClausalForm:
    atoms: list[Atom]
    bool_names: tuple[str, ...]
    top: list[list[Clause]]
    """Top clauses of each assertion, in file order."""
    definitions: list[Clause] = field(default_factory=list)
    ndefs: int = 0

    def literal_name(self, lit: int) -> str:
        """``aK``, ``~bK``, ``dK`` … for a signed variable number."""
        v, m, k = abs(lit), len(self.atoms), len(self.bool_names)
        name = f"a{v}" if v <= m else f"b{v - m}" if v <= m + k else f"d{v - m - k}"
        return name if lit > 0 else "~" + name

    def variable_number(self, name: str) -> int | None:
        """The number of ``aK``/``bK``/``dK``, or None if there is no such variable."""
        m, k = len(self.atoms), len(self.bool_names)
        kind, idx = name[0], int(name[1:])
        limit = {"a": m, "b": k, "d": self.ndefs}[kind]
        if not 1 <= idx <= limit:
            return None
        return idx + {"a": 0, "b": m, "d": m + k}[kind]


class _Encoder:
    def __init__(self, problem: Problem):
        self.atom_index: dict[Atom, int] = {}
        self.atoms: list[Atom] = []
        self.base_of = {a: base_literal(a) for a in problem.atoms()}
        for base, _ in self.base_of.values():
            if base not in self.atom_index:
                self.atoms.append(base)
                self.atom_index[base] = len(self.atoms)
        self.bools = {name: i for i, name in enumerate(problem.bool_variables, 1)}
        self.offset = len(self.atoms) + len(self.bools)
        self.defs: dict[object, int] = {}
        self.def_clauses: list[Clause] = []

    def literal(self, f) -> int:
        """A literal equivalent to ``f``, defining it first if compound."""
        if isinstance(f, Atom):
            base, positive = self.base_of[f]
            v = self.atom_index[base]
            return v if positive else -v
        if isinstance(f, BoolVar):
            return len(self.atoms) + self.bools[f.name]
        if isinstance(f, Not):
            return -self.literal(f.arg)
        if f in self.defs:
            return self.defs[f]
        if isinstance(f, (And, Or)):
            args = [self.literal(g) for g in f.args]
        elif isinstance(f, Iff):
            args = [self.literal(f.left), self.literal(f.right)]
        d = self.offset + len(self.defs) + 1
        self.defs[f] = d
        if isinstance(f, BoolConst):
            self.def_clauses.append((d,) if f.value else (-d,))
        elif isinstance(f, And):
            self.def_clauses += [(-d, a) for a in args] + [(d, *(-a for a in args))]
        elif isinstance(f, Or):
            self.def_clauses += [(-d, *args)] + [(d, -a) for a in args]
        else:
            l, r = args
            self.def_clauses += [(-d, -l, r), (-d, l, -r), (d, l, r), (d, -l, -r)]
        return d

    def top(self, f) -> list[Clause]:
        """Top clauses of one assertion."""
        if isinstance(f, BoolConst):
            return [] if f.value else [()]
        if isinstance(f, And):
            return [c for g in f.args for c in self.top(g)]
        if isinstance(f, Or):
            return [tuple(self.literal(g) for g in f.args)]
        return [(self.literal(f),)]


def clausal_form(problem: Problem) -> ClausalForm:
    """The clausal form of ``problem`` described in the module docstring."""
    enc = _Encoder(problem)
    top = [enc.top(a.formula) for a in problem.assertions]
    return ClausalForm(enc.atoms, tuple(enc.bools), top, enc.def_clauses, len(enc.defs))
