"""`tessella batch --executor dask` on a local Dask cluster started here: the same records
as the local process pool; a task that never returns is given up; clear errors when the
extra is not installed or the scheduler cannot be reached."""
import json
import shutil
import sys
import time
from pathlib import Path

import pytest

from prover import batch

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = sorted(p for p in (ROOT / "samples").iterdir() if p.suffix in (".tess", ".smt2"))


@pytest.fixture(scope="module")
def scheduler():
    distributed = pytest.importorskip("distributed")
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=None) as cluster:
        yield cluster.scheduler_address


def essentials(path: Path) -> list[tuple]:
    return [(Path(r["file"]).name, r["answer"], r["outcome"], r["verdict"],
             r["certificate_sha256"])
            for r in map(json.loads, path.read_text().splitlines())]


def test_dask_gives_the_same_records_as_the_process_pool(scheduler, tmp_path, tessella):
    folder = tmp_path / "p"
    folder.mkdir()
    for s in SAMPLES:
        shutil.copy(s, folder / s.name)
    (folder / "broken.tess").write_text("real x\nassert x^^2 < 0\n")
    local, remote = tmp_path / "local.jsonl", tmp_path / "dask.jsonl"
    code, _, err = tessella("batch", folder, "--check", "--certs", tmp_path / "c1",
                            "--json", local)
    assert code == 1, err  # broken.tess
    code, out, err = tessella("batch", folder, "--check", "--certs", tmp_path / "c2",
                              "--json", remote, "--executor", "dask", "--scheduler", scheduler)
    assert code == 1, err
    assert "on Dask cluster" in out
    assert essentials(remote) == essentials(local)
    for name in (s.name + ".cert" for s in SAMPLES):
        assert (tmp_path / "c2" / name).read_bytes() == (tmp_path / "c1" / name).read_bytes()
    code, _, _ = tessella("batch", folder / SAMPLES[0].name, "--certs", tmp_path / "c2",
                          "--check-only", "--executor", "dask", "--scheduler", scheduler)
    assert code == 0


def test_a_task_without_result_is_given_up_after_the_limit(scheduler):
    outcomes = []
    started = time.monotonic()
    batch.run_on_dask(time.sleep, [(30,)], 1.0, scheduler,
                      lambda task, outcome: outcomes.append(outcome))
    assert outcomes == [("lost", "no result from the cluster within 1 s")]
    assert time.monotonic() - started < 20


def test_dask_errors_are_input_errors(monkeypatch, tmp_path, tessella):
    sample = shutil.copy(SAMPLES[0], tmp_path / SAMPLES[0].name)
    monkeypatch.setitem(sys.modules, "distributed", None)  # as if not installed
    code, _, err = tessella("batch", sample, "--executor", "dask", "--scheduler", "tcp://x:1")
    assert code == 2 and "pip install 'tessella[cluster]'" in err
    monkeypatch.delitem(sys.modules, "distributed")
    pytest.importorskip("distributed")
    monkeypatch.setattr(batch, "CONNECT_TIMEOUT", 2.0)
    code, _, err = tessella("batch", sample, "--executor", "dask",
                            "--scheduler", "tcp://127.0.0.1:9")
    assert code == 2 and "cannot connect to the Dask scheduler" in err
