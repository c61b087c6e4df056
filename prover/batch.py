"""``tessella batch``: prove, check or re-check every problem under some paths, for CI and audits.

    tessella batch PATH... [-j N] [--timeout S] [--certs DIR] [--check | --check-only]
                           [--json FILE] [--junit FILE] [--executor local|dask --scheduler ADDR]

**Problems** are the files ending ``.smt2`` or ``.tess`` under each directory PATH
(recursively, sorted by path), and each file PATH itself whatever its name; a
file reached twice is taken once.  A PATH that does not exist is an input error
(exit 2), and so is a set of paths with no problem in it.

**Certificates** (unsat) and witnesses (sat) go next to each problem as
``<problem>.cert``, or with ``--certs DIR`` into a mirror tree: the problem
``PATH/a/b.smt2`` gets ``DIR/a/b.smt2.cert`` (a file PATH: ``DIR/<its name>.cert``).
Two problems that would share a certificate are an input error.

**Outcome per problem.**  *fail*: the answer contradicts the declared status
(``:status`` / ``expect``) — "wrong"; the checker rejected the certificate —
"rejected"; ``--check-only`` found no certificate — "missing"; the problem (or
certificate) could not be read or parsed, or the run crashed — "error".  *skip*:
the answer is unknown (time limit or a case the prover cannot certify), which
does not fail the batch.  *pass*: everything else.  In ``--check-only`` mode
only an accepted certificate passes.  Exit 0 when nothing failed, 1 otherwise,
2 for usage errors and bad paths.

**Skipping unchanged work.**  A prove run records, in ``.tessella-batch.json`` at
the root of the certificate tree (``DIR``, or the PATH directory), the SHA-256 of
each problem and of its certificate with the answer and the checker's verdict.
A later run skips a problem whose problem bytes and certificate bytes are both
unchanged and whose recorded answer passed — with ``--check`` only if it was
accepted by this checker version — and marks its record ``unchanged``.
``--check-only`` never trusts that file: a merge gate replays every certificate.

**Workers.**  The parent reads every file and writes every certificate; the work
itself, :func:`run_one`, gets bytes and returns a record and the certificate
text, so it runs the same in a local worker process (:mod:`prover.pool`: killed
and replaced at a hard limit of the timeout plus grace) and on a Dask cluster,
which needs no shared file system.  On Dask a running task cannot be killed: a
problem relies on the cooperative ``--timeout`` of the prover and the checker's
own time limit, and if no result at all arrives for the hard-limit time, the
problems still outstanding are given up and reported unknown.
"""
from __future__ import annotations

import hashlib
import json
import os
import sys
import time
from collections import Counter
from dataclasses import dataclass
from pathlib import Path

from certformat.errors import InputError, read_limited
from certformat.terms import MAX_FILE_BYTES

from .pool import run_all

SUFFIXES = (".smt2", ".tess")
STATE_FILE = ".tessella-batch.json"
STATE_VERSION = 1
GRACE = 30.0
"""Seconds a task gets beyond its cooperative time limits before it is given up."""
MAX_CERTIFICATE_BYTES = 256 * 1024 * 1024
CONNECT_TIMEOUT = 30.0
"""Seconds to wait for the Dask scheduler to answer."""

PROVE, PROVE_CHECK, CHECK_ONLY = "prove", "prove+check", "check-only"


@dataclass(frozen=True)
class Job:
    """One problem of the batch and where its certificate and run state live."""
    problem: str
    certificate: str
    state_root: str

    @property
    def key(self) -> str:
        """The certificate's path relative to the state file, the key of its state record."""
        return Path(os.path.relpath(self.certificate, self.state_root)).as_posix()


def find_jobs(paths: list[str], certs: str | None = None) -> list[Job]:
    """The problems under ``paths`` with their certificate paths (module docstring)."""
    jobs: list[Job] = []
    seen: set[str] = set()
    owners: dict[str, str] = {}
    for given in paths:
        root = Path(given)
        if not root.exists():
            raise InputError("no such file or directory", given)
        if root.is_dir():
            found = sorted(_walk(root))
            state_root = Path(certs) if certs else root
            for p in found:
                cert = (Path(certs) / p.relative_to(root) if certs else p)
                jobs.append(Job(str(p), str(cert) + ".cert", str(state_root)))
        else:
            cert_dir = Path(certs) if certs else root.parent
            jobs.append(Job(str(root), str(cert_dir / root.name) + ".cert", str(cert_dir)))
    unique = []
    for job in jobs:
        real = os.path.realpath(job.problem)
        if real in seen:
            continue
        seen.add(real)
        cert = os.path.realpath(job.certificate)
        if cert in owners:
            raise InputError(f"{owners[cert]} and {job.problem} would share the certificate "
                             f"{job.certificate}; use separate --certs directories",
                             job.problem)
        owners[cert] = job.problem
        unique.append(job)
    if not unique:
        raise InputError("no problem files (" + ", ".join(SUFFIXES) + ") found here",
                         " ".join(paths))
    return unique


def _walk(root: Path):
    def fail(err: OSError):
        raise InputError(f"cannot read the directory: {err.strerror or err}",
                         err.filename or str(root))
    for folder, dirs, files in os.walk(root, onerror=fail, followlinks=False):
        dirs.sort()
        for name in files:
            if name.endswith(SUFFIXES):
                yield Path(folder) / name


# ---------------------------------------------------------------- the work of one problem

def run_one(path: str, data: bytes, cert_path: str, cert_text: str | None, mode: str,
            timeout: float) -> tuple[dict, str | None]:
    """Parse the problem ``data`` (read from ``path``), then prove it (and check the result),
    or with ``mode`` check-only check ``cert_text`` (read from ``cert_path``).  Returns the
    record's fields found here and the new certificate text (or None).  Raises nothing for
    bad input."""
    from certformat.problem import parse_problem_bytes
    record: dict = {"sha256": hashlib.sha256(data).hexdigest()}
    try:
        problem = parse_problem_bytes(data, path)
    except InputError as err:
        record.update(answer="error", reason=_one_line(str(err)))
        return record, None
    record["expected"] = problem.status
    if mode == CHECK_ONLY:
        record.update(_check(problem, cert_text, cert_path, timeout))
        return record, None
    from prover.solve import prove
    result = prove(problem, timeout=timeout)
    record.update(answer=result.answer, reason=result.reason or None,
                  prove_seconds=round(result.stats.get("time", 0.0), 6))
    text = result.certificate_text
    if text is not None:
        record["certificate_sha256"] = hashlib.sha256(text.encode("utf-8")).hexdigest()
        if mode == PROVE_CHECK:
            checked = _check(problem, text, cert_path, timeout)
            del checked["answer"]
            record.update(checked)
    return record, text


def _check(problem, text: str, cert_path: str, timeout: float) -> dict:
    """The checker's verdict on the certificate ``text`` as record fields."""
    from certformat.certio import read_certificate
    from checker.check import CHECKER_VERSION, check
    from checker.limits import Limits
    started = time.monotonic()
    fields: dict = {"checker_version": CHECKER_VERSION}
    try:
        cert = read_certificate(text, cert_path)
    except InputError as err:
        fields.update(answer="error", verdict="rejected",
                      rejection={"rule": None, "reason": _one_line(str(err)), "line": None})
    else:
        try:
            verdict = check(problem, cert, Limits(max_seconds=timeout))
        except (MemoryError, RecursionError) as err:
            fields.update(verdict="rejected", rejection={
                "rule": "LIMITS", "reason": f"resource limit: {type(err).__name__}", "line": 0})
        else:
            fields["verdict"] = "accepted" if verdict.accepted else "rejected"
            if not verdict.accepted:
                fields["rejection"] = {"rule": verdict.rule, "reason": verdict.reason,
                                       "line": verdict.line}
        fields["answer"] = cert.kind
    fields["check_seconds"] = round(time.monotonic() - started, 6)
    return fields


def classify(record: dict, mode: str) -> tuple[str, str | None]:
    """(outcome, failure): ``pass``/``fail``/``skip`` and, for a failure, its kind."""
    answer = record["answer"]
    if record.get("verdict") == "rejected":
        return "fail", "rejected"
    if answer in ("error", "missing"):
        return "fail", answer
    if answer in ("sat", "unsat") and record.get("expected") in ("sat", "unsat") \
            and record["expected"] != answer:
        return "fail", "wrong"
    if mode == CHECK_ONLY:
        return ("pass", None) if record.get("verdict") == "accepted" else ("fail", "rejected")
    if answer == "unknown":
        return "skip", None
    return "pass", None


def blank_record(job: Job) -> dict:
    return {"file": job.problem, "sha256": None, "expected": None, "answer": None,
            "reason": None, "prove_seconds": None, "check_seconds": None,
            "certificate": None, "certificate_sha256": None, "verdict": None,
            "rejection": None, "checker_version": None, "outcome": None, "failure": None,
            "unchanged": False}


# ---------------------------------------------------------------- the batch

@dataclass
class Options:
    mode: str = PROVE
    jobs: int = 1
    timeout: float = 60.0
    executor: str = "local"
    scheduler: str | None = None

    @property
    def limit(self) -> float:
        """The hard limit of one task: its cooperative limits plus grace."""
        return self.timeout * (2 if self.mode == PROVE_CHECK else 1) + GRACE


def run_batch(jobs: list[Job], options: Options, on_record=None) -> list[dict]:
    """Run every job; returns the records in the order of ``jobs``.  ``on_record(record)``
    is called as each one is known (one at a time)."""
    records: list[dict | None] = [None] * len(jobs)
    states = {root: _load_state(root) for root in {j.state_root for j in jobs}}
    tasks = []

    def finish(i: int, record: dict) -> None:
        record["outcome"], record["failure"] = classify(record, options.mode)
        records[i] = record
        if on_record:
            on_record(record)

    for i, job in enumerate(jobs):
        record = blank_record(job)
        try:
            data = read_limited(job.problem, MAX_FILE_BYTES, "the file")
        except InputError as err:
            record.update(answer="error", reason=_one_line(str(err)))
            finish(i, record)
            continue
        cert_data = None
        if os.path.exists(job.certificate):
            try:
                cert_data = read_limited(job.certificate, MAX_CERTIFICATE_BYTES, "certificate")
            except InputError as err:
                if options.mode == CHECK_ONLY:
                    record.update(answer="error", reason=_one_line(str(err)),
                                  certificate=job.certificate)
                    finish(i, record)
                    continue
        if options.mode == CHECK_ONLY:
            if cert_data is None:
                record.update(answer="missing", sha256=hashlib.sha256(data).hexdigest(),
                              reason=f"no certificate at {job.certificate}")
                finish(i, record)
                continue
            record["certificate"] = job.certificate
            record["certificate_sha256"] = hashlib.sha256(cert_data).hexdigest()
            try:
                cert_text = cert_data.decode("utf-8")
            except UnicodeDecodeError as err:
                record.update(answer="error", verdict="rejected", rejection={
                    "rule": None, "reason": f"certificate is not UTF-8 text (byte {err.start})",
                    "line": None})
                finish(i, record)
                continue
            tasks.append((i, job.problem, data, job.certificate, cert_text, options.mode,
                          options.timeout))
            continue
        previous = _unchanged(states[job.state_root].get(job.key), data, cert_data, options)
        if previous is not None:
            previous.update(file=job.problem, certificate=job.certificate, unchanged=True,
                            prove_seconds=None, check_seconds=None)
            finish(i, previous)
            continue
        tasks.append((i, job.problem, data, job.certificate, None, options.mode,
                      options.timeout))

    def on_result(task, outcome):
        i = task[0]
        job = jobs[i]
        record = blank_record(job)
        kind, value = outcome
        if kind == "ok":
            fields, text = value
            record.update(fields)
            if options.mode == CHECK_ONLY:
                record["certificate"] = job.certificate
                record["certificate_sha256"] = hashlib.sha256(
                    task[4].encode("utf-8")).hexdigest()
            elif text is not None:
                try:
                    _write(job.certificate, text)
                    record["certificate"] = job.certificate
                except InputError as err:
                    record.update(answer="error", reason=_one_line(str(err)))
        else:
            record["sha256"] = hashlib.sha256(task[2]).hexdigest()
            if kind == "error":
                record.update(answer="error", reason=f"crashed: {_one_line(value)}")
            elif kind == "killed":
                record.update(answer="unknown",
                              reason=f"killed at the hard limit of {options.limit:g} s")
                spent = "check_seconds" if options.mode == CHECK_ONLY else "prove_seconds"
                record[spent] = round(value, 6)
            else:
                record.update(answer="unknown", reason=value)
            if options.mode == CHECK_ONLY:
                record["certificate"] = job.certificate
        finish(i, record)

    try:
        if options.executor == "dask":
            run_on_dask(_task, tasks, options.limit, options.scheduler, on_result)
        else:
            run_all(_task, tasks, options.limit, options.jobs, on_result)
    finally:
        if options.mode != CHECK_ONLY:
            for root, state in states.items():
                for job, record in zip(jobs, records):
                    if record is not None and job.state_root == root:
                        state[job.key] = record
                _save_state(root, state)
    return [r for r in records if r is not None]


def _task(i, path, data, cert_path, cert_text, mode, timeout):
    return run_one(path, data, cert_path, cert_text, mode, timeout)


def _unchanged(previous: dict | None, data: bytes, cert_data: bytes | None,
               options: Options) -> dict | None:
    """The recorded outcome for this problem if it may stand (module docstring), else None."""
    from checker.check import CHECKER_VERSION
    if not previous or cert_data is None or previous.get("outcome") != "pass":
        return None
    if previous.get("sha256") != hashlib.sha256(data).hexdigest():
        return None
    if previous.get("certificate_sha256") != hashlib.sha256(cert_data).hexdigest():
        return None
    if options.mode == PROVE_CHECK and (previous.get("verdict") != "accepted"
                                        or previous.get("checker_version") != CHECKER_VERSION):
        return None
    return dict(previous)


def _load_state(root: str) -> dict:
    try:
        with open(Path(root) / STATE_FILE, encoding="utf-8") as f:
            state = json.load(f)
    except (OSError, ValueError):
        return {}
    if not isinstance(state, dict) or state.get("version") != STATE_VERSION:
        return {}
    records = state.get("records")
    return records if isinstance(records, dict) else {}


def _save_state(root: str, records: dict) -> None:
    path = Path(root) / STATE_FILE
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        tmp = path.with_name(path.name + ".tmp")
        tmp.write_text(json.dumps({"version": STATE_VERSION, "records": records},
                                  indent=0, sort_keys=True) + "\n", encoding="utf-8")
        os.replace(tmp, path)
    except OSError as err:
        print(f"tessella: warning: cannot save the batch state: {err}", file=sys.stderr)


def _write(path: str, text: str) -> None:
    try:
        Path(path).parent.mkdir(parents=True, exist_ok=True)
        tmp = path + ".tmp"
        with open(tmp, "w", encoding="utf-8", newline="") as f:
            f.write(text)
        os.replace(tmp, path)
    except OSError as err:
        raise InputError(f"cannot write the certificate: {err.strerror or err}", path) from None


# ---------------------------------------------------------------- Dask

def run_on_dask(function, tasks: list[tuple], limit: float, scheduler: str, on_result) -> None:
    """Like :func:`prover.pool.run_all` on the Dask cluster at ``scheduler``.  A task cannot
    be killed there: when no result arrives for ``limit`` seconds, the outstanding tasks
    are cancelled and reported as ``('lost', reason)``."""
    try:
        from distributed import Client, as_completed
    except ImportError:
        raise InputError("the dask executor needs the optional extra: "
                         "pip install 'tessella[cluster]'", "--executor dask") from None
    try:
        client = Client(scheduler, timeout=CONNECT_TIMEOUT)
    except (OSError, TimeoutError, ValueError) as err:
        raise InputError(f"cannot connect to the Dask scheduler: {_one_line(str(err))}",
                         scheduler) from None
    with client:
        if not tasks:
            return
        futures = client.map(function, *zip(*tasks), pure=False)
        owner = dict(zip((f.key for f in futures), tasks))
        pending = set(futures)
        arrivals = as_completed(futures)
        last = time.monotonic()
        while pending:
            done = arrivals.next_batch(block=False)
            for future in done:
                if future.status == "finished":
                    outcome = ("ok", future.result())
                elif future.status == "error":
                    err = future.exception()
                    outcome = ("error", f"{type(err).__name__}: {err}")
                else:
                    outcome = ("lost", f"the cluster reported the task {future.status}")
                pending.discard(future)
                on_result(owner[future.key], outcome)
                last = time.monotonic()
            if not done and pending and time.monotonic() - last > limit:
                arrivals.clear()
                client.cancel(list(pending))
                for future in sorted(pending, key=lambda f: owner[f.key][0]):
                    on_result(owner[future.key], (
                        "lost", f"no result from the cluster within {limit:g} s"))
                pending = set()
            elif not done:
                time.sleep(0.02)


# ---------------------------------------------------------------- progress and summary

class Progress:
    """A live count on standard error: a redrawn bar on a terminal, else a line every
    ``every`` seconds."""

    def __init__(self, total: int, stream=None, every: float = 15.0):
        self.stream = stream or sys.stderr
        self.tty = self.stream.isatty()
        self.total, self.every = total, every
        self.counts: Counter = Counter()
        self.started = self.last = time.monotonic()

    def __call__(self, record: dict) -> None:
        key = "failed" if record["outcome"] == "fail" else record["answer"]
        self.counts[key] += 1
        now = time.monotonic()
        done = sum(self.counts.values())
        if self.tty and (now - self.last >= 0.1 or done == self.total):
            self.last = now
            print("\r" + self.line(now) + "\x1b[K", end="", file=self.stream, flush=True)
        elif not self.tty and now - self.last >= self.every:
            self.last = now
            print(self.line(now), file=self.stream, flush=True)

    def line(self, now: float) -> str:
        done = sum(self.counts.values())
        width = 24
        filled = width * done // max(1, self.total)
        rate = done / max(now - self.started, 1e-9)
        eta = (self.total - done) / rate if rate > 0 else 0.0
        counts = "  ".join(f"{k} {self.counts[k]}"
                           for k in ("sat", "unsat", "unknown", "failed") if self.counts[k])
        bar = f"[{'#' * filled}{'.' * (width - filled)}] " if self.tty else ""
        return (f"{bar}{done}/{self.total}  {counts}  {rate:.1f}/s"
                f"  ETA {int(eta) // 60}:{int(eta) % 60:02d}")

    def close(self) -> None:
        if self.tty and self.counts:
            print(file=self.stream, flush=True)


def summary_text(records: list[dict], wall: float, options: Options) -> str:
    """The failures, one per line, then a table of counts and the totals."""
    lines = []
    for r in records:
        if r["outcome"] == "fail":
            lines.append(f"FAIL {r['failure']:<8} {r['file']}: {failure_reason(r)}")
    if lines:
        lines.append("")
    answers = Counter(r["answer"] for r in records)
    outcomes = Counter(r["outcome"] for r in records)
    verdicts = Counter(r["verdict"] for r in records if r["verdict"])
    lines.append(f"{'answer':<10} {'problems':>8}")
    for answer in ("sat", "unsat", "unknown", "missing", "error"):
        if answers[answer] or answer in ("sat", "unsat", "unknown"):
            lines.append(f"{answer:<10} {answers[answer]:>8}")
    if verdicts:
        lines.append("checker:   " + ", ".join(f"{n} {v}" for v, n in sorted(verdicts.items())))
    unchanged = sum(1 for r in records if r["unchanged"])
    if unchanged:
        lines.append(f"unchanged: {unchanged} (skipped, recorded outcome kept)")
    work = sum((r["prove_seconds"] or 0) + (r["check_seconds"] or 0) for r in records)
    workers = ("Dask cluster" if options.executor == "dask"
               else f"{options.jobs} worker" + ("s" if options.jobs > 1 else ""))
    lines.append(f"{len(records)} problems: {outcomes['pass']} passed, {outcomes['fail']} failed,"
                 f" {outcomes['skip']} skipped (unknown); {wall:.1f} s wall on {workers},"
                 f" {work:.1f} s of work, {len(records) / max(wall, 1e-9):.2f} problems/s")
    return "\n".join(lines)


def failure_reason(r: dict) -> str:
    if r["failure"] == "wrong":
        return f"answer {r['answer']}, declared status {r['expected']}"
    if r["failure"] == "rejected" and r.get("rejection"):
        rej = r["rejection"]
        where = f"line {rej['line']}: " if rej.get("line") else ""
        rule = f"rule {rej['rule']}: " if rej.get("rule") else ""
        return f"certificate {r['certificate']} rejected: {where}{rule}{rej['reason']}"
    return r.get("reason") or r["answer"]


# ---------------------------------------------------------------- command line

def add_batch(verbs) -> None:
    batch = verbs.add_parser(
        "batch", help="prove (and check) every problem under some paths; CI and audit output",
        description="Prove every .smt2/.tess problem under the paths in parallel, write the "
                    "certificates, and with --check replay them; --check-only replays existing "
                    "certificates without proving (the merge-gate mode). Exit 0 when nothing "
                    "failed (unknown answers are skipped, not failed), 1 when a problem got a "
                    "wrong answer, a rejected or missing certificate or an error, 2 for usage "
                    "errors and bad paths.")
    batch.add_argument("paths", nargs="+", metavar="PATH", help="problem files or directories")
    batch.add_argument("-j", "--jobs", type=_positive_int, default=_cpus(), metavar="N",
                       help="worker processes (default: the CPUs available, %(default)s)")
    batch.add_argument("--timeout", type=_positive_float, default=60.0, metavar="S",
                       help="seconds to prove, and separately to check, one problem "
                            "(default %(default)g)")
    batch.add_argument("--certs", metavar="DIR",
                       help="write and read certificates in a mirror tree under DIR "
                            "(default: <problem>.cert beside each problem)")
    mode = batch.add_mutually_exclusive_group()
    mode.add_argument("--check", action="store_true",
                      help="replay every new certificate or witness with the checker")
    mode.add_argument("--check-only", action="store_true",
                      help="do not prove: replay the existing certificates; exit 0 only if "
                           "every problem has an accepted one")
    batch.add_argument("--json", metavar="FILE", help="write one JSON record per problem")
    batch.add_argument("--junit", metavar="FILE", help="write JUnit XML (one testcase per "
                                                       "problem)")
    batch.add_argument("--executor", choices=("local", "dask"), default="local",
                       help="local worker processes (default) or a Dask cluster")
    batch.add_argument("--scheduler", metavar="ADDRESS",
                       help="the Dask scheduler, e.g. tcp://host:8786 (with --executor dask)")
    batch.set_defaults(run=batch_command)


def batch_command(args) -> int:
    """``tessella batch``: see :func:`add_batch` and the module docstring."""
    if args.executor == "dask" and not args.scheduler:
        raise InputError("--executor dask needs --scheduler ADDRESS", "tessella batch")
    if args.scheduler and args.executor != "dask":
        raise InputError("--scheduler is used only with --executor dask", "tessella batch")
    mode = CHECK_ONLY if args.check_only else PROVE_CHECK if args.check else PROVE
    options = Options(mode, args.jobs, args.timeout, args.executor, args.scheduler)
    jobs = find_jobs(args.paths, args.certs)
    for out in (args.json, args.junit):
        if out and Path(out).parent and not Path(out).parent.is_dir():
            raise InputError("the folder for this output file does not exist", out)
    progress = Progress(len(jobs))
    started = time.monotonic()
    try:
        records = run_batch(jobs, options, progress)
    finally:
        progress.close()
    wall = time.monotonic() - started
    if args.json:
        _write_output(args.json, "".join(json.dumps(r, sort_keys=True) + "\n" for r in records))
    if args.junit:
        from .junit import junit_xml
        _write_output(args.junit, junit_xml(records, wall, options.mode))
    print(summary_text(records, wall, options))
    return 1 if any(r["outcome"] == "fail" for r in records) else 0


def _write_output(path: str, text: str) -> None:
    try:
        Path(path).write_text(text, encoding="utf-8")
    except OSError as err:
        raise InputError(f"cannot write: {err.strerror or err}", path) from None


def _cpus() -> int:
    try:
        return len(os.sched_getaffinity(0))
    except AttributeError:
        return os.cpu_count() or 1


def _positive_int(text: str) -> int:
    import argparse
    try:
        value = int(text)
    except ValueError:
        value = 0
    if value < 1:
        raise argparse.ArgumentTypeError(f"expected a positive whole number, got {text!r}")
    return value


def _positive_float(text: str) -> float:
    import argparse
    try:
        value = float(text)
    except ValueError:
        value = 0.0
    if not value > 0 or value == float("inf"):
        raise argparse.ArgumentTypeError(f"expected a positive number of seconds, got {text!r}")
    return value


def _one_line(text: str) -> str:
    return " ".join(text.split("\n")).replace("\r", " ")
