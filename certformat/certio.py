"""Reading certificates (SPEC.md); the writer is :mod:`prover.certwrite`.

``read_certificate`` matches each line against its statement's form in SPEC.md §10
(written over tokens joined by single spaces; each space stands for the blanks a token
boundary allows), builds it with one small function, and checks only the structure
(header first, ids declared once, segments under a node); whether the claims hold is
the checker's business.
"""
from __future__ import annotations

import json
import re
from fractions import Fraction

from flint import fmpz

from .certificate import (NEG_INF, POS_INF, AtomClaim, Certificate, Inference, Interval,
                          Lemma, Literal, Node, Number, Root, Segment, VarDecl)
from .errors import InputError, read_limited

MAX_CERTIFICATE_BYTES = 256 * 1024 * 1024


# ---------------------------------------------------------------- reading

# Tokens after blanks (used to explain a line that matches no form): a word, an infinity, a mark,
# a relation, a string; then a comment; then any other character, which no statement accepts.
_TOKEN = re.compile(r'[ \t]*([A-Za-z0-9]+(?:#[0-9]+)?|[-+]inf\b|[-+*^/@(),\[\]~]|<=|>=|!=|<|>|='
                    r'|"(?:[^"\\\n]|\\["\\/bfnrtu])*"|%.*|[^ \t])')
_BLANKS = r"(?:[ \t]+|(?<!\w)|(?!\w))"  # between tokens: blanks, optional unless both sides are word characters
_KEYWORD = re.compile(r"[ \t]*([A-Za-z0-9]+|.?)")  # a statement's first word, or else its first character

# The grammar of SPEC.md §10 as regular expressions over a line's tokens joined by one space.
_INT, _POWER, _LIT = "[0-9]+", r"(?:x[0-9]+|z)(?: \^ [0-9]+)?", "(?:~ )?[abd][0-9]+"
_RATIONAL = rf"(?:[-+] )?{_INT}(?: / {_INT})?"
_BODY = rf"(?:{_INT}|{_POWER})(?: \* {_POWER})*"
_POLY = rf"(?:[-+] )?{_BODY}(?: [-+] (?:[-+] )?{_BODY})*"
_BOUND = r"-inf|\+inf|p[0-9]+#[0-9]+"
_FORMS = {
    "tessella": rf"tessella ({_INT}) (unsat|sat)",
    "problem": "problem sha256 ([0-9a-f]{64})",
    "var": rf'var x({_INT}) = ({_INT}) ("(?:[^"\\]|\\.)*")',
    "poly": rf"poly (p[0-9]+) = ({_POLY})",
    "num": rf"num (n[0-9]+) = (?:({_RATIONAL})|({_POLY}) @ \( ({_RATIONAL}) , ({_RATIONAL}) \))",
    "atom": "atom (a[0-9]+) = (p[0-9]+) (<=|>=|!=|<|>|=) 0",
    "lemma": rf"lemma (L[0-9]+) excludes ({_LIT}(?: {_LIT})*) by (c[0-9]+)",
    "node": "node (c[0-9]+) sample (-|n[0-9]+(?: n[0-9]+)*)",
    "seg": rf"seg (?:\[ ({_BOUND}) \]|\( ({_BOUND}) , ({_BOUND}) \)) at (n[0-9]+) "
           rf"(?:by ({_LIT})|lift (c[0-9]+) keep((?: p[0-9]+)*))",
    "core": "core((?: [0-9]+)*)",
    "infer": rf"infer (false|{_LIT}(?: {_LIT})*)",
    "value": "value (x[0-9]+) (n[0-9]+)",
    "bool": rf"bool ({_INT}) (true|false)"}
_LITERAL = re.compile(r"(~?)[ \t]*([abd][0-9]+)")
_VARIABLE = re.compile(r"x[0-9]+|z")
_STATEMENT = {keyword: re.compile(r"[ \t]*" + form.replace(" ", _BLANKS) + r"[ \t]*(?:%.*)?", re.ASCII)
              for keyword, form in _FORMS.items()}


def _int(text: str) -> int:  # any length: CPython's int(str) refuses more than 4300 digits
    return int(text) if len(text) < 4000 else int(fmpz(text))


def _rational(text: str, line: _Where) -> Fraction:
    """``("+" | "-")? INT ("/" INT)?``"""
    num, _, den = "".join(text.split()).lstrip("+-").partition("/")
    den = _int(den) if den else 1
    if den == 0:
        raise line.error("zero denominator")
    return Fraction(-_int(num) if text[0] == "-" else _int(num), den)


def _literals(text: str) -> tuple[Literal, ...]:
    """Each ``"~"? (aK | bK | dK)`` of a literal list matched by ``_LIT``."""
    return tuple(Literal(name, positive=not tilde) for tilde, name in _LITERAL.findall(text))


def _bound(text: str):
    """``-inf | +inf | pK#J``"""
    if text in (NEG_INF, POS_INF):
        return text
    pid, j = text.split("#")
    return Root(pid, _int(j))


class _Where:
    """The file and line of a statement, for errors."""
    __slots__ = ("path", "line", "text")

    def __init__(self, path: str, line: int, text: str):
        self.path, self.line, self.text = path, line, text

    def error(self, message: str, construct: str | None = None) -> InputError:
        snippet = self.text.strip()[:60]
        column = self.text.find(construct) + 1 if construct and construct in self.text else None
        return InputError(f"certificate syntax error: {message} in {snippet!r}", self.path,
                          self.line, column, construct=construct or snippet)


def _declare(cert: Certificate, line: _Where, ident: str) -> str:
    if ident in cert.lines:
        raise line.error(f"{ident} is declared twice (first on line {cert.lines[ident]})", ident)
    cert.lines[ident] = line.line
    return ident


def _problem_hash(cert: Certificate, m, line: _Where) -> None:
    cert.sha256 = m[1]


def _var(cert: Certificate, m, line: _Where) -> None:
    _declare(cert, line, "x" + m[1])
    try:
        name = m[3][1:-1] if m[3].isprintable() and "\\" not in m[3] else json.loads(m[3])
    except ValueError:
        raise line.error("bad escape in the variable name", m[3]) from None
    cert.variables.append(VarDecl(_int(m[1]), _int(m[2]), name, line.line))


def _poly(cert: Certificate, m, line: _Where) -> None:
    for var in set(_VARIABLE.findall(m[2])):      # x1 … xn, no leading zero
        if var == "z" or var[1] == "0" or _int(var[1:]) > len(cert.variables):
            raise line.error(f"variable {var} is not declared", var)
    cert.polys[_declare(cert, line, m[1])] = "".join(m[2].split())


def _num(cert: Certificate, m, line: _Where) -> None:
    ident = _declare(cert, line, m[1])
    if m[2] is not None:
        q = _rational(m[2], line)
        cert.numbers[ident] = Number(None, q, q, line.line)
    else:
        if "x" in m[3]:
            raise line.error("a number polynomial may use only z", m[3])
        cert.numbers[ident] = Number("".join(m[3].split()), _rational(m[4], line),
                                     _rational(m[5], line), line.line)


def _atom(cert: Certificate, m, line: _Where) -> None:
    cert.atoms[_declare(cert, line, m[1])] = AtomClaim(m[2], m[3], line.line)


def _lemma(cert: Certificate, m, line: _Where) -> None:
    cert.lemmas.append(Lemma(_declare(cert, line, m[1]), _literals(m[2]), m[3], line.line))


def _node(cert: Certificate, m, line: _Where) -> None:
    ident = _declare(cert, line, m[1])
    cert.nodes[ident] = Node(ident, () if m[2] == "-" else tuple(m[2].split()), [], line.line)


def _seg(cert: Certificate, m, line: _Where) -> None:
    if not cert.nodes:
        raise line.error("'seg' before any 'node'", "seg")
    if m[1] is not None:
        interval = Interval(_bound(m[1]), _bound(m[1]), point=True)
    else:
        interval = Interval(_bound(m[2]), _bound(m[3]), point=False)
    seg = Segment(interval, m[4], line=line.line)
    if m[5] is not None:                               # one literal: "~"? blanks? name
        seg.literal = Literal(m[5].lstrip("~ \t"), m[5][0] != "~")
    else:
        seg.child, seg.keep = m[6], tuple(m[7].split())
    next(reversed(cert.nodes.values())).segments.append(seg)


def _core(cert: Certificate, m, line: _Where) -> None:
    cert.core = tuple(_int(k) for k in m[1].split())


def _infer(cert: Certificate, m, line: _Where) -> None:
    cert.steps.append(Inference(() if m[1] == "false" else _literals(m[1]), line.line))


def _value(cert: Certificate, m, line: _Where) -> None:
    cert.values[m[1]] = m[2]


def _bool(cert: Certificate, m, line: _Where) -> None:
    cert.bools[_int(m[1])] = m[2] == "true"


_READERS = {"problem": _problem_hash, "var": _var, "poly": _poly, "num": _num, "atom": _atom,
            "lemma": _lemma, "node": _node, "seg": _seg, "core": _core, "infer": _infer,
            "value": _value, "bool": _bool}


def read_certificate(text: str, path: str = "<certificate>") -> Certificate:
    """Parse certificate text into the data model, one statement per line; InputError names
    the line.  Ids must be declared once; whether claims hold is the checker's job."""
    cert = None
    for number, raw in enumerate(text.split("\n"), 1):
        raw = raw[:-1] if raw.endswith("\r") else raw
        words = raw.split(None, 1)                          # the usual line: a keyword, then a blank
        keyword = words[0] if words and words[0] in _STATEMENT else _KEYWORD.match(raw)[1]
        if keyword in ("", "%"):
            continue
        line = _Where(path, number, raw)
        if cert is None and keyword != "tessella":
            raise line.error("a certificate must start with 'tessella 1 unsat|sat'", keyword)
        if keyword not in _READERS and (keyword != "tessella" or cert is not None):
            raise line.error(f"unknown statement {keyword!r}", keyword)
        m = _STATEMENT[keyword].fullmatch(raw)
        if m is None:
            tokens = _TOKEN.findall(raw)
            bad = [t for t in tokens if len(t) == 1 and t not in "-+*^/@(),[]~<>=" and not t.isalnum()]
            raise line.error(f"unexpected character {bad[0]!r}", bad[0]) if bad else \
                line.error(f"malformed '{keyword}' statement (grammar: SPEC.md §10)", keyword)
        if cert is None:
            if _int(m[1]) != 1:
                raise line.error(f"unsupported certificate version {m[1]} (this checker reads 1)", m[1])
            cert = Certificate(kind=m[2], sha256="", variables=[], version=1)
        else:
            _READERS[keyword](cert, m, line)
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
