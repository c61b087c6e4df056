"""Writing certificates: the canonical text of SPEC.md, read back exactly by
:func:`certformat.certio.read_certificate`.  The same model always gives the same bytes.

The writer is not part of the trusted base: a wrong text can only make the
checker reject.
"""
from __future__ import annotations

import json
import re
from fractions import Fraction

from flint import fmpz, fmpz_mpoly, fmpz_mpoly_ctx

from certformat.certificate import Certificate, Number, Segment
from certformat.formula import poly_context

Poly = dict[tuple[int, ...], int]
_BINARY_SIGN = re.compile(r"(?<=\w)([-+])")


def poly_text(poly: Poly, var=lambda k: f"x{k + 1}") -> str:
    """Canonical text of a polynomial: terms in descending lex order of exponents."""
    if not poly:
        return "0"
    out = []
    for exps in sorted(poly, reverse=True):
        c = poly[exps]
        powers = [var(k) + (f"^{e}" if e > 1 else "") for k, e in enumerate(exps) if e]
        mag = abs(c)
        body = "*".join(([str(fmpz(mag))] if mag != 1 or not powers else []) + powers)
        out.append(("- " if c < 0 else "+ ") + body)
    text = " ".join(out)
    return text[2:] if text.startswith("+ ") else "-" + text[2:]


def compact(text: str) -> str:
    """A polynomial's text as the data model keeps it: blanks removed."""
    return "".join(text.split())


def spaced(text: str) -> str:
    """A compact polynomial text with its binary signs spaced, as :func:`poly_text` writes them."""
    return _BINARY_SIGN.sub(r" \1 ", text)


def poly_terms(text: str, nvars: int) -> Poly:
    """The exponent dictionary of a certificate's polynomial text in ``x1 … xn``."""
    f = fmpz_mpoly(compact(text), poly_context(nvars))       # generators x1 … xn, as in certificates
    return {tuple(int(x) for x in e)[:nvars]: int(c) for e, c in zip(f.monoms(), f.coeffs())}


def number_coefficients(text: str) -> list[int]:
    """The coefficients, constant first, of a number's defining polynomial text in ``z``."""
    f = fmpz_mpoly(compact(text), fmpz_mpoly_ctx.get(("z",), "lex"))
    coeffs = [0] * (f.degrees()[0] + 1)
    for (e,), c in zip(f.monoms(), f.coeffs()):
        coeffs[e] = int(c)
    return coeffs


def rational_text(q: Fraction) -> str:
    """``p/q`` in lowest terms, or ``p`` for an integer."""
    q = Fraction(q)
    num, den = str(fmpz(q.numerator)), str(fmpz(q.denominator))     # any number of digits
    return num if den == "1" else f"{num}/{den}"


def number_text(num: Number) -> str:
    """Right-hand side of a ``num`` line."""
    if num.poly is None:
        return rational_text(num.low)
    return f"{spaced(num.poly)} @ ({rational_text(num.low)}, {rational_text(num.high)})"


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
    lines += [f"poly {pid} = {spaced(text)}" for pid, text in cert.polys.items()]
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
