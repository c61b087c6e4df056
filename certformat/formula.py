"""The exact formula model every problem is parsed into (DESIGN §3).

A problem is a Boolean formula over *atoms* ``p ⋈ 0``.  Every atom is kept in
one canonical form, established once, by :func:`make_atom`:

* ``p`` is a non-constant integer polynomial, primitive (content 1);
* the leading coefficient of ``p`` in lex order of the problem's declared
  variables is positive (a negation flips the relation);
* ``⋈`` is one of ``<  <=  =  !=  >=  >``.

Atoms whose polynomial is constant are decided at construction and become
:class:`BoolConst`.  Polynomials are python-flint ``fmpz_mpoly`` objects in the
context :func:`poly_context` of the problem's variables (declaration order).
Generators are named ``x1, x2, ...`` (the k-th declared variable is ``xk``, as the
certificate's variables are named); the user's names live in
:attr:`Problem.variables`, so no user spelling can collide with flint syntax.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction
from functools import cache

from flint import fmpz, fmpz_mpoly, fmpz_mpoly_ctx

RELATIONS = ("<", "<=", "=", "!=", ">=", ">")

NEGATED = {"<": ">=", "<=": ">", "=": "!=", "!=": "=", ">=": "<", ">": "<="}
"""The relation of ``not (p ⋈ 0)``."""

MIRRORED = {"<": ">", "<=": ">=", "=": "=", "!=": "!=", ">=": "<=", ">": "<"}
"""The relation of ``(-p) ⋈' 0`` equivalent to ``p ⋈ 0``."""


@cache
def poly_context(nvars: int) -> fmpz_mpoly_ctx:
    """The flint context of polynomials in ``x1 .. xn``, lex order (one unused generator when n = 0)."""
    return fmpz_mpoly_ctx.get(tuple(f"x{i}" for i in range(1, max(nvars, 1) + 1)), "lex")


def relation_holds(rel: str, sign: int) -> bool:
    """Whether ``v ⋈ 0`` holds for a value ``v`` of the given sign (-1, 0, 1)."""
    return {
        "<": sign < 0, "<=": sign <= 0, "=": sign == 0,
        "!=": sign != 0, ">=": sign >= 0, ">": sign > 0,
    }[rel]


# --------------------------------------------------------------------------
# Formula nodes.  Frozen and hashable; And/Or hold tuples.

@dataclass(frozen=True)
class BoolConst:
    value: bool


@dataclass(frozen=True)
class BoolVar:
    """A declared Boolean constant (SMT-LIB ``(declare-fun b () Bool)``)."""
    name: str


@dataclass(frozen=True, eq=False)
class Atom:
    """``poly ⋈ 0`` in canonical form; build it with :func:`make_atom`."""
    poly: fmpz_mpoly
    rel: str
    text: str = field(default="", repr=False)
    """``str(poly)`` when the caller already has it."""

    def __post_init__(self):
        """A hashable identity, kept: (variable count, canonical text of the polynomial, relation)."""
        object.__setattr__(self, "key", (self.poly.context().nvars(), self.text or str(self.poly), self.rel))
        object.__setattr__(self, "hash", hash(self.key))

    def __eq__(self, other):
        return isinstance(other, Atom) and self.key == other.key

    def __hash__(self):
        return self.hash


@dataclass(frozen=True)
class Not:
    arg: "Formula"


@dataclass(frozen=True)
class And:
    args: tuple["Formula", ...]


@dataclass(frozen=True)
class Or:
    args: tuple["Formula", ...]


@dataclass(frozen=True)
class Iff:
    left: "Formula"
    right: "Formula"


Formula = BoolConst | BoolVar | Atom | Not | And | Or | Iff


@dataclass(frozen=True)
class Assertion:
    """One assertion of the problem, with where it came from."""
    formula: Formula
    line: int
    text: str


@dataclass
class Problem:
    """A parsed problem: declarations, assertions and metadata.

    ``status`` is the declared expected answer (``sat``/``unsat``/``unknown``)
    kept as metadata only; nothing decides with it.
    """
    path: str
    sha256: str
    variables: tuple[str, ...]
    assertions: list[Assertion]
    bool_variables: tuple[str, ...] = ()
    status: str | None = None
    logic: str | None = None
    info: dict[str, str] = field(default_factory=dict)

    @property
    def context(self) -> fmpz_mpoly_ctx:
        return poly_context(len(self.variables))

    def formula(self) -> Formula:
        """The conjunction of all assertions."""
        return conjunction([a.formula for a in self.assertions])

    def atoms(self) -> list[Atom]:
        """The distinct atoms, in order of first occurrence."""
        seen: dict[Atom, None] = {}
        for a in self.assertions:
            for atom in atoms_of(a.formula):
                seen.setdefault(atom, None)
        return list(seen)


# --------------------------------------------------------------------------
# Construction in canonical form.

def rational_poly_to_integer(terms: dict[tuple[int, ...], Fraction]) -> dict[tuple[int, ...], int]:
    """Clear denominators by their positive lcm: the sign of the value is unchanged."""
    from math import lcm
    den = 1
    for c in terms.values():
        den = lcm(den, c.denominator)
    return {e: int(c * den) for e, c in terms.items() if c != 0}


def make_atom(poly: fmpz_mpoly, rel: str) -> Atom | BoolConst:
    """The canonical atom equivalent to ``poly ⋈ 0`` (module docstring)."""
    if rel not in RELATIONS:
        raise ValueError(f"unknown relation {rel!r}")
    if poly.is_constant():
        value = int(poly.leading_coefficient()) if not poly.is_zero() else 0
        return BoolConst(relation_holds(rel, (value > 0) - (value < 0)))
    content = poly.content()
    if content != 1:
        poly = fmpz_mpoly_exact_div(poly, content)
    if poly.leading_coefficient() < 0:
        poly, rel = -poly, MIRRORED[rel]
    return Atom(poly, rel)


def fmpz_mpoly_exact_div(poly: fmpz_mpoly, c: fmpz) -> fmpz_mpoly:
    """``poly / c`` for an integer ``c`` dividing every coefficient."""
    ctx = poly.context()
    return ctx.from_dict({e: v // c for e, v in poly.to_dict().items()})


def negate(f: Formula) -> Formula:
    """``not f``, pushed into atoms and constants (other nodes keep a Not)."""
    if isinstance(f, BoolConst):
        return BoolConst(not f.value)
    if isinstance(f, Atom):
        return Atom(f.poly, NEGATED[f.rel], f.key[1])
    if isinstance(f, Not):
        return f.arg
    return Not(f)


def conjunction(args) -> Formula:
    """``and`` of the arguments, flattened, with constants folded."""
    out: list[Formula] = []
    for a in args:
        if isinstance(a, BoolConst):
            if not a.value:
                return BoolConst(False)
            continue
        out.extend(a.args if isinstance(a, And) else (a,))
    if not out:
        return BoolConst(True)
    return out[0] if len(out) == 1 else And(tuple(out))


def disjunction(args) -> Formula:
    """``or`` of the arguments, flattened, with constants folded."""
    out: list[Formula] = []
    for a in args:
        if isinstance(a, BoolConst):
            if a.value:
                return BoolConst(True)
            continue
        out.extend(a.args if isinstance(a, Or) else (a,))
    if not out:
        return BoolConst(False)
    return out[0] if len(out) == 1 else Or(tuple(out))


def atoms_of(f: Formula):
    """The atoms of ``f``, depth first, with repetitions."""
    stack = [f]
    while stack:
        g = stack.pop()
        if isinstance(g, Atom):
            yield g
        elif isinstance(g, Not):
            stack.append(g.arg)
        elif isinstance(g, (And, Or)):
            stack.extend(reversed(g.args))
        elif isinstance(g, Iff):
            stack.extend((g.right, g.left))


def formula_depth(f: Formula) -> int:
    """Nesting depth of the Boolean structure (an atom or constant has depth 1)."""
    deepest, stack = 0, [(f, 1)]
    while stack:
        g, d = stack.pop()
        deepest = max(deepest, d)
        kids = (g.arg,) if isinstance(g, Not) else g.args if isinstance(g, (And, Or)) else \
            (g.left, g.right) if isinstance(g, Iff) else ()
        stack.extend((k, d + 1) for k in kids)
    return deepest


def evaluate(f: Formula, atom_value, bool_value=lambda name: False) -> bool:
    """Truth of ``f`` given truth values of its atoms and Boolean variables."""
    if isinstance(f, BoolConst):
        return f.value
    if isinstance(f, BoolVar):
        return bool_value(f.name)
    if isinstance(f, Atom):
        return atom_value(f)
    if isinstance(f, Not):
        return not evaluate(f.arg, atom_value, bool_value)
    if isinstance(f, And):
        return all(evaluate(a, atom_value, bool_value) for a in f.args)
    if isinstance(f, Or):
        return any(evaluate(a, atom_value, bool_value) for a in f.args)
    if isinstance(f, Iff):
        return evaluate(f.left, atom_value, bool_value) == evaluate(f.right, atom_value, bool_value)
    raise TypeError(f"not a formula node: {f!r}")
