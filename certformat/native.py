"""The native problem syntax (``.tess``), read into the exact formula model.

Implements PROBLEMS.md §"Native syntax": native.lark is the grammar; this
module checks sorts (real expressions vs formulas), resolves names (declared
before use) and builds each comparison with terms.Arithmetic, exactly as the
SMT-LIB reader does.
"""
from __future__ import annotations

from flint import fmpq_mpoly
from lark import Lark, Token
from lark.exceptions import UnexpectedInput

from .formula import Assertion, BoolConst, BoolVar, Problem, conjunction, disjunction, negate
from .terms import MAX_DEGREE, Arithmetic, fail, iff, run, syntax_error

_PARSER = Lark.open("native.lark", rel_to=__file__, parser="lalr", lexer="basic",
                    propagate_positions=True)
_FOLD = {"+": "add", "-": "sub", "*": "mul", "/": "divide"}


def parse_native(text: str, path: str = "<input>", sha256: str = "") -> Problem:
    """The problem stated by the native-syntax text ``text``."""
    try:
        tree = _PARSER.parse(text)
    except UnexpectedInput as err:
        raise syntax_error(err, _PARSER, text, path) from None
    reader = _Reader(text, path, sum(len(s.children) for s in tree.children if s.data == "real"))
    for statement in tree.children:
        getattr(reader, statement.data)(statement)
    return Problem(path, sha256, tuple(reader.reals), reader.assertions, tuple(reader.bools),
                   reader.status)


class _Reader:
    """The state of one file being read: declared names, assertions, expectation."""

    def __init__(self, text: str, path: str, nreals: int):
        self.text, self.path = text, path
        self.arith = Arithmetic(nreals, path)
        self.names: dict[str, object] = {}
        self.reals: list[str] = []
        self.bools: list[str] = []
        self.assertions: list[Assertion] = []
        self.status: str | None = None

    def declare(self, token: Token, value):
        if token in self.names:
            fail(self.path, token, f"'{token}' is already declared", "declaration")
        self.names[str(token)] = value

    def real(self, statement):
        for token in statement.children:
            self.declare(token, self.arith.variable(len(self.reals)))
            self.reals.append(str(token))

    def bool(self, statement):
        for token in statement.children:
            self.declare(token, BoolVar(str(token)))
            self.bools.append(str(token))

    def expect(self, statement):
        token = statement.children[0]
        if token not in ("sat", "unsat", "unknown") or self.status is not None:
            fail(self.path, token, "expected one 'expect sat', 'expect unsat' or "
                                   "'expect unknown'", "expect")
        self.status = str(token)

    def assertion(self, statement):
        node = statement.children[0]
        formula = self.formula(node, run(node, self.step, self.path))
        meta = statement.meta
        text = " ".join(self.text[meta.start_pos:meta.end_pos].split())
        self.assertions.append(Assertion(formula, meta.line,
                                         text if len(text) <= 200 else text[:197] + "..."))

    # ------------------------------------------------------------ expressions

    def formula(self, where, value):
        if type(value) is fmpq_mpoly:
            fail(self.path, where, "expected a formula, got a real expression", "sort")
        return value

    def term(self, where, value):
        if type(value) is not fmpq_mpoly:
            fail(self.path, where, "expected a real expression, got a formula", "sort")
        return value

    def step(self, node):
        """The value of ``node``, or a generator computing it (see terms.run)."""
        kind = node.data
        if kind == "number":
            return self.arith.number(node.children[0], node.children[0])
        if kind == "name":
            token = node.children[0]
            if token not in self.names:
                fail(self.path, token, f"unknown name '{token}' (declare it first)", "name")
            return self.names[token]
        if kind in ("true", "false"):
            return BoolConst(kind == "true")
        return self.compound(node)

    def compound(self, node):
        values = []
        for child in node.children:
            values.append(child if type(child) is Token else (yield child))
        return getattr(self, "op_" + node.data)(node.children, values)

    def op_not(self, nodes, values):
        return negate(self.formula(nodes[0], values[0]))

    def op_conjunction(self, nodes, values):
        return conjunction([self.formula(n, v) for n, v in zip(nodes, values)])

    def op_disjunction(self, nodes, values):
        return disjunction([self.formula(n, v) for n, v in zip(nodes, values)])

    def op_implies(self, nodes, values):
        return disjunction([negate(self.formula(nodes[0], values[0])),
                            self.formula(nodes[1], values[1])])

    def op_iff(self, nodes, values):
        return iff(*(self.formula(n, v) for n, v in zip(nodes, values)))

    def op_comparison(self, nodes, values):
        terms = [self.term(n, v) for n, v in zip(nodes[::2], values[::2])]
        return conjunction([self.arith.atom(self.arith.sub(a, b, rel), str(rel))
                            for a, rel, b in zip(terms, nodes[1::2], terms[1:])])

    def op_sum(self, nodes, values):
        result = self.term(nodes[0], values[0])
        for op, node, value in zip(nodes[1::2], nodes[2::2], values[2::2]):
            result = getattr(self.arith, _FOLD[op])(result, self.term(node, value), op)
        return result

    op_product = op_sum

    def op_negative(self, nodes, values):
        return -self.term(nodes[1], values[1])

    def op_power(self, nodes, values):
        exponent = nodes[1]
        if not exponent.isdigit():
            fail(self.path, exponent, "the exponent must be a whole number", "^")
        if len(exponent) > 4 or int(exponent) > MAX_DEGREE:
            fail(self.path, exponent, f"exponent above {MAX_DEGREE}", "^")
        return self.arith.power(self.term(nodes[0], values[0]), int(exponent), exponent)
