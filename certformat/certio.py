"""Reading and writing certificates (SPEC.md) with exact round trip.

``read_certificate`` parses with the lark grammar ``certificate.lark`` and
checks only the structure (header first, ids declared once, segments under a
node); whether the claims hold is the checker's business.  ``write_certificate``
prints the canonical text: the same model always gives the same bytes.
"""
from __future__ import annotations

import json
from fractions import Fraction
from pathlib import Path

from lark import Lark, Token, Transformer, v_args
from lark.exceptions import LarkError, UnexpectedInput, VisitError

from .certificate import (NEG_INF, POS_INF, AtomClaim, Certificate, Inference, Interval,
                          Lemma, Literal, Node, Number, Poly, Root, Segment, VarDecl)
from .errors import InputError, read_limited

_PARSER = Lark.open(str(Path(__file__).with_name("certificate.lark")), parser="lalr",
                    propagate_positions=True, maybe_placeholders=False)

MAX_CERTIFICATE_BYTES = 256 * 1024 * 1024


# ---------------------------------------------------------------- reading

@v_args(inline=True)
class _Statements(Transformer):
    """One small method per statement kind; each returns (kind, line, payload)."""

    def rational(self, *toks):
        sign = -1 if toks and toks[0].type == "SIGN" and toks[0] == "-" else 1
        nums = [int(t) for t in toks if t.type == "INT"]
        if len(nums) == 2 and nums[1] == 0:
            raise ValueError("zero denominator")
        return sign * Fraction(nums[0], nums[1] if len(nums) == 2 else 1)

    def power(self, var, exp=None):
        return (str(var), int(exp) if exp is not None else 1)

    def monomial(self, *items):
        coeff, powers = 1, []
        for it in items:
            if isinstance(it, Token):
                coeff = int(it)
            else:
                powers.append(it)
        return coeff, powers

    def term(self, *items):
        sign = -1 if len(items) == 2 and items[0] == "-" else 1
        coeff, powers = items[-1]
        return sign * coeff, powers

    def polynomial(self, *items):
        terms, sign = [], 1
        for it in items:
            if isinstance(it, Token):
                sign = -1 if it == "-" else 1
            else:
                terms.append((sign * it[0], it[1]))
                sign = 1
        return terms

    def literal(self, *toks):
        return Literal(str(toks[-1]), positive=len(toks) == 1)

    def bound(self, tok):
        if tok.type == "ROOT":
            pid, j = str(tok).split("#")
            return Root(pid, int(j))
        return str(tok)

    def open_interval(self, low, high):
        return Interval(low, high, point=False)

    def point_interval(self, b):
        return Interval(b, b, point=True)

    def by(self, lit):
        return ("by", lit)

    def lift(self, cid, *pids):
        return ("lift", str(cid), tuple(str(p) for p in pids))


def _monomials_to_poly(terms, nvars: int, path: str, line: int) -> Poly:
    """Sum the terms of a polynomial in x1 … xn into an exponent dictionary."""
    poly: Poly = {}
    for coeff, powers in terms:
        exps = [0] * nvars
        for var, e in powers:
            k = int(var[1:]) if var != "z" else 0
            if var == "z" or not 1 <= k <= nvars:
                raise InputError(f"variable {var} is not declared", path, line, construct=var)
            exps[k - 1] += e
        key = tuple(exps)
        poly[key] = poly.get(key, 0) + coeff
    return {e: c for e, c in poly.items() if c != 0}


def _univariate(terms, path: str, line: int) -> tuple[int, ...]:
    """Coefficients (constant first) of a polynomial in z."""
    coeffs: dict[int, int] = {}
    for coeff, powers in terms:
        e = 0
        for var, k in powers:
            if var != "z":
                raise InputError(f"number polynomial uses {var}; only z is allowed", path, line,
                                 construct=var)
            e += k
        coeffs[e] = coeffs.get(e, 0) + coeff
    top = max((e for e, c in coeffs.items() if c), default=-1)
    return tuple(coeffs.get(e, 0) for e in range(top + 1))


def read_certificate(text: str, path: str = "<certificate>") -> Certificate:
    """Parse certificate text into the data model; InputError names the line."""
    try:
        tree = _PARSER.parse(text)
    except UnexpectedInput as err:
        snippet = text.splitlines()[err.line - 1].strip()[:60] if err.line and err.line > 0 else ""
        raise InputError(f"certificate syntax error near {snippet!r}", path, err.line,
                         err.column, construct=snippet) from None
    except LarkError as err:
        raise InputError(f"certificate syntax error: {err}", path) from None
    statements = tree.children
    if not statements or statements[0].data != "header":
        raise InputError("certificate must start with 'tessella 1 unsat|sat'", path, 1)
    return _build(statements, path)


def _build(statements, path: str) -> Certificate:
    """Assemble statements into a Certificate, checking ids are declared once."""
    transform = _Statements()
    version, kind = int(statements[0].children[0]), str(statements[0].children[1])
    if version != 1:
        raise InputError(f"unsupported certificate version {version} (this checker reads 1)",
                         path, statements[0].meta.line)
    cert = Certificate(kind=kind, sha256="", variables=[], version=version)
    current: Node | None = None
    for st in statements[1:]:
        line = st.meta.line
        try:
            kids = [transform.transform(c) if not isinstance(c, Token) else c
                    for c in st.children]
        except VisitError as err:
            raise InputError(f"bad value: {err.orig_exc}", path, line) from None

        def declare(ident: str):
            if ident in cert.lines:
                raise InputError(f"{ident} is declared twice (first on line {cert.lines[ident]})",
                                 path, line, construct=ident)
            cert.lines[ident] = line

        kind_ = st.data
        if kind_ == "header":
            raise InputError("a second header line", path, line, construct="tessella")
        elif kind_ == "problem_hash":
            cert.sha256 = str(kids[0])
        elif kind_ == "var":
            declare(str(kids[0]))
            name = json.loads(str(kids[2]))
            cert.variables.append(VarDecl(int(str(kids[0])[1:]), int(kids[1]), name, line))
        elif kind_ == "poly":
            declare(str(kids[0]))
            cert.polys[str(kids[0])] = _monomials_to_poly(kids[1], len(cert.variables), path, line)
        elif kind_ == "num":
            declare(str(kids[0]))
            if len(kids) == 2:
                cert.numbers[str(kids[0])] = Number(None, kids[1], kids[1], line)
            else:
                poly = _univariate(kids[1], path, line)
                cert.numbers[str(kids[0])] = Number(poly, kids[2], kids[3], line)
        elif kind_ == "atom":
            declare(str(kids[0]))
            cert.atoms[str(kids[0])] = AtomClaim(str(kids[1]), str(kids[2]), line)
        elif kind_ == "lemma":
            declare(str(kids[0]))
            cert.lemmas.append(Lemma(str(kids[0]), tuple(kids[1:-1]), str(kids[-1]), line))
        elif kind_ == "node":
            declare(str(kids[0]))
            current = Node(str(kids[0]), tuple(str(k) for k in kids[1:]), [], line)
            cert.nodes[current.id] = current
        elif kind_ == "seg":
            if current is None:
                raise InputError("'seg' before any 'node'", path, line, construct="seg")
            interval, sample, (how, *rest) = kids
            seg = Segment(interval, str(sample), line=line)
            if how == "by":
                seg.literal = rest[0]
            else:
                seg.child, seg.keep = rest
            current.segments.append(seg)
        elif kind_ == "core":
            cert.core = tuple(int(k) for k in kids)
        elif kind_ == "infer":
            cert.steps.append(Inference(tuple(kids), line))
        elif kind_ == "value":
            cert.values[str(kids[0])] = str(kids[1])
        elif kind_ == "boolval":
            cert.bools[int(kids[0])] = str(kids[1]) == "true"
    return cert


def load_certificate(path: str, max_bytes: int = MAX_CERTIFICATE_BYTES) -> Certificate:
    """Read a certificate file (UTF-8, at most ``max_bytes``)."""
    return parse_certificate_bytes(read_limited(path, max_bytes, "certificate"), path)


def parse_certificate_bytes(data: bytes, path: str) -> Certificate:
    """A certificate from the exact bytes of its file (UTF-8)."""
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as err:
        raise InputError(f"certificate is not UTF-8 text (byte {err.start})", path) from None
    return read_certificate(text, path)


# ---------------------------------------------------------------- writing

def poly_text(poly: Poly, var=lambda k: f"x{k + 1}") -> str:
    """Canonical text of a polynomial: terms in descending lex order of exponents."""
    if not poly:
        return "0"
    out = []
    for exps in sorted(poly, reverse=True):
        c = poly[exps]
        powers = [var(k) + (f"^{e}" if e > 1 else "") for k, e in enumerate(exps) if e]
        mag = abs(c)
        body = "*".join(([str(mag)] if mag != 1 or not powers else []) + powers)
        out.append(("- " if c < 0 else "+ ") + body)
    text = " ".join(out)
    return text[2:] if text.startswith("+ ") else "-" + text[2:]


def rational_text(q: Fraction) -> str:
    """``p/q`` in lowest terms, or ``p`` for an integer."""
    q = Fraction(q)
    return str(q.numerator) if q.denominator == 1 else f"{q.numerator}/{q.denominator}"


def number_text(num: Number) -> str:
    """Right-hand side of a ``num`` line."""
    if num.poly is None:
        return rational_text(num.low)
    uni = {(e,): c for e, c in enumerate(num.poly) if c}
    return f"{poly_text(uni, lambda k: 'z')} @ ({rational_text(num.low)}, {rational_text(num.high)})"


def _segment_text(seg: Segment) -> str:
    head = f"  seg {seg.interval} at {seg.sample}"
    if seg.literal is not None:
        return f"{head} by {seg.literal}"
    return f"{head} lift {seg.child} keep" + "".join(" " + p for p in seg.keep)


def _node_lines(cert: Certificate, root: str):
    """The nodes of one lemma in pre-order."""
    stack = [root]
    while stack:
        node = cert.nodes[stack.pop()]
        yield f"node {node.id} sample " + (" ".join(node.sample) if node.sample else "-")
        for seg in node.segments:
            yield _segment_text(seg)
        stack.extend(reversed([s.child for s in node.segments if s.child]))


def write_certificate(cert: Certificate) -> str:
    """The canonical text of a certificate (SPEC.md); deterministic."""
    lines = [f"tessella {cert.version} {cert.kind}", f"problem sha256 {cert.sha256}"]
    lines += [f"var x{v.index} = {v.problem_index} {json.dumps(v.name)}" for v in cert.variables]
    lines += [f"poly {pid} = {poly_text(p)}" for pid, p in cert.polys.items()]
    lines += [f"num {nid} = {number_text(n)}" for nid, n in cert.numbers.items()]
    lines += [f"atom {aid} = {a.poly} {a.rel} 0" for aid, a in cert.atoms.items()]
    for lemma in cert.lemmas:
        lits = " ".join(str(l) for l in lemma.literals)
        lines.append(f"lemma {lemma.id} excludes {lits} by {lemma.root}")
        lines.extend(_node_lines(cert, lemma.root))
    if cert.kind == "unsat":
        lines.append("core" + "".join(f" {i}" for i in cert.core))
    for step in cert.steps:
        lines.append("infer " + (" ".join(str(l) for l in step.literals) or "false"))
    lines += [f"value {x} {n}" for x, n in cert.values.items()]
    lines += [f"bool {j} {'true' if v else 'false'}" for j, v in sorted(cert.bools.items())]
    return "\n".join(lines) + "\n"
