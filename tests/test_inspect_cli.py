"""``tessella inspect``: what it prints, in text and JSON, and its exit codes."""
import hashlib
import json
from pathlib import Path

import pytest

SAMPLES = Path(__file__).resolve().parents[1] / "samples"


def test_every_sample_inspects(tessella):
    for path in sorted(p for p in SAMPLES.iterdir() if p.suffix in (".tess", ".smt2")):
        code, out, err = tessella("inspect", path)
        assert (code, err) == (0, ""), path
        assert f"sha256:            {hashlib.sha256(path.read_bytes()).hexdigest()}" in out


def test_text_report_of_the_arm_sample(tessella):
    code, out, _ = tessella("inspect", SAMPLES / "arm-reach.tess")
    assert code == 0
    assert "declared status:   unsat" in out
    assert "variables:         x, y" in out
    assert "Boolean variables: (none)" in out
    assert "assertions:        2" in out
    assert "pure conjunction:  yes" in out
    assert "atoms (3):" in out
    assert "  [3] 4*x^2 - 40*x + 4*y^2 + 91 <= 0\n      degree 2 (x: 2, y: 2)" in out


def test_json_report(tessella):
    path = SAMPLES / "panel-fit.tess"
    code, out, _ = tessella("inspect", path, "--json")
    assert code == 0
    report = json.loads(out)
    assert report["file"] == str(path)
    assert report["sha256"] == hashlib.sha256(path.read_bytes()).hexdigest()
    assert report["status"] == "sat" and report["logic"] is None
    assert report["variables"] == ["a", "b"]
    assert report["bool_variables"] == ["portrait"]
    assert report["assertions"] == 5
    assert report["pure_conjunction"] is False
    assert report["formula_size"] > 10
    first = report["atoms"][0]
    assert first == {"atom": "a > 0", "polynomial": "a", "relation": ">", "degree": 1,
                     "degrees": {"a": 1}}
    product = next(a for a in report["atoms"] if a["polynomial"] == "a*b - 2")
    assert product["degree"] == 2 and product["degrees"] == {"a": 1, "b": 1}


def test_output_is_deterministic(tessella):
    runs = {tessella("inspect", SAMPLES / "divider-tolerance.tess", "--json")[1] for _ in range(3)}
    assert len(runs) == 1


def test_variables_keep_declaration_order_and_terms_lex_order(tmp_path, tessella):
    path = tmp_path / "order.smt2"
    path.write_text("(declare-fun zeta () Real)(declare-fun alpha () Real)"
                    "(assert (< (+ alpha (* zeta zeta) 1 (* alpha zeta)) 0))")
    report = json.loads(tessella("inspect", path, "--json")[1])
    assert report["variables"] == ["zeta", "alpha"]
    assert report["atoms"][0]["polynomial"] == "zeta^2 + zeta*alpha + alpha + 1"


def test_usage_errors_exit_2(tessella):
    assert tessella()[0] == 2
    assert tessella("inspect")[0] == 2
    assert tessella("frobnicate", "x")[0] == 2
    code, out, _ = tessella("--help")
    assert code == 0 and "inspect" in out


def test_internal_error_is_one_line_exit_3(tessella, monkeypatch):
    import prover.cli

    def broken(path):
        raise RuntimeError("boom\nsecond line")
    monkeypatch.setattr(prover.cli, "load_problem", broken)
    code, out, err = tessella("inspect", SAMPLES / "arm-reach.tess")
    assert code == 3 and out == ""
    assert err.count("\n") == 1 and "internal error: RuntimeError: boom second line" in err
    assert "Traceback" not in err


@pytest.mark.parametrize("name", ["arm-reach.tess", "arm-reach.smt2"])
def test_console_script_entry_point(name):
    from prover.cli import main
    assert main(["inspect", str(SAMPLES / name)]) == 0
