"""`tessella batch`: a mixed folder on two workers, JSON lines and JUnit XML, skipping
unchanged work, the merge-gate mode `--check-only`, bad paths and unreadable files.

The problems are the repository's samples (each argued by hand in its comments) and a
few tiny ones written here whose answers are obvious: x^2 < 0 has no real solution,
x^2 > 2 has one.
"""
import io
import json
import os
import shutil
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

from prover import batch

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = sorted(p for p in (ROOT / "samples").iterdir() if p.suffix in (".tess", ".smt2"))

SAT_SMT2 = """(set-logic QF_NRA)
(declare-fun x () Real)
(assert (> (* x x) 2.0))
(check-sat)
"""
WRONG_TESS = "# declared sat, but x^2 < 0 has no solution\nreal x\nassert x^2 < 0\nexpect sat\n"
MALFORMED_TESS = "real x\nassert x^^2 < 0\n"


def samples_into(folder: Path) -> list[Path]:
    folder.mkdir(parents=True, exist_ok=True)
    return [Path(shutil.copy(s, folder / s.name)) for s in SAMPLES]


@pytest.fixture
def mixed(tmp_path) -> Path:
    """Samples (sat and unsat), a sat problem without declared status, a wrong declared
    status, a syntax error, a binary file, a dangling link and a file that is no problem."""
    root = tmp_path / "obligations"
    samples_into(root)
    (root / "deep" / "er").mkdir(parents=True)
    (root / "deep" / "er" / "free.smt2").write_text(SAT_SMT2)
    (root / "deep" / "wrong.tess").write_text(WRONG_TESS)
    (root / "broken.tess").write_text(MALFORMED_TESS)
    (root / "binary.smt2").write_bytes(b"(assert \0)")
    (root / "gone.smt2").symlink_to(root / "nowhere.smt2")
    (root / "notes.txt").write_text("not a problem")
    return root


def read_jsonl(path: Path) -> list[dict]:
    return [json.loads(line) for line in path.read_text().splitlines()]


def test_mixed_folder_on_two_workers_gives_one_record_and_one_testcase_per_problem(
        mixed, tmp_path, tessella):
    certs, out, xml = tmp_path / "certs", tmp_path / "out.jsonl", tmp_path / "out.xml"
    code, stdout, stderr = tessella("batch", mixed, "-j", "2", "--check", "--certs", certs,
                                    "--json", out, "--junit", xml)
    problems = sorted(str(p) for p in mixed.rglob("*") if p.suffix in (".smt2", ".tess"))
    assert len(problems) == len(SAMPLES) + 5
    records = read_jsonl(out)
    assert [r["file"] for r in records] == problems  # sorted, deterministic
    by_name = {Path(r["file"]).name: r for r in records}
    for sample in SAMPLES:
        r = by_name[sample.name]
        assert (r["answer"], r["outcome"], r["verdict"]) == (r["expected"], "pass", "accepted")
        cert = certs / (sample.name + ".cert")
        assert r["certificate"] == str(cert) and cert.is_file()
        assert r["certificate_sha256"] == batch.hashlib.sha256(cert.read_bytes()).hexdigest()
        assert r["sha256"] == batch.hashlib.sha256(sample.read_bytes()).hexdigest()
        assert r["prove_seconds"] >= 0 and r["check_seconds"] >= 0
    free = by_name["free.smt2"]
    assert (free["answer"], free["expected"], free["outcome"]) == ("sat", None, "pass")
    assert (certs / "deep" / "er" / "free.smt2.cert").is_file()  # mirror tree
    assert by_name["wrong.tess"]["failure"] == "wrong"
    assert by_name["broken.tess"]["failure"] == "error"
    assert by_name["broken.tess"]["reason"].startswith(f"{mixed / 'broken.tess'}:2:")
    assert "binary file" in by_name["binary.smt2"]["reason"]
    assert "cannot read the file: No such file or directory" in by_name["gone.smt2"]["reason"]
    assert code == 1
    assert "FAIL wrong" in stdout and "problems/s" in stdout
    assert "Traceback" not in stderr

    suite = ET.parse(xml).getroot()  # valid XML, or this raises
    cases = suite.findall("./testsuite/testcase")
    assert sorted(c.get("name") for c in cases) == problems
    failed = {Path(c.get("name")).name: c.find("failure").get("type")
              for c in cases if c.find("failure") is not None}
    assert failed == {"wrong.tess": "wrong", "broken.tess": "error", "binary.smt2": "error",
                      "gone.smt2": "error"}
    assert suite.find("testsuite").get("tests") == str(len(problems))
    assert suite.find("testsuite").get("failures") == "4"


def test_clean_folder_passes_and_unknown_is_skipped_not_failed(tmp_path, tessella):
    folder = tmp_path / "ok"
    samples_into(folder)
    code, out, _ = tessella("batch", folder, "-j", "2", "--check")
    assert code == 0 and f"{len(SAMPLES)} passed, 0 failed" in out
    assert all((folder / (s.name + ".cert")).is_file() for s in SAMPLES)  # beside by default

    other, xml = tmp_path / "slow", tmp_path / "slow.xml"
    samples_into(other)
    code, out, _ = tessella("batch", other, "--timeout", "1e-9", "--junit", xml)
    assert code == 0 and f"0 failed, {len(SAMPLES)} skipped" in out
    skipped = ET.parse(xml).getroot().findall("./testsuite/testcase/skipped")
    assert len(skipped) == len(SAMPLES) and "time limit" in skipped[0].get("message")
    assert not list(other.glob("*.cert"))


def test_unchanged_problems_and_certificates_are_skipped(tmp_path, tessella):
    folder, out = tmp_path / "p", tmp_path / "out.jsonl"
    samples_into(folder)
    (folder / "free.smt2").write_text(SAT_SMT2)
    assert tessella("batch", folder, "--check", "--json", out)[0] == 0
    first = read_jsonl(out)
    assert not any(r["unchanged"] for r in first)
    assert (folder / batch.STATE_FILE).is_file()

    code, stdout, _ = tessella("batch", folder, "--check", "--json", out)
    again = read_jsonl(out)
    assert code == 0 and all(r["unchanged"] for r in again)
    assert f"unchanged: {len(first)}" in stdout
    assert [(r["answer"], r["certificate_sha256"]) for r in again] == \
           [(r["answer"], r["certificate_sha256"]) for r in first]

    with open(folder / "free.smt2", "a") as f:          # the problem changed
        f.write("; a comment changes the bytes\n")
    cert = folder / (SAMPLES[0].name + ".cert")
    original = cert.read_text()
    cert.write_text(original + "\n")                      # a certificate changed
    tessella("batch", folder, "--check", "--json", out)
    rerun = {Path(r["file"]).name for r in read_jsonl(out) if not r["unchanged"]}
    assert rerun == {"free.smt2", SAMPLES[0].name}
    assert cert.read_text() == original                  # proved again, deterministically

    other = tmp_path / "q"
    samples_into(other)
    tessella("batch", other, "--json", out)              # proved, not checked
    code, _, _ = tessella("batch", other, "--check", "--json", out)
    assert code == 0 and not any(r["unchanged"] for r in read_jsonl(out))


def test_check_only_is_the_merge_gate(tmp_path, tessella):
    folder, certs, out = tmp_path / "p", tmp_path / "certs", tmp_path / "out.jsonl"
    samples_into(folder)
    assert tessella("batch", folder, "--certs", certs)[0] == 0
    before = sorted(p.name for p in certs.rglob("*"))

    code, stdout, _ = tessella("batch", folder, "--certs", certs, "--check-only", "--json", out)
    records = read_jsonl(out)
    assert code == 0 and all(r["verdict"] == "accepted" and not r["unchanged"] for r in records)
    assert all(r["prove_seconds"] is None for r in records)  # nothing proved
    assert sorted(p.name for p in certs.rglob("*")) == before  # nothing written
    state = json.loads((certs / batch.STATE_FILE).read_text())
    assert len(state["records"]) == len(SAMPLES)

    unsat = next(s for s in SAMPLES if "expect unsat" in s.read_text())
    with open(folder / unsat.name, "a") as f:            # the certificate no longer fits
        f.write("\n# edited after proving\n")
    (certs / (SAMPLES[-1].name + ".cert")).unlink()      # a certificate is missing
    code, stdout, _ = tessella("batch", folder, "--certs", certs, "--check-only", "--json", out)
    failures = {Path(r["file"]).name: r for r in read_jsonl(out) if r["outcome"] == "fail"}
    assert code == 1
    assert failures[SAMPLES[-1].name]["failure"] == "missing"
    hash_rejection = failures[unsat.name]
    assert hash_rejection["failure"] == "rejected"
    assert hash_rejection["rejection"]["rule"] == "HASH"
    assert f"FAIL missing  {folder / SAMPLES[-1].name}" in stdout

    (certs / (unsat.name + ".cert")).write_text("tessella 1 unsat\nnonsense\n")
    code, _, _ = tessella("batch", folder / unsat.name, "--certs", certs, "--check-only",
                          "--json", out)
    (record,) = read_jsonl(out)
    assert code == 1 and record["failure"] == "rejected"
    assert "certificate syntax error" in record["rejection"]["reason"]


def test_wrong_answer_in_check_only_fails_even_when_the_certificate_is_accepted(
        tmp_path, tessella):
    folder = tmp_path / "p"
    folder.mkdir()
    (folder / "free.tess").write_text("real x\nassert x^2 > 2\n")
    assert tessella("batch", folder)[0] == 0
    (folder / "free.tess").write_text("real x\nassert x^2 > 2\nexpect unsat\n")
    certificate = (folder / "free.tess.cert").read_text()
    # The certificate names the old bytes; re-prove under the new declaration instead.
    code, out, _ = tessella("batch", folder, "--check")
    assert code == 1 and "FAIL wrong" in out and "declared status unsat" in out
    assert (folder / "free.tess.cert").read_text() != certificate
    code, out, _ = tessella("batch", folder, "--check-only")
    assert code == 1 and "FAIL wrong" in out


def test_bad_paths_and_usage_errors_exit_2_with_one_line(tmp_path, tessella):
    code, out, err = tessella("batch", tmp_path / "missing")
    assert code == 2 and err.strip() == \
        f"tessella: error: {tmp_path / 'missing'}: no such file or directory"
    (tmp_path / "empty").mkdir()
    code, _, err = tessella("batch", tmp_path / "empty")
    assert code == 2 and "no problem files (.smt2, .tess) found" in err
    assert len(err.strip().splitlines()) == 1
    sample = shutil.copy(SAMPLES[0], tmp_path / SAMPLES[0].name)
    for args in (["-j", "0"], ["--timeout", "-1"], ["--executor", "dask"],
                 ["--scheduler", "tcp://127.0.0.1:1"], ["--check", "--check-only"],
                 ["--json", tmp_path / "no" / "such" / "dir.jsonl"]):
        code, _, err = tessella("batch", sample, *args)
        assert code == 2, args
        assert "Traceback" not in err


def test_problems_that_would_share_a_certificate_are_refused(tmp_path, tessella):
    for name in ("a", "b"):
        samples_into(tmp_path / name)
    code, _, err = tessella("batch", tmp_path / "a", tmp_path / "b", "--certs", tmp_path / "c")
    assert code == 2 and "would share the certificate" in err
    code, _, _ = tessella("batch", tmp_path / "a", tmp_path / "a" / SAMPLES[0].name)
    assert code == 0  # the same file reached twice is taken once


@pytest.mark.skipif(os.geteuid() == 0, reason="root reads files without read permission")
def test_unreadable_file_is_an_error_record(tmp_path, tessella):
    folder = tmp_path / "p"
    samples_into(folder)
    locked = folder / SAMPLES[0].name
    locked.chmod(0)
    out = tmp_path / "out.jsonl"
    code, _, _ = tessella("batch", folder, "--json", out)
    record = next(r for r in read_jsonl(out) if r["file"] == str(locked))
    assert code == 1 and "cannot read the file: Permission denied" in record["reason"]


def test_a_runaway_task_is_killed_at_the_hard_limit(tmp_path, monkeypatch, tessella):
    def runaway(*args):
        import time
        time.sleep(60)
    monkeypatch.setattr(batch, "run_one", runaway)   # the forked workers inherit it
    monkeypatch.setattr(batch, "GRACE", 0.5)
    folder, xml = tmp_path / "p", tmp_path / "out.xml"
    samples_into(folder)
    code, out, _ = tessella("batch", folder / SAMPLES[0].name, "--timeout", "0.5",
                            "--junit", xml)
    assert code == 0 and "1 skipped" in out
    skipped = ET.parse(xml).getroot().find("./testsuite/testcase/skipped")
    assert "killed at the hard limit of 1 s" in skipped.get("message")


def test_progress_is_a_bar_on_a_terminal_and_plain_lines_elsewhere():
    class Terminal(io.StringIO):
        def isatty(self):
            return True
    record = {"outcome": "pass", "answer": "unsat"}
    tty = Terminal()
    progress = batch.Progress(2, tty)
    progress(record)
    progress({"outcome": "fail", "answer": "error"})
    progress.close()
    assert "\r[" in tty.getvalue() and "2/2" in tty.getvalue()
    assert "unsat 1" in tty.getvalue() and "failed 1" in tty.getvalue()
    plain = io.StringIO()
    progress = batch.Progress(3, plain, every=0)
    progress(record)
    assert plain.getvalue().startswith("1/3  unsat 1") and "\r" not in plain.getvalue()


def test_junit_carries_only_characters_xml_allows(tmp_path):
    from prover.junit import junit_xml
    record = batch.blank_record(batch.Job("bad\x01name.smt2", "x.cert", str(tmp_path)))
    record.update(answer="error", reason="control \x1b character", outcome="fail",
                  failure="error")
    root = ET.fromstring(junit_xml([record], 0.0, batch.PROVE))
    assert root.find("./testsuite/testcase/failure").get("type") == "error"


def test_the_merge_gate_on_this_repository_s_samples(tessella):
    """The README's recipe on the committed samples and their certificates (writes nothing)."""
    code, out, err = tessella("batch", ROOT / "samples", "--check-only", "-j", "2")
    assert code == 0, out + err
    assert f"{len(SAMPLES)} passed, 0 failed" in out
