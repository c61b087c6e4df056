"""Reading a problem file: bytes checked, hashed, and given to the right parser.

Implements PROBLEMS.md §"Files": ``.smt2`` is SMT-LIB, ``.tess`` is the native
syntax, any other name is sniffed (first significant character ``(`` or ``;``
means SMT-LIB).  The sha256 is taken over the exact bytes read.
"""
from __future__ import annotations

import hashlib
from pathlib import Path

from .errors import InputError, read_limited
from .formula import Problem, formula_depth
from .native import parse_native
from .smtlib import parse_smtlib
from .terms import MAX_FILE_BYTES


MAX_FORMULA_DEPTH = 200
"""Deepest Boolean structure accepted; keeps every recursive walk of a formula bounded."""


def load_problem(path) -> Problem:
    """The problem in the file ``path``."""
    return parse_problem_bytes(read_limited(path, MAX_FILE_BYTES, "the file"), str(path))


def parse_problem_bytes(data: bytes, path: str = "<input>") -> Problem:
    """The problem in ``data``, read as the file ``path`` would be."""
    if len(data) > MAX_FILE_BYTES:
        raise InputError(f"file larger than {MAX_FILE_BYTES} bytes", path, 1, 1, "file size")
    if not data.strip():
        raise InputError("empty problem file", path, 1, 1, "empty file")
    if b"\0" in data:
        raise _at_byte(data, data.index(b"\0"), "binary file (NUL byte)", path)
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as err:
        raise _at_byte(data, err.start, "not UTF-8 text", path) from None
    return parse_problem_text(text.removeprefix("\ufeff"), path, hashlib.sha256(data).hexdigest())


def parse_problem_text(text: str, path: str = "<input>", sha256: str | None = None) -> Problem:
    """The problem in ``text``; the syntax is chosen by the suffix of ``path`` or sniffed."""
    if sha256 is None:
        sha256 = hashlib.sha256(text.encode("utf-8")).hexdigest()
    suffix = Path(path).suffix.lower()
    if suffix == ".smt2" or (suffix != ".tess" and text.lstrip()[:1] in ("(", ";")):
        problem = parse_smtlib(text, path, sha256)
    else:
        problem = parse_native(text, path, sha256)
    for a in problem.assertions:
        if formula_depth(a.formula) > MAX_FORMULA_DEPTH:
            raise InputError(f"Boolean structure nested deeper than {MAX_FORMULA_DEPTH} levels "
                             "(after flattening and/or)", path, a.line, 1, "nesting")
    return problem


def _at_byte(data: bytes, offset: int, message: str, path: str) -> InputError:
    line = data.count(b"\n", 0, offset) + 1
    column = offset - (data.rfind(b"\n", 0, offset) + 1) + 1
    return InputError(f"{message} at byte {offset}", path, line, column, "encoding")
