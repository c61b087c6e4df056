"""Reading certificates (SPEC.md); the writer is :mod:`prover.certwrite`.

``read_certificate`` reads one statement per line by the grammar of SPEC.md
§11 (a plain recursive-descent reader: each statement is one small function)
and checks only the structure (header first, ids declared once, segments under
a node); whether the claims hold is the checker's business.
"""
from __future__ import annotations

import json
import re
from fractions import Fraction

from flint import fmpz

from .certificate import (NEG_INF, POS_INF, AtomClaim, Certificate, Inference, Interval,
                          Lemma, Literal, Node, Number, Poly, Root, Segment, VarDecl)
from .errors import InputError, read_limited

MAX_CERTIFICATE_BYTES = 256 * 1024 * 1024


# ---------------------------------------------------------------- reading

_TOKEN = re.compile(r'"(?:[^"\\\n]|\\["\\/bfnrtu])*"|[-+]inf\b|<=|>=|!=|<|>|='
                    r'|[A-Za-z0-9]+(?:#[0-9]+)?|[-+*^/@(),\[\]~]|%.*|[^ \t]')
"""Tokens: a string, an infinity, a relation, a word, a mark; then a comment; then any other
character, which is an error."""
_PATTERNS = {kind: re.compile(pattern) for kind, pattern in {
    "INT": "[0-9]+", "VAR": "x[0-9]+", "PID": "p[0-9]+", "NID": "n[0-9]+", "LID": "L[0-9]+",
    "CID": "c[0-9]+", "ROOT": "p[0-9]+#[0-9]+", "HEX": "[0-9a-f]{64}", "KIND": "unsat|sat",
    "BOOL": "true|false", "ATOM": "a[0-9]+", "LIT": "[abd][0-9]+", "REL": "<=|>=|!=|<|>|=",
    "STRING": '".*"'}.items()}


def _int(text: str) -> int:  # any length: CPython's int(str) refuses more than 4300 digits
    return int(fmpz(text))


class _Line:
    """The tokens of one statement line, read left to right (grammar: SPEC.md §10)."""

    def __init__(self, text: str, path: str, line: int):
        self.path, self.line, self.text, self.i = path, line, text, 0
        self.tokens: list[str] = _TOKEN.findall(text)
        for k, tok in enumerate(self.tokens):
            if tok[0] == "%":
                del self.tokens[k:]
                break
            if len(tok) == 1 and not tok.isalnum() and tok not in '-+*^/@(),[]~<>=':
                self.i = k
                raise self.error(f"unexpected character {tok!r}")

    def error(self, message: str, column: int | None = None) -> InputError:
        if column is None:
            starts = [m.start() for m in _TOKEN.finditer(self.text)] + [len(self.text)]
            column = starts[min(self.i, len(self.tokens))]
        snippet = self.text.strip()[:60]
        return InputError(f"certificate syntax error: {message} in {snippet!r}", self.path,
                          self.line, column + 1, construct=snippet)

    def peek(self) -> str | None:
        return self.tokens[self.i] if self.i < len(self.tokens) else None

    def takes(self, want: str) -> str | None:
        """The next token if it is ``want`` (or matches the pattern so named), else None."""
        if self.i < len(self.tokens):
            tok, pattern = self.tokens[self.i], _PATTERNS.get(want)
            if tok == want if pattern is None else pattern.fullmatch(tok):
                self.i += 1
                return tok
        return None

    def take(self, want: str) -> str:
        """The next token, which must be ``want`` (or match the pattern so named)."""
        tok = self.takes(want)
        if tok is None:
            raise self.error(f"expected {want}, found {self.peek() or 'end of line'!r}")
        return tok

    def take_all(self, want: str) -> list[str]:
        """Every remaining token, each ``want``."""
        return [self.take(want) for _ in range(len(self.tokens) - self.i)]

    def sign(self) -> int:
        """An optional ``+`` or ``-``, as 1 or -1."""
        return -1 if (self.takes("-") or self.takes("+")) == "-" else 1

    def end(self) -> None:
        if self.peek() is not None:
            raise self.error(f"unexpected {self.peek()!r}")


def _rational(ln: _Line) -> Fraction:
    """``("+" | "-")? INT ("/" INT)?``"""
    sign = ln.sign()
    num = _int(ln.take("INT"))
    den = _int(ln.take("INT")) if ln.takes("/") else 1
    if den == 0:
        raise ln.error("zero denominator")
    return sign * Fraction(num, den)


def _power(ln: _Line) -> tuple[str, int]:
    """``(VAR | "z") ("^" INT)?``"""
    var = ln.takes("z") or ln.take("VAR")
    return var, _int(ln.take("INT")) if ln.takes("^") else 1


def _polynomial(ln: _Line) -> list[tuple[int, list[tuple[str, int]]]]:
    """``term (("+" | "-") term)*``, ``term = ("+" | "-")? (INT | power) ("*" power)*``."""
    terms, sign = [], 1
    while True:
        sign *= ln.sign()
        coeff = ln.takes("INT")
        powers = [] if coeff is not None else [_power(ln)]
        while ln.takes("*"):
            powers.append(_power(ln))
        terms.append((sign * _int(coeff or "1"), powers))
        if ln.peek() not in ("+", "-"):
            return terms
        sign = -1 if ln.take(ln.peek()) == "-" else 1


def _monomials_to_poly(terms, nvars: int, ln: _Line) -> Poly:
    """Sum the terms of a polynomial in x1 … xn into an exponent dictionary."""
    poly: Poly = {}
    for coeff, powers in terms:
        exps = [0] * nvars
        for var, e in powers:
            k = _int(var[1:]) if var != "z" else 0
            if var == "z" or not 1 <= k <= nvars:
                raise InputError(f"variable {var} is not declared", ln.path, ln.line, construct=var)
            exps[k - 1] += e
        key = tuple(exps)
        poly[key] = poly.get(key, 0) + coeff
    return {e: c for e, c in poly.items() if c != 0}


def _univariate(terms, ln: _Line) -> tuple[int, ...]:
    """Coefficients (constant first) of a polynomial in z."""
    coeffs: dict[int, int] = {}
    for coeff, powers in terms:
        e = 0
        for var, k in powers:
            if var != "z":
                raise InputError(f"number polynomial uses {var}; only z is allowed", ln.path,
                                 ln.line, construct=var)
            e += k
        coeffs[e] = coeffs.get(e, 0) + coeff
    top = max((e for e, c in coeffs.items() if c), default=-1)
    return tuple(coeffs.get(e, 0) for e in range(top + 1))


def _literal(ln: _Line) -> Literal:
    """``"~"? (aK | bK | dK)``"""
    negated = ln.takes("~") is not None
    return Literal(ln.take("LIT"), positive=not negated)


def _bound(ln: _Line):
    """``-inf | +inf | pK#J``"""
    tok = ln.takes(NEG_INF) or ln.takes(POS_INF)
    if tok:
        return tok
    pid, j = ln.take("ROOT").split("#")
    return Root(pid, _int(j))


def _interval(ln: _Line) -> Interval:
    """``"(" bound "," bound ")"`` (open) or ``"[" bound "]"`` (a point)."""
    if ln.takes("["):
        b = _bound(ln)
        ln.take("]")
        return Interval(b, b, point=True)
    ln.take("(")
    low = _bound(ln)
    ln.take(",")
    high = _bound(ln)
    ln.take(")")
    return Interval(low, high, point=False)


def _declare(cert: Certificate, ln: _Line, ident: str) -> str:
    if ident in cert.lines:
        raise InputError(f"{ident} is declared twice (first on line {cert.lines[ident]})",
                         ln.path, ln.line, construct=ident)
    cert.lines[ident] = ln.line
    return ident


def _problem_hash(cert: Certificate, ln: _Line) -> None:
    cert.sha256 = ln.take("sha256") and ln.take("HEX")     # "sha256", then the hash


def _var(cert: Certificate, ln: _Line) -> None:
    ident = _declare(cert, ln, ln.take("VAR"))
    ln.take("=")
    index = _int(ln.take("INT"))
    try:
        name = json.loads(ln.take("STRING"))
    except ValueError:
        ln.i -= 1
        raise ln.error("bad escape in the variable name") from None
    cert.variables.append(VarDecl(_int(ident[1:]), index, name, ln.line))


def _poly(cert: Certificate, ln: _Line) -> None:
    ident = _declare(cert, ln, ln.take("PID"))
    ln.take("=")
    cert.polys[ident] = _monomials_to_poly(_polynomial(ln), len(cert.variables), ln)


def _num(cert: Certificate, ln: _Line) -> None:
    ident = _declare(cert, ln, ln.take("NID"))
    ln.take("=")
    if "@" not in ln.tokens:
        q = _rational(ln)
        cert.numbers[ident] = Number(None, q, q, ln.line)
        return
    poly = _univariate(_polynomial(ln), ln)
    ln.take("@")
    ln.take("(")
    low = _rational(ln)
    ln.take(",")
    high = _rational(ln)
    ln.take(")")
    cert.numbers[ident] = Number(poly, low, high, ln.line)


def _atom(cert: Certificate, ln: _Line) -> None:
    ident = _declare(cert, ln, ln.take("ATOM"))
    ln.take("=")
    pid, rel = ln.take("PID"), ln.take("REL")
    ln.take("0")
    cert.atoms[ident] = AtomClaim(pid, rel, ln.line)


def _lemma(cert: Certificate, ln: _Line) -> None:
    ident = _declare(cert, ln, ln.take("LID"))
    ln.take("excludes")
    literals = [_literal(ln)]
    while not ln.takes("by"):
        literals.append(_literal(ln))
    cert.lemmas.append(Lemma(ident, tuple(literals), ln.take("CID"), ln.line))


def _node(cert: Certificate, ln: _Line) -> None:
    ident = _declare(cert, ln, ln.take("CID"))
    ln.take("sample")
    sample = () if ln.takes("-") else (ln.take("NID"), *ln.take_all("NID"))
    cert.nodes[ident] = Node(ident, sample, [], ln.line)


def _seg(cert: Certificate, ln: _Line) -> None:
    if not cert.nodes:
        raise InputError("'seg' before any 'node'", ln.path, ln.line, construct="seg")
    interval = _interval(ln)
    ln.take("at")
    seg = Segment(interval, ln.take("NID"), line=ln.line)
    if ln.takes("by"):
        seg.literal = _literal(ln)
    else:
        ln.take("lift")
        seg.child = ln.take("CID")
        ln.take("keep")
        seg.keep = tuple(ln.take_all("PID"))
    next(reversed(cert.nodes.values())).segments.append(seg)


def _core(cert: Certificate, ln: _Line) -> None:
    cert.core = tuple(_int(k) for k in ln.take_all("INT"))


def _infer(cert: Certificate, ln: _Line) -> None:
    literals = []
    if not ln.takes("false"):
        literals.append(_literal(ln))
        while ln.peek() is not None:
            literals.append(_literal(ln))
    cert.steps.append(Inference(tuple(literals), ln.line))


def _value(cert: Certificate, ln: _Line) -> None:
    cert.values.update([(ln.take("VAR"), ln.take("NID"))])      # read left to right


def _bool(cert: Certificate, ln: _Line) -> None:
    cert.bools.update([(_int(ln.take("INT")), ln.take("BOOL") == "true")])


_STATEMENTS = {"problem": _problem_hash, "var": _var, "poly": _poly, "num": _num,
               "atom": _atom, "lemma": _lemma, "node": _node, "seg": _seg, "core": _core,
               "infer": _infer, "value": _value, "bool": _bool}


def read_certificate(text: str, path: str = "<certificate>") -> Certificate:
    """Parse certificate text into the data model, one statement per line; InputError names
    the line and column.  Ids must be declared once; whether claims hold is the checker's job."""
    cert = None
    for number, raw in enumerate(text.split("\n"), 1):
        ln = _Line(raw[:-1] if raw.endswith("\r") else raw, path, number)
        if not ln.tokens:
            continue
        keyword = ln.tokens[0]
        ln.i = 1
        if cert is None:
            if keyword != "tessella":
                raise InputError("certificate must start with 'tessella 1 unsat|sat'", path,
                                 number, 1, construct=keyword)
            version, kind = _int(ln.take("INT")), ln.take("KIND")
            ln.end()
            if version != 1:
                raise InputError(f"unsupported certificate version {version} (this checker "
                                 "reads 1)", path, number)
            cert = Certificate(kind=kind, sha256="", variables=[], version=version)
            continue
        if keyword not in _STATEMENTS:
            ln.i = 0
            raise ln.error(f"unknown statement {keyword!r}")
        _STATEMENTS[keyword](cert, ln)
        ln.end()
    if cert is None:
        raise InputError("certificate must start with 'tessella 1 unsat|sat'", path, 1)
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
