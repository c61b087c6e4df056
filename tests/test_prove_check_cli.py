"""`tessella prove` / `tessella check` / `python -m checker` end to end on the samples.

The samples are scenarios of our own invention; each states its expected answer
(`expect`), argued by hand in its comments. Their certificates are kept beside them
(`samples/*.cert`) and must be accepted and reproduced byte for byte.
"""
import json
import subprocess
import sys
from pathlib import Path

import pytest

from certformat.problem import load_problem

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = sorted((ROOT / "samples").glob("*.tess")) + sorted((ROOT / "samples").glob("*.smt2"))


@pytest.mark.parametrize("sample", SAMPLES, ids=[s.name for s in SAMPLES])
def test_sample_proves_as_expected_and_its_certificate_is_accepted(sample, tessella, tmp_path):
    expected = load_problem(sample).status
    cert = tmp_path / "out.cert"
    code, out, err = tessella("prove", sample, "--cert", cert, "--core")
    assert code == 0, err
    assert out.splitlines()[0] == expected
    code, out, _ = tessella("check", sample, cert)
    assert (code, out.splitlines()[0]) == (0, "accepted")
    kept = sample.with_suffix(sample.suffix + ".cert")
    assert kept.exists(), f"commit the certificate: tessella prove {sample} --cert {kept}"
    assert kept.read_text() == cert.read_text(), "certificates must be deterministic"


def test_prove_json_and_unknown_exit_code(tessella, tmp_path):
    problem = tmp_path / "p.tess"
    problem.write_text("real x, y\nassert x^2 + y^2 < 1 and x*y > 1\n")
    code, out, _ = tessella("prove", problem, "--json")
    report = json.loads(out)
    assert code == 0 and report["answer"] == "unsat" and report["core"][0]["assertion"] == 1
    code, out, _ = tessella("prove", problem, "--timeout", "0")
    assert code == 1 and out.splitlines()[:2] == ["unknown", "reason: time limit"]


def test_check_rejection_names_line_and_rule(tessella, tmp_path):
    sample = ROOT / "samples" / "arm-reach.tess"
    cert = tmp_path / "c.cert"
    text = (ROOT / "samples" / "arm-reach.tess.cert").read_text()
    lines = text.splitlines()
    drop = next(i for i, l in enumerate(lines) if l.startswith("  seg"))
    cert.write_text("\n".join(lines[:drop] + lines[drop + 1:]) + "\n")
    code, out, _ = tessella("check", sample, cert)
    first, second = out.splitlines()[:2]
    assert code == 1 and first == "rejected"
    assert second.startswith(f"{cert}:") and "rule" in second
    code, out, _ = tessella("check", sample, cert, "--json")
    assert code == 1 and json.loads(out)["verdict"] == "rejected"


@pytest.mark.parametrize("args, message", [
    (("check", "missing.tess", "missing.cert"), "cannot read"),
    (("prove", "missing.smt2"), "cannot read"),
])
def test_bad_paths_exit_2_without_traceback(tessella, args, message):
    code, out, err = tessella(*args)
    assert code == 2 and message in err and "Traceback" not in err and len(err.splitlines()) == 1


def test_malformed_certificate_exits_2(tessella, tmp_path):
    cert = tmp_path / "c.cert"
    cert.write_text("tessella 1 unsat\nthis is not a certificate\n")
    code, _, err = tessella("check", ROOT / "samples" / "arm-reach.tess", cert)
    assert code == 2 and f"{cert}:2" in err


def test_checker_module_runs_with_only_the_trusted_base(tmp_path):
    """`python -m checker` must work without importing the prover at all."""
    sample = ROOT / "samples" / "arm-reach.tess"
    cert = ROOT / "samples" / "arm-reach.tess.cert"
    code = ("import runpy, sys\n"
            f"sys.argv = ['checker', {str(sample)!r}, {str(cert)!r}]\n"
            "try:\n    runpy.run_module('checker', run_name='__main__')\n"
            "except SystemExit as e:\n    status = e.code\n"
            "assert not any(m == 'prover' or m.startswith('prover.') for m in sys.modules), "
            "'the checker imported the prover'\n"
            "sys.exit(status)\n")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, cwd=ROOT)
    assert done.returncode == 0, done.stderr
    assert done.stdout.splitlines()[0] == "accepted"
