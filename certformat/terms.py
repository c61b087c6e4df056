"""Exact polynomial terms and the input limits shared by both problem parsers.

Implements PROBLEMS.md §"From terms to atoms" and §"Limits": terms are exact
rational polynomials (python-flint ``fmpq_mpoly``) over the declared real
variables, generator ``i`` being the ``i``-th declared variable as in
:func:`certformat.formula.poly_context`; a comparison ``lhs ⋈ rhs`` becomes
``make_atom(integerized(lhs - rhs), ⋈)``, the canonical atom of formula.py.
Every parser evaluates its syntax tree with :func:`run`, which uses an
explicit stack, so deep input meets the nesting limit, never Python's.
"""
from __future__ import annotations

from fractions import Fraction
from types import GeneratorType

from flint import fmpq, fmpq_mpoly, fmpq_mpoly_ctx, fmpz
from lark.exceptions import UnexpectedCharacters, UnexpectedInput

from .errors import InputError
from .formula import BoolConst, Iff, make_atom, negate, poly_context, rational_poly_to_integer

MAX_FILE_BYTES = 64 * 2**20
MAX_NESTING = 10_000
MAX_NUMERAL_DIGITS = 100_000
MAX_DEGREE = 1_000
MAX_TERMS = 100_000
MAX_PRODUCT_PAIRS = 10_000_000


def fail(path: str, where, message: str, construct: str | None = None):
    """Raise the InputError for ``message`` at ``where``: a lark token, a lark
    tree (its ``meta``) or anything else with ``line`` and ``column``."""
    where = getattr(where, "meta", where)
    raise InputError(message, path, getattr(where, "line", None),
                     getattr(where, "column", None), construct)


def iff(a, b):
    """``a <-> b``, with a constant side folded away."""
    if isinstance(a, BoolConst):
        return b if a.value else negate(b)
    if isinstance(b, BoolConst):
        return a if b.value else negate(a)
    return Iff(a, b)


def syntax_error(err: UnexpectedInput, parser, text: str, path: str) -> InputError:
    """The InputError for a lark parse error, at the position lark reports it.

    An unexpected end of input is reported at the end of the file.
    """
    if isinstance(err, UnexpectedCharacters):
        found, expected = f"character {text[err.pos_in_stream]!r}", err.allowed or ()
    elif err.token.type in ("$END", "<EOF>"):
        line, column = text.count("\n") + 1, len(text) - text.rfind("\n")
        return InputError("unexpected end of file (unclosed parenthesis or unfinished "
                          "statement?)", path, line, column, "end of file")
    else:
        found, expected = repr(str(err.token)[:40]), err.expected or ()
    shown = sorted("end of file" if name == "$END" else
                   repr(parser.get_terminal(name).pattern.value)
                   if parser.get_terminal(name).pattern.type == "str" else name.lower()
                   for name in expected)
    hint = f", expected {' or '.join(shown)}" if 0 < len(shown) <= 6 else ""
    return InputError(f"unexpected {found}{hint}", path, err.line, err.column, "syntax")


def run(root, step, path: str):
    """The value of the tree ``root``, evaluated without Python recursion.

    ``step(node)`` returns either the node's value, or a generator that yields
    the child nodes it needs, receives their values, and returns the node's
    value.  At most ``MAX_NESTING`` generators are pending at once.
    """
    value = step(root)
    if type(value) is not GeneratorType:
        return value
    stack, value = [value], None
    while True:
        try:
            child = stack[-1].send(value)
        except StopIteration as done:
            stack.pop()
            if not stack:
                return done.value
            value = done.value
            continue
        value = step(child)
        if type(value) is GeneratorType:
            if len(stack) >= MAX_NESTING:
                fail(path, child, f"expression nested deeper than {MAX_NESTING} levels",
                     "nesting")
            stack.append(value)
            value = None


class Arithmetic:
    """Exact arithmetic on rational polynomials in ``nvars`` variables within the limits.

    Values are never modified in place, so they may be shared freely.
    """

    def __init__(self, nvars: int, path: str):
        self.ctx = fmpq_mpoly_ctx.get(tuple(f"x{i}" for i in range(1, max(nvars, 1) + 1)), "lex")
        self.integer_ctx = poly_context(nvars)
        self.nvars = nvars
        self.path = path

    def variable(self, index: int) -> fmpq_mpoly:
        return self.ctx.gen(index)

    def number(self, text: str, where) -> fmpq_mpoly:
        """The exact value of ``123``, ``1.25`` or ``1.5e-3`` (decimal, never rounded)."""
        mantissa, _, exponent = text.lower().partition("e")
        whole, _, fraction = mantissa.partition(".")
        if len(whole) + len(fraction) + len(exponent) > MAX_NUMERAL_DIGITS:
            fail(self.path, where, f"numeral longer than {MAX_NUMERAL_DIGITS} digits", "numeral")
        shift = int(exponent or 0) - len(fraction)
        if abs(shift) > MAX_NUMERAL_DIGITS:
            fail(self.path, where, f"decimal exponent beyond {MAX_NUMERAL_DIGITS}", "numeral")
        return self.ctx.constant(fmpq(fmpz(whole + fraction)) * fmpq(10) ** shift)

    def checked(self, poly: fmpq_mpoly, where) -> fmpq_mpoly:
        if len(poly) > MAX_TERMS:
            fail(self.path, where, f"polynomial with more than {MAX_TERMS} terms", "terms")
        return poly

    def add(self, a, b, where):
        return self.checked(a + b, where)

    def sub(self, a, b, where):
        return self.checked(a - b, where)

    def mul(self, a, b, where):
        if a.total_degree() + b.total_degree() > MAX_DEGREE:
            fail(self.path, where, f"polynomial degree above {MAX_DEGREE}", "degree")
        if len(a) * len(b) > MAX_PRODUCT_PAIRS:
            fail(self.path, where, f"product of more than {MAX_PRODUCT_PAIRS} term pairs", "terms")
        return self.checked(a * b, where)

    def power(self, base, exponent: int, where):
        """``base ** exponent`` by repeated squaring, each product within the limits."""
        if base.total_degree() * exponent > MAX_DEGREE:
            fail(self.path, where, f"polynomial degree above {MAX_DEGREE}", "degree")
        result = self.ctx.constant(1)
        while exponent:
            if exponent & 1:
                result = self.mul(result, base, where)
            exponent >>= 1
            if exponent:
                base = self.mul(base, base, where)
        return result

    def divide(self, a, b, where):
        """``a / b`` for a constant ``b`` other than zero (the only division allowed)."""
        if not b.is_constant():
            fail(self.path, where, "division by a non-constant term", "/")
        if b.is_zero():
            fail(self.path, where, "division by zero", "/")
        return a * (1 / b.leading_coefficient())

    def atom(self, difference: fmpq_mpoly, rel: str):
        """The canonical atom or constant equivalent to ``difference ⋈ 0``."""
        terms = {e: Fraction(int(c.p), int(c.q)) for e, c in difference.to_dict().items()}
        return make_atom(self.integer_ctx.from_dict(rational_poly_to_integer(terms)), rel)
