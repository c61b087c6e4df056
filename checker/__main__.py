"""``python -m checker PROBLEM CERT [--json]``: the checker alone, importing only the trusted base.

Exit 0 accepted, 1 rejected, 2 usage or input error.  The first line of
standard output is ``accepted`` or ``rejected``.
"""
from __future__ import annotations

import argparse
import json
import signal
import sys
import time

from certformat.certio import load_certificate
from certformat.errors import InputError
from certformat.problem import load_problem

from .check import CHECKER_VERSION, Verdict, check
from .limits import Limits, Rejection


def add_arguments(ap: argparse.ArgumentParser) -> None:
    """The checker's arguments (shared with ``tessella check``)."""
    ap.add_argument("problem", help="problem file (.smt2 or .tess)")
    ap.add_argument("certificate", help="certificate or witness file")
    ap.add_argument("--json", action="store_true", help="print one JSON object")
    ap.add_argument("--max-seconds", type=float, default=Limits.max_seconds,
                    help="wall-time limit (default %(default)s)")
    ap.add_argument("--max-degree", type=int, default=Limits.max_degree)
    ap.add_argument("--max-coefficient-bits", type=int, default=Limits.max_coefficient_bits)
    ap.add_argument("--max-steps", type=int, default=Limits.max_steps)
    ap.add_argument("--max-bytes", type=int, default=Limits.max_bytes)


def run(args) -> int:
    """Check, print the verdict, return the exit code."""
    limits = Limits(max_bytes=args.max_bytes, max_degree=args.max_degree,
                    max_coefficient_bits=args.max_coefficient_bits, max_steps=args.max_steps,
                    max_seconds=args.max_seconds)
    started = time.monotonic()
    try:
        problem = load_problem(args.problem)
        cert = load_certificate(args.certificate, max_bytes=args.max_bytes)
    except InputError as err:
        print(f"tessella: error: {err}", file=sys.stderr)
        return 2

    def out_of_time(signum, frame):
        raise Rejection("LIMITS", f"time limit of {args.max_seconds:g} s exceeded")

    old = signal.signal(signal.SIGALRM, out_of_time)
    signal.setitimer(signal.ITIMER_REAL, args.max_seconds + 1.0)
    try:
        verdict = check(problem, cert, limits)
    except Rejection as rej:
        verdict = Verdict(False, cert.kind, rej.rule, rej.reason)
    except (MemoryError, RecursionError) as err:
        verdict = Verdict(False, cert.kind, "LIMITS", f"resource limit: {type(err).__name__}")
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, old)
    seconds = time.monotonic() - started
    if args.json:
        print(json.dumps({
            "verdict": "accepted" if verdict.accepted else "rejected",
            "kind": verdict.kind, "rule": verdict.rule, "reason": verdict.reason,
            "line": verdict.line, "problem": args.problem, "problem_sha256": problem.sha256,
            "certificate": args.certificate, "checker_version": CHECKER_VERSION,
            "seconds": round(seconds, 6)}, sort_keys=True))
    elif verdict.accepted:
        claim = "unsatisfiable" if verdict.kind == "unsat" else "satisfiable"
        print("accepted")
        print(f"{args.problem}: {claim}, certificate {args.certificate} replayed in {seconds:.3f} s")
    else:
        where = f"{args.certificate}:{verdict.line}" if verdict.line else args.certificate
        print("rejected")
        print(f"{where}: rule {verdict.rule}: {verdict.reason}")
    return 0 if verdict.accepted else 1


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(prog="python -m checker",
                                 description="Replay a tessella certificate against its problem.")
    add_arguments(ap)
    return run(ap.parse_args(argv))


if __name__ == "__main__":
    sys.exit(main())
