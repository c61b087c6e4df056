"""SMT-LIB 2.6 scripts of the QF_NRA fragment, read into the exact formula model.

Implements PROBLEMS.md §"SMT-LIB fragment" (a subset of The SMT-LIB Standard,
version 2.6): smtlib.lark gives the s-expression syntax; this module gives the
commands and terms their meaning.  Symbols are Real or Bool constants,
``define-fun`` is expanded by substitution (a body sees its parameters and the
symbols defined before it, so it cannot be recursive), ``let`` binds in
parallel with lexical shadowing.

Real-valued ``ite`` is eliminated soundly.  A Real term is evaluated to a list
of *cases* ``(guard, polynomial)`` whose guards are exhaustive and pairwise
exclusive: ``ite(c, a, b)`` has the cases ``(c ∧ g, p)`` for the cases
``(g, p)`` of ``a`` and ``(¬c ∧ g, p)`` for those of ``b``; arithmetic takes
every pair of cases and conjoins their guards.  A comparison of terms with
cases ``(g_i, p_i)`` and ``(h_j, q_j)`` becomes ``⋁_ij (g_i ∧ h_j ∧ p_i - q_j ⋈ 0)``,
so ``ite(c, a, b) ⋈ r`` becomes ``(c ∧ a ⋈ r) ∨ (¬c ∧ b ⋈ r)``.  Exactly one
guard holds at every point, hence the disjunction is equivalent to the
comparison.  Cases multiply (nested ``ite``, products of ``ite`` terms); a term
with more than ``MAX_ITE_CASES`` cases is rejected rather than blown up.
"""
from __future__ import annotations

from collections import namedtuple
from functools import reduce

from lark import Lark, Token, Transformer
from lark.exceptions import UnexpectedInput

from .formula import (And, Assertion, BoolConst, BoolVar, Iff, Not, Or, Problem,
                      conjunction, disjunction, negate)
from .terms import Arithmetic, fail, iff, run, syntax_error

MAX_ITE_CASES = 256
MAX_EXPANSION = 10_000_000
"""Nodes of ``define-fun`` bodies copied, in total, by the calls of one file."""
MAX_FORMULA_NODES = 2_000_000
"""Nodes of the Boolean structure of all assertions, counted as a tree."""

TRUE, FALSE = BoolConst(True), BoolConst(False)
IGNORED = {"set-option", "get-info", "get-option", "get-model", "get-value", "get-assignment",
           "get-proof", "get-unsat-core", "get-unsat-assumptions", "get-assertions", "echo"}
UNSUPPORTED = {"push", "pop", "reset", "reset-assertions", "check-sat-assuming", "declare-sort",
               "define-sort", "define-fun-rec", "define-funs-rec", "declare-datatype",
               "declare-datatypes", "define-const"}
QUERY = {"assert", "declare-fun", "declare-const", "define-fun"}


class SList:
    """A parenthesized list of the script: its items and where it starts and ends."""
    __slots__ = ("items", "line", "column", "start", "end")

    def __init__(self, children):
        first, last = children[0], children[-1]
        self.items = children[1:-1]
        self.line, self.column = first.line, first.column
        self.start, self.end = first.start_pos, last.end_pos


class _Lists(Transformer):
    """Parser callbacks building the s-expressions bottom-up while parsing (no tree walk)."""

    def list(self, children):
        return SList(children)

    def start(self, children):
        return children


_PARSER = Lark.open("smtlib.lark", rel_to=__file__, parser="lalr", lexer="basic",
                    transformer=_Lists())


_Function = namedtuple("_Function", "params sort body size order")
"""A ``define-fun`` with parameters ((name, sort), ...), expanded at each call."""


def parse_smtlib(text: str, path: str = "<input>", sha256: str = "") -> Problem:
    """The problem stated by the SMT-LIB script ``text`` (module docstring)."""
    try:
        commands = _PARSER.parse(text)
    except UnexpectedInput as err:
        raise syntax_error(err, _PARSER, text, path) from None
    script = _Script(text, path, _count_reals(commands))
    for command in commands:
        if command.items and command.items[0] == "exit":
            break
        script.command(command)
    if len(script.reals) != script.arith.nvars:
        raise RuntimeError("Real declarations miscounted")  # a bug, never bad input
    return Problem(path, sha256, tuple(script.reals), script.assertions, tuple(script.bools),
                   script.status, script.logic, script.info)


def _count_reals(commands) -> int:
    """The number of Real declarations before ``exit`` (fixes the polynomial ring first)."""
    count = 0
    for c in commands:
        items = c.items
        if items and items[0] == "exit":
            break
        count += (len(items) == 4 and items[0] == "declare-fun" and type(items[2]) is SList
                  and not items[2].items and items[3] == "Real") or \
                 (len(items) == 3 and items[0] == "declare-const" and items[2] == "Real")
    return count


def _sort(value) -> str:
    return "Real" if type(value) is list else "Bool"


def _tree_size(f, memo: dict) -> int:
    """Nodes of ``f`` counted as a tree (shared sub-formulas once per use), memoized by id."""
    stack = [f]
    while stack:
        g = stack[-1]
        if id(g) in memo:
            stack.pop()
            continue
        kids = (g.arg,) if isinstance(g, Not) else g.args if isinstance(g, (And, Or)) else \
            (g.left, g.right) if isinstance(g, Iff) else ()
        todo = [k for k in kids if id(k) not in memo]
        if todo:
            stack.extend(todo)
            continue
        memo[id(g)] = (1 + sum(memo[id(k)][0] for k in kids), g)
        stack.pop()
    return memo[id(f)][0]


def _count_nodes(node) -> int:
    count, stack = 0, [node]
    while stack:
        n = stack.pop()
        count += 1
        if type(n) is SList:
            stack.extend(n.items)
    return count


class _Script:
    """The state of one script being read: symbols, scopes, assertions, metadata."""

    def __init__(self, text: str, path: str, nreals: int):
        self.text, self.path = text, path
        self.arith = Arithmetic(nreals, path)
        self.globals: dict[str, tuple[int, object]] = {}
        self.scope: dict[str, list] = {}
        self.horizon: int | None = None
        self.reals, self.bools, self.assertions = [], [], []
        self.status = self.logic = self.check_sat = None
        self.info, self.sizes, self.numbers = {}, {}, {}
        self.expanded = self.formula_nodes = 0

    def fail(self, where, message, construct=None):
        fail(self.path, where, message, construct)

    # ---------------------------------------------------------------- commands

    def command(self, cmd: SList):
        name = cmd.items[0] if cmd.items else None
        if type(name) is not Token:
            self.fail(cmd, "expected a command name", "command")
        if name in IGNORED:
            return
        handler = {"set-info": self.set_info, "set-logic": self.set_logic,
                   "check-sat": self.check, "assert": self.assert_,
                   "declare-fun": self.declare, "declare-const": self.declare,
                   "define-fun": self.define_fun}.get(name)
        if handler is None:
            kind = "unsupported" if name in UNSUPPORTED else "unknown"
            self.fail(name, f"{kind} command '{name}' (not in the QF_NRA fragment read here)",
                      str(name))
        if name in QUERY and self.check_sat is not None:
            self.fail(name, f"'{name}' after check-sat: one query per file is supported", str(name))
        handler(cmd)

    def set_info(self, cmd):
        items = cmd.items
        if len(items) not in (2, 3) or getattr(items[1], "type", None) != "KEYWORD":
            self.fail(cmd, "expected (set-info :keyword value)", "set-info")
        value = "" if len(items) == 2 else self.source(items[2])
        if getattr(items[-1], "type", None) in ("QSYMBOL", "STRING"):
            value = value[1:-1]
        if items[1] == ":status":
            if value not in ("sat", "unsat", "unknown"):
                self.fail(items[2] if len(items) == 3 else cmd,
                          "status must be sat, unsat or unknown", "set-info")
            self.status = value
        else:
            self.info[items[1][1:]] = value

    def set_logic(self, cmd):
        if len(cmd.items) != 2:
            self.fail(cmd, "expected (set-logic NAME)", "set-logic")
        self.logic = self.symbol(cmd.items[1])

    def check(self, cmd):
        if self.check_sat is not None:
            self.fail(cmd, "several check-sat commands: one query per file is supported",
                      "check-sat")
        self.check_sat = cmd

    def assert_(self, cmd):
        if len(cmd.items) != 2:
            self.fail(cmd, "expected (assert TERM)", "assert")
        formula = self.term(cmd.items[1])
        self.expect(formula, "Bool", cmd.items[1], "assert needs a Bool term")
        self.formula_nodes += _tree_size(formula, self.sizes)
        if self.formula_nodes > MAX_FORMULA_NODES:
            self.fail(cmd, f"assertions expand to more than {MAX_FORMULA_NODES} formula nodes",
                      "let")
        self.assertions.append(Assertion(formula, cmd.line, self.excerpt(cmd)))

    def declare(self, cmd):
        items = cmd.items
        if items[0] == "declare-fun":
            if len(items) != 4 or type(items[2]) is not SList:
                self.fail(cmd, "expected (declare-fun NAME () SORT)", "declare-fun")
            if items[2].items:
                self.fail(items[2], "functions with arguments are not supported", "declare-fun")
        elif len(items) != 3:
            self.fail(cmd, "expected (declare-const NAME SORT)", "declare-const")
        name, sort = self.new_name(items[1]), self.sort(items[-1])
        if sort == "Real":
            self.globals[name] = (len(self.globals),
                                  [(TRUE, self.arith.variable(len(self.reals)))])
            self.reals.append(name)
        else:
            self.globals[name] = (len(self.globals), BoolVar(name))
            self.bools.append(name)

    def define_fun(self, cmd):
        items = cmd.items
        if len(items) != 5 or type(items[2]) is not SList:
            self.fail(cmd, "expected (define-fun NAME ((PARAM SORT) ...) SORT BODY)", "define-fun")
        name, params = self.new_name(items[1]), []
        for p in items[2].items:
            if type(p) is not SList or len(p.items) != 2:
                self.fail(p, "expected a parameter (NAME SORT)", "define-fun")
            pname = self.symbol(p.items[0])
            if pname in dict(params):
                self.fail(p, f"parameter '{pname}' appears twice", "define-fun")
            params.append((pname, self.sort(p.items[1])))
        sort, body = self.sort(items[3]), items[4]
        if params:
            value = _Function(tuple(params), sort, body, _count_nodes(body), len(self.globals))
        else:
            value = self.term(body)
            self.expect(value, sort, body, f"the body of '{name}' does not have sort {sort}")
        self.globals[name] = (len(self.globals), value)

    # ---------------------------------------------------------------- symbols and sorts

    def symbol(self, token) -> str:
        if getattr(token, "type", None) == "SYMBOL":
            return str(token)
        if getattr(token, "type", None) == "QSYMBOL":
            return token[1:-1]
        self.fail(token, "expected a symbol", "symbol")

    def new_name(self, token) -> str:
        name = self.symbol(token)
        if name in self.globals or name in OPERATORS or name in ("true", "false", "let", "!"):
            self.fail(token, f"'{name}' is already declared or built in", "redeclaration")
        return name

    def sort(self, node) -> str:
        if type(node) is Token and node in ("Real", "Bool"):
            return str(node)
        what = self.source(node)
        self.fail(node, f"sort {what} is not supported (only Real and Bool, as in QF_NRA)", what)

    def expect(self, value, sort, where, message=None):
        if _sort(value) != sort:
            self.fail(where, message or f"expected a {sort} term, got a {_sort(value)} term",
                      "sort")

    def source(self, node) -> str:
        return self.text[node.start:node.end] if type(node) is SList else str(node)

    def excerpt(self, node) -> str:
        text = " ".join(self.source(node).split())
        return text if len(text) <= 200 else text[:197] + "..."

    # ---------------------------------------------------------------- terms

    def term(self, node):
        return run(node, self.step, self.path)

    def step(self, node):
        return self.apply(node) if type(node) is SList else self.leaf(node)

    def leaf(self, token):
        if token.type in ("NUMERAL", "DECIMAL"):
            value = self.numbers.get(str(token))
            if value is None:
                value = self.numbers[str(token)] = [(TRUE, self.arith.number(token, token))]
            return value
        if token.type not in ("SYMBOL", "QSYMBOL"):
            self.fail(token, f"literal {token} is not supported (QF_NRA has no "
                             f"{token.type.lower()} literals)", token.type.lower())
        name = self.symbol(token)
        if name in self.scope and self.scope[name]:
            return self.scope[name][-1]
        if name in ("true", "false"):
            return BoolConst(name == "true")
        order, value = self.globals.get(name, (None, None))
        if order is None or (self.horizon is not None and order >= self.horizon):
            self.fail(token, f"unknown symbol '{name}'", name)
        if isinstance(value, _Function):
            self.fail(token, f"'{name}' is a function and needs arguments", name)
        return value

    def apply(self, node):
        """Generator (see terms.run): the value of the application ``node``."""
        items = node.items
        if not items or type(items[0]) is SList:
            self.fail(node, "expected a function symbol after '('" if not items else
                      "indexed or qualified identifiers are not supported", "application")
        name = self.symbol(items[0])
        if name == "let":
            return (yield from self.let(node))
        if name == "!":
            if len(items) < 2:
                self.fail(node, "expected (! TERM ATTRIBUTES)", "!")
            return (yield items[1])
        if name in ("forall", "exists", "match", "lambda"):
            self.fail(items[0], f"'{name}' is not supported (quantifier-free fragment only)", name)
        args = []
        for arg in items[1:]:
            args.append((yield arg))
        if name in OPERATORS:
            return OPERATORS[name](self, node, args)
        order, fn = self.globals.get(name, (None, None))
        if not isinstance(fn, _Function) or (self.horizon is not None and order >= self.horizon):
            self.fail(items[0], f"unknown or unsupported function '{name}'", name)
        return (yield from self.call(fn, node, args))

    def let(self, node):
        items = node.items
        if len(items) != 3 or type(items[1]) is not SList or not items[1].items:
            self.fail(node, "expected (let ((NAME TERM) ...) TERM)", "let")
        names, values = [], []
        for binding in items[1].items:
            if type(binding) is not SList or len(binding.items) != 2:
                self.fail(binding, "expected a binding (NAME TERM)", "let")
            name = self.symbol(binding.items[0])
            if name in names:
                self.fail(binding, f"'{name}' is bound twice in one let", "let")
            names.append(name)
            values.append((yield binding.items[1]))
        for name, value in zip(names, values):
            self.scope.setdefault(name, []).append(value)
        try:
            return (yield items[2])
        finally:
            for name in names:
                self.scope[name].pop()

    def call(self, fn: _Function, node, args):
        """The body of ``fn`` with its parameters bound to ``args`` (substitution)."""
        if len(args) != len(fn.params):
            self.fail(node, f"expected {len(fn.params)} arguments, got {len(args)}", "arity")
        for (_, sort), arg, where in zip(fn.params, args, node.items[1:]):
            self.expect(arg, sort, where)
        self.expanded += fn.size
        if self.expanded > MAX_EXPANSION:
            self.fail(node, f"define-fun expansion beyond {MAX_EXPANSION} nodes", "define-fun")
        saved = self.scope, self.horizon
        self.scope = {p: [a] for (p, _), a in zip(fn.params, args)}
        self.horizon = fn.order
        try:
            value = yield fn.body
        finally:
            self.scope, self.horizon = saved
        self.expect(value, fn.sort, fn.body, f"the function body does not have sort {fn.sort}")
        return value

    # ---------------------------------------------------------------- operators

    def args_of(self, node, args, sort, least=1, most=None):
        """``args``, after checking their number and that each has sort ``sort``."""
        if len(args) < least or (most is not None and len(args) > most):
            count = least if least == most else f"at least {least}"
            self.fail(node, f"'{node.items[0]}' expects {count} argument(s)", str(node.items[0]))
        real = sort == "Real"
        for i, arg in enumerate(args):
            if (type(arg) is list) is not real:
                self.expect(arg, sort, node.items[i + 1])
        return args

    def lift(self, node, a, b, op):
        """``op`` on every pair of cases of the Real terms ``a`` and ``b``, guards conjoined."""
        if len(a) == 1 and len(b) == 1 and a[0][0] is TRUE and b[0][0] is TRUE:
            return [(TRUE, op(a[0][1], b[0][1], node))]
        cases = []
        for g, p in a:
            for h, q in b:
                guard = h if g is TRUE else g if h is TRUE else conjunction([g, h])
                if guard != FALSE:
                    cases.append((guard, op(p, q, node)))
        if len(cases) > MAX_ITE_CASES:
            self.fail(node, f"term with more than {MAX_ITE_CASES} ite cases", "ite")
        return cases

    def arithmetic(self, node, args, op):
        return reduce(lambda a, b: self.lift(node, a, b, op), self.args_of(node, args, "Real"))

    def compare(self, node, args, rel):
        self.args_of(node, args, "Real", 2)
        return conjunction([self.relate(node, a, rel, b) for a, b in zip(args, args[1:])])

    def relate(self, node, a, rel, b):
        cases = self.lift(node, a, b, self.arith.sub)
        return disjunction([conjunction([g, self.arith.atom(p, rel)]) for g, p in cases])

    def equal(self, node, args):
        if args and _sort(args[0]) == "Bool":
            self.args_of(node, args, "Bool", 2)
            return conjunction([iff(a, b) for a, b in zip(args, args[1:])])
        return self.compare(node, args, "=")

    def distinct(self, node, args):
        sort = _sort(args[0]) if args else "Real"
        self.args_of(node, args, sort, 2)
        pairs = [(a, b) for i, a in enumerate(args) for b in args[i + 1:]]
        if sort == "Bool":
            return conjunction([negate(iff(a, b)) for a, b in pairs])
        return conjunction([self.relate(node, a, "!=", b) for a, b in pairs])

    def minus(self, node, args):
        if len(args) == 1:
            return [(g, -p) for g, p in self.args_of(node, args, "Real")[0]]
        return self.arithmetic(node, args, self.arith.sub)

    def ite(self, node, args):
        if len(args) != 3:
            self.fail(node, "'ite' expects 3 arguments", "ite")
        c, a, b = args
        self.expect(c, "Bool", node.items[1])
        self.expect(b, _sort(a), node.items[3], "the branches of 'ite' have different sorts")
        if isinstance(c, BoolConst):
            return a if c.value else b
        if _sort(a) == "Bool":
            return disjunction([conjunction([c, a]), conjunction([negate(c), b])])
        cases = [(conjunction([c, g]), p) for g, p in a] + \
                [(conjunction([negate(c), g]), p) for g, p in b]
        if len(cases) > MAX_ITE_CASES:
            self.fail(node, f"term with more than {MAX_ITE_CASES} ite cases", "ite")
        return cases

    def implies(self, node, args):
        *premises, result = self.args_of(node, args, "Bool", 2)
        for premise in reversed(premises):
            result = disjunction([negate(premise), result])
        return result

    def xor(self, node, args):
        return reduce(lambda a, b: negate(iff(a, b)), self.args_of(node, args, "Bool", 2))


OPERATORS = {
    "not": lambda s, n, a: negate(s.args_of(n, a, "Bool", 1, 1)[0]),
    "and": lambda s, n, a: conjunction(s.args_of(n, a, "Bool")),
    "or": lambda s, n, a: disjunction(s.args_of(n, a, "Bool")),
    "=>": _Script.implies,
    "xor": _Script.xor,
    "ite": _Script.ite,
    "=": _Script.equal,
    "distinct": _Script.distinct,
    "+": lambda s, n, a: s.arithmetic(n, a, s.arith.add),
    "-": _Script.minus,
    "*": lambda s, n, a: s.arithmetic(n, a, s.arith.mul),
    "/": lambda s, n, a: s.arithmetic(n, a, s.arith.divide),
    **{rel: (lambda r: lambda s, n, a: s.compare(n, a, r))(rel) for rel in ("<", "<=", ">", ">=")},
}
