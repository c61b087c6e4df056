"""``tessella report``: the audit report's content, its picture, and its errors."""
import hashlib
import json
import sys
from fractions import Fraction
from pathlib import Path

import pytest

from certformat.certificate import Certificate, Number
from prover.picture import number_value, real_roots

SAMPLES = Path(__file__).resolve().parents[1] / "samples"
ARM = SAMPLES / "arm-reach.tess"
PANEL = SAMPLES / "panel-fit.tess"


def sha256(path) -> str:
    return hashlib.sha256(Path(path).read_bytes()).hexdigest()


def png_image(path):
    """The PNG as an array (rows, columns, channels), read back by matplotlib."""
    import matplotlib.image
    return matplotlib.image.imread(str(path))


@pytest.fixture(scope="module")
def arm_report(tmp_path_factory):
    """The report of the arm sample, proved by the report itself."""
    from prover.cli import main
    out = tmp_path_factory.mktemp("arm")
    assert main(["report", str(ARM), "--out", str(out)]) == 0
    return out


def test_unsat_report_has_verdict_hashes_core_and_picture(arm_report):
    cert = arm_report / "arm-reach.cert"
    md = (arm_report / "report.md").read_text(encoding="utf-8")
    assert f"| Problem SHA-256 | `{sha256(ARM)}` |" in md
    assert f"| Certificate SHA-256 | `{sha256(cert)}` |" in md
    assert "| Verdict of the checker | **accepted (unsat)** |" in md
    assert "| Checker version | 1.0 |" in md
    assert "#1  line 15:  assert 1 <= x^2 + y^2 <= 9" in md  # the user's own text
    assert "#2  line 16:  assert (x - 5)^2 + y^2 <= 1.5^2" in md
    assert "](covering.png)" in md
    assert "| lemmas | 1 |" in md and "| covering nodes | 3 |" in md
    assert "`checker/cover.py`" in md and "python-flint" in md
    assert "applicable safety" in md and "qualified people" in md
    assert "floating-point code" in md
    data = json.loads((arm_report / "report.json").read_text(encoding="utf-8"))
    assert data["verdict"]["verdict"] == "accepted"
    assert [a["assertion"] for a in data["core"]] == [1, 2]
    assert data["checker"]["trusted_lines"] == sum(data["checker"]["trusted_base"].values())
    page = (arm_report / "report.html").read_text(encoding="utf-8")
    assert sha256(ARM) in page and sha256(cert) in page
    assert 'src="data:image/png;base64,' in page
    assert "http://" not in page and "https://" not in page and "<script" not in page


def test_covering_picture_is_a_real_image(arm_report):
    image = png_image(arm_report / "covering.png")
    assert image.shape[0] > 300 and image.shape[1] > 300
    colours = {tuple(round(float(c), 2) for c in pixel[:3]) for pixel in image[::7, ::7].reshape(
        -1, image.shape[2])}
    assert len(colours) > 10  # cells in two colours, their overlap, curves, text


def test_report_is_deterministic(arm_report, tessella):
    before = {name: (arm_report / name).read_bytes()
              for name in ("report.md", "report.html", "report.json", "covering.png")}
    assert tessella("report", ARM, "--out", arm_report)[0] == 0
    assert before == {name: (arm_report / name).read_bytes() for name in before}


def test_cli_output(tmp_path, tessella):
    code, out, err = tessella("report", ARM, "--out", tmp_path)
    assert code == 0 and err == ""
    assert out.splitlines()[0] == "accepted"
    assert f"report written to {tmp_path / 'report.html'}" in out


def test_two_lemmas_get_two_panels(tmp_path):
    from prover.report import make_report
    problem = tmp_path / "disc.tess"
    problem.write_text("real x, y\nassert x^2 + y^2 <= 4\n"
                       "assert y >= x^2 + 2.5 or x*y >= 3\n")
    data = make_report(str(problem), None, str(tmp_path / "out"))
    assert data["verdict"]["verdict"] == "accepted"
    assert data["statistics"]["lemmas"] == 2
    assert data["picture"]["caption"].startswith("Covering of 2 of 2 lemma(s)")
    image = png_image(tmp_path / "out" / "covering.png")
    assert image.shape[1] > 1.5 * image.shape[0]  # two panels side by side


def test_sat_report_shows_the_witness(tmp_path, tessella):
    code, out, _ = tessella("report", PANEL, "--out", tmp_path)
    assert code == 0 and out.startswith("accepted\n")
    md = (tmp_path / "report.md").read_text(encoding="utf-8")
    assert "**accepted (sat)**" in md
    assert "## Witness" in md and "## Unsat core" not in md
    assert "a = 3/2   (≈ 1.5)" in md and "portrait = false" in md
    assert "](witness.png)" in md and (tmp_path / "witness.png").is_file()
    assert not (tmp_path / "covering.png").exists()


def test_rejected_certificate_says_why(tmp_path, arm_report, tessella):
    code, out, _ = tessella("report", PANEL, "--cert", arm_report / "arm-reach.cert",
                            "--out", tmp_path)
    assert code == 1 and out.startswith("rejected\n")
    md = (tmp_path / "report.md").read_text(encoding="utf-8")
    assert "**rejected (rule HASH, certificate line 2): the certificate is for a different " \
           "problem file" in md
    assert "establishes nothing" in md
    assert "Picture skipped: the certificate was rejected" in md
    assert "## Unsat core" not in md
    assert not (tmp_path / "covering.png").exists()
    page = (tmp_path / "report.html").read_text(encoding="utf-8")
    assert 'class="rejected"' in page and sha256(PANEL) in page


def test_unknown_answer_without_certificate(tmp_path, tessella, monkeypatch):
    import prover.solve
    from prover.solve import ProveResult
    monkeypatch.setattr(prover.solve, "prove",
                        lambda problem, timeout=None: ProveResult("unknown", "time limit"))
    code, out, _ = tessella("report", ARM, "--out", tmp_path, "--timeout", "1")
    assert code == 1 and out.startswith("unknown\n")
    md = (tmp_path / "report.md").read_text(encoding="utf-8")
    assert "No certificate: the prover answered unknown: time limit." in md
    assert "Certificate SHA-256" not in md


def test_three_variables_get_no_picture(tmp_path):
    from prover.report import make_report
    data = make_report(str(SAMPLES / "divider-tolerance.tess"), None, str(tmp_path))
    assert data["verdict"]["verdict"] == "accepted"
    assert data["picture"]["skipped"] == ("pictures are drawn for problems in two variables; "
                                          "this one has 3")
    assert "Picture skipped: pictures are drawn" in (tmp_path / "report.md").read_text()


def test_without_matplotlib_the_picture_is_skipped(tmp_path, arm_report, monkeypatch):
    from prover.report import make_report
    monkeypatch.setitem(sys.modules, "matplotlib", None)  # import matplotlib now fails
    data = make_report(str(ARM), str(arm_report / "arm-reach.cert"), str(tmp_path))
    assert data["verdict"]["verdict"] == "accepted"
    assert data["picture"]["skipped"].startswith("matplotlib is not installed")
    assert "tessella[report]" in (tmp_path / "report.html").read_text()
    assert "data:image/png" not in (tmp_path / "report.html").read_text()


def test_user_text_is_escaped(tmp_path):
    from prover.report import make_report
    problem = tmp_path / "odd<b>name.smt2"
    problem.write_text("(declare-fun |<img src=x>| () Real)\n"
                       "(assert (> (* |<img src=x>| |<img src=x>|) (- 1)))\n"
                       "(assert (< |<img src=x>| 0))\n(assert (> |<img src=x>| 0))\n")
    make_report(str(problem), None, str(tmp_path / "out"))
    page = (tmp_path / "out" / "report.html").read_text(encoding="utf-8")
    assert "<img src=x>" not in page and "<b>" not in page
    assert "&lt;img src=x&gt;" in page and "odd&lt;b&gt;name.smt2" in page


@pytest.mark.parametrize("make, message", [
    (lambda d: ["report", d / "missing.tess", "--out", d / "out"],
     "missing.tess: cannot read the file: No such file or directory"),
    (lambda d: ["report", ARM, "--cert", d / "missing.cert", "--out", d / "out"],
     "missing.cert: cannot read certificate: No such file or directory"),
    (lambda d: ["report", ARM, "--cert", d, "--out", d / "out"],
     "cannot read certificate: Is a directory"),
    (lambda d: ["report", ARM, "--cert", d / "binary.cert", "--out", d / "out"],
     "binary.cert: certificate is not UTF-8 text"),
    (lambda d: ["report", ARM, "--cert", d / "garbage.cert", "--out", d / "out"],
     "garbage.cert:1"),
    (lambda d: ["report", ARM, "--out", d / "a-file"],
     "a-file: --out must name a directory, and this is a file"),
    (lambda d: ["report", ARM, "--out", d / "a-file" / "below"],
     "cannot create the report directory"),
])
def test_bad_paths_give_one_line_errors(tmp_path, tessella, make, message):
    (tmp_path / "binary.cert").write_bytes(b"\xff\xfe\x00 not text")
    (tmp_path / "garbage.cert").write_text("this is not a certificate\n")
    (tmp_path / "a-file").write_text("x")
    code, out, err = tessella(*make(tmp_path))
    assert code == 2 and out == ""
    assert err.startswith("tessella: error: ") and err.count("\n") == 1, err
    assert message in err and "Traceback" not in err


def test_out_is_required(tessella):
    code, _, err = tessella("report", ARM)
    assert code == 2 and "--out" in err


def test_picture_numbers():
    assert real_roots([-2, 0, 1], __import__("numpy")) == pytest.approx([-2**0.5, 2**0.5])
    assert real_roots([1, 0, 1], __import__("numpy")) == []
    cert = Certificate("unsat", "0" * 64, [], numbers={
        "n1": Number("z^2-2", Fraction(1), Fraction(3, 2)),  # sqrt(2): common-practice fact
        "n2": Number(None, Fraction(-7, 4), Fraction(-7, 4))})
    assert number_value(cert, "n1") == pytest.approx(2**0.5, rel=1e-14)
    assert number_value(cert, "n2") == -1.75
