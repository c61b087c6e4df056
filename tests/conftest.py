"""Shared fixtures: exact truth of a parsed problem at a point, and the CLI run in-process."""
from fractions import Fraction

import pytest

from certformat.formula import evaluate, relation_holds


def poly_value(poly, point) -> Fraction:
    """The exact value of an integer ``fmpz_mpoly`` at a tuple of Fractions."""
    total = Fraction(0)
    for exponents, coefficient in poly.to_dict().items():
        term = Fraction(int(coefficient))
        for value, e in zip(point, exponents):
            term *= value ** int(e)
        total += term
    return total


@pytest.fixture
def truth():
    """``truth(problem, point, bools={})``: whether the problem's formula holds at
    ``point`` (variable name -> Fraction) with the given Boolean values."""
    def truth(problem, point, bools=None):
        values = tuple(point[name] for name in problem.variables)

        def atom_value(atom):
            v = poly_value(atom.poly, values)
            return relation_holds(atom.rel, (v > 0) - (v < 0))
        return evaluate(problem.formula(), atom_value, lambda name: (bools or {})[name])
    return truth


@pytest.fixture
def tessella(capsys):
    """``tessella(*args) -> (exit code, stdout, stderr)``, running the CLI in-process."""
    from prover.cli import main

    def run(*args):
        code = main([str(a) for a in args])
        out, err = capsys.readouterr()
        return code, out, err
    return run
