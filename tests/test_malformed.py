"""Malformed problems through ``tessella inspect``: each gives exit code 2 and exactly
one line on stderr naming the file and a line:column position, never a traceback."""
import re

import pytest

from certformat.terms import MAX_NESTING, MAX_NUMERAL_DIGITS

DECL = "(declare-fun x () Real)\n"

# (name, file name, content as bytes, a phrase the message must contain)
CASES = [
    ("empty", "p.smt2", b"", "empty"),
    ("whitespace only", "p.tess", b"  \n\t\n", "empty"),
    ("binary garbage", "p.smt2", b"(assert \x00\x01\x02\xff)", "binary"),
    ("not UTF-8", "p.tess", b"real x\nassert x > 0 # caf\xe9\n", "not UTF-8"),
    ("truncated file", "p.smt2", DECL.encode() + b"(assert (and (> x 0) (< x", "end of file"),
    ("unclosed parenthesis", "p.smt2", DECL.encode() + b"(assert (> x 0)\n", "end of file"),
    ("extra closing parenthesis", "p.smt2", DECL.encode() + b"(assert (> x 0)))\n", "')'"),
    ("stray character", "p.smt2", DECL.encode() + b"(assert (> x 0)) {\n", "character '{'"),
    ("Int sort", "p.smt2", b"(declare-fun n () Int)\n", "sort Int"),
    ("to_real", "p.smt2", DECL.encode() + b"(assert (> (to_real x) 0))\n", "to_real"),
    ("unknown function", "p.smt2", DECL.encode() + b"(assert (> (sin x) 0))\n", "'sin'"),
    ("unknown symbol", "p.smt2", DECL.encode() + b"(assert (> y 0))\n", "unknown symbol 'y'"),
    ("division by a variable", "p.smt2", DECL.encode() + b"(assert (> (/ 1 x) 0))\n",
     "division by a non-constant"),
    ("division by zero", "p.smt2", DECL.encode() + b"(assert (> (/ x 0.0) 0))\n",
     "division by zero"),
    ("quantifier", "p.smt2", b"(assert (forall ((t Real)) (> (* t t) (- 1))))\n", "forall"),
    ("several check-sat", "p.smt2", DECL.encode() + b"(check-sat)\n(check-sat)\n",
     "several check-sat"),
    ("push", "p.smt2", DECL.encode() + b"(push 1)\n", "push"),
    ("numeral beyond the digit limit", "p.smt2",
     DECL.encode() + b"(assert (> x " + b"7" * (MAX_NUMERAL_DIGITS + 1) + b"))\n", "digits"),
    ("nesting beyond the limit", "p.smt2",
     DECL.encode() + b"(assert (> " + b"(- " * (MAX_NESTING + 1) + b"x"
     + b")" * (MAX_NESTING + 1) + b" 0))\n", "nested deeper"),
    ("Boolean nesting beyond the limit", "p.smt2",
     DECL.encode() + b"(assert " + b"(not (and (> x 0) " * 101 + b"(> x 1)" + b"))" * 101
     + b")\n", "Boolean structure nested deeper"),
    ("declare-fun with arguments", "p.smt2", b"(declare-fun f (Real) Real)\n",
     "functions with arguments"),
    ("redeclaration", "p.smt2", DECL.encode() + DECL.encode(), "already declared"),
    ("assert of a Real term", "p.smt2", DECL.encode() + b"(assert (+ x 1))\n", "Bool term"),
    ("degree beyond the limit", "p.smt2",
     DECL.encode() + b"(define-fun a () Real (* x x x x x x x x x x))\n"
     b"(define-fun b () Real (* a a a a a a a a a a))\n(assert (> (* b b b b b b b b b b x) 0))\n",
     "degree"),
    ("array sort", "p.smt2", b"(declare-fun m () (Array Real Real))\n", "sort (Array"),
    ("native: implicit multiplication", "p.tess", b"real x\nassert 2x > 0\n", "unexpected 'x'"),
    ("native: division by a variable", "p.tess", b"real x, y\nassert x / y > 1\n",
     "division by a non-constant"),
    ("native: undeclared name", "p.tess", b"real x\nassert x + z > 1\n", "unknown name 'z'"),
    ("native: real where a formula is needed", "p.tess", b"real x\nassert x + 1\n",
     "expected a formula"),
    ("native: unknown statement", "p.tess", b"real x\nminimize x\n", "unexpected 'minimize'"),
    ("native: bad expectation", "p.tess", b"real x\nexpect perhaps\n", "expect"),
    ("unknown suffix, sniffed as native", "p.txt", b"real x\nassert x >> 0\n", "unexpected"),
    ("unknown suffix, sniffed as SMT-LIB", "p.txt", b"; comment\n(assert (> y 0))\n",
     "unknown symbol"),
]


@pytest.mark.parametrize("name, filename, content, phrase", CASES, ids=[c[0] for c in CASES])
def test_malformed_problem_is_one_clean_error_line(tmp_path, tessella, name, filename,
                                                  content, phrase):
    path = tmp_path / filename
    path.write_bytes(content)
    code, out, err = tessella("inspect", path)
    assert code == 2
    assert out == ""
    lines = err.splitlines()
    assert len(lines) == 1, err
    assert "Traceback" not in err
    assert lines[0].startswith(f"tessella: error: {path}:")
    assert re.match(rf"tessella: error: {re.escape(str(path))}:\d+:\d+: ", lines[0]), lines[0]
    assert phrase in lines[0]


def test_there_are_at_least_twenty_cases():
    assert len(CASES) >= 20


def test_position_of_a_non_utf8_byte(tmp_path, tessella):
    path = tmp_path / "p.tess"
    path.write_bytes(b"real x\nassert x > 0 # caf\xe9\n")
    _, _, err = tessella("inspect", path)
    assert f"{path}:2:19: not UTF-8" in err


def test_missing_file_and_directory(tmp_path, tessella):
    code, _, err = tessella("inspect", tmp_path / "absent.smt2")
    assert code == 2 and err.count("\n") == 1 and "absent.smt2" in err and "cannot read" in err
    code, _, err = tessella("inspect", tmp_path)
    assert code == 2 and err.count("\n") == 1 and "cannot read" in err


def test_file_size_limit(tmp_path, tessella, monkeypatch):
    import certformat.problem
    monkeypatch.setattr(certformat.problem, "MAX_FILE_BYTES", 100)
    path = tmp_path / "big.smt2"
    path.write_bytes(b"; " + b"x" * 200 + b"\n")
    code, _, err = tessella("inspect", path)
    assert code == 2 and err.count("\n") == 1 and "larger than 100 bytes" in err
