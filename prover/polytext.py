"""Polynomials printed with the user's variable names (for reports, never parsed back).

Terms come in lex order of the declared variables, highest first, as in the
canonical form of formula.py; the text is valid native syntax when the names are.
"""
from __future__ import annotations

import re

from flint import fmpz

_PLAIN = re.compile(r"[A-Za-z_?.~!@$%&][A-Za-z0-9_?.~!@$%&']*")


def poly_to_text(poly, names) -> str:
    """``poly`` (an integer ``fmpz_mpoly``) as ``3*x^2*y - 2*x + 5``."""
    names = [n if _PLAIN.fullmatch(n) else f"|{n}|" for n in names]
    out = []
    for exponents, coefficient in sorted(poly.to_dict().items(), reverse=True):
        coefficient = int(coefficient)
        factors = [name if e == 1 else f"{name}^{e}" for name, e in zip(names, exponents) if e]
        magnitude = abs(coefficient)
        if magnitude != 1 or not factors:
            factors.insert(0, str(fmpz(magnitude)))          # any number of digits
        sign = ("-" if coefficient < 0 else "") if not out else ("- " if coefficient < 0 else "+ ")
        out.append(sign + "*".join(factors))
    return " ".join(out) if out else "0"
