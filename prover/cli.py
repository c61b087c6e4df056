"""The ``tessella`` command: one sub-command per verb, one function per sub-command.

Exit codes (DESIGN §7): 0 success; 1 rejected or refuted (for the verbs that
decide); 2 usage or input error — the problem file cannot be read as written,
reported as one line ``tessella: error: FILE:LINE:COL: message``; 3 internal
error — a bug in tessella, reported as one line and never as a traceback, kept
apart from 2 so that CI can tell a bad input from a broken tool.
"""
from __future__ import annotations

import argparse
import json
import os
import sys
import time

from certformat.errors import InputError
from certformat.formula import And, Atom, BoolConst, Iff, Not, Or
from prover.polytext import poly_to_text
from certformat.problem import load_problem

from .batch import add_batch
from .bench import add_bench
from .report import add_report

EXIT_OK, EXIT_REFUTED, EXIT_INPUT, EXIT_INTERNAL = 0, 1, 2, 3


def main(argv=None) -> int:
    """Run ``tessella`` with ``argv`` (default: the process arguments); return the exit code."""
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as stop:  # argparse has printed the usage message
        return EXIT_OK if stop.code in (0, None) else EXIT_INPUT
    if not hasattr(args, "run"):
        parser.print_usage(sys.stderr)
        print("tessella: error: a command is required", file=sys.stderr)
        return EXIT_INPUT
    try:
        return args.run(args)
    except InputError as err:
        print(f"tessella: error: {_one_line(str(err))}", file=sys.stderr)
        return EXIT_INPUT
    except KeyboardInterrupt:
        print("tessella: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:  # the reader of our output went away (`| head`): not a failure
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return EXIT_OK
    except Exception as err:  # noqa: BLE001 -- the last line of defence, by design
        print(f"tessella: internal error: {type(err).__name__}: {_one_line(str(err))} "
              "(this is a bug in tessella; please report it with the input file)",
              file=sys.stderr)
        return EXIT_INTERNAL


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="tessella",
        description="Prove polynomial constraint systems over the reals unsatisfiable, "
                    "with certificates an independent checker replays exactly.")
    verbs = parser.add_subparsers(title="commands", metavar="COMMAND")
    add_inspect(verbs)
    add_prove(verbs)
    add_check(verbs)
    add_bench(verbs)
    add_report(verbs)
    add_batch(verbs)
    return parser


def add_prove(verbs) -> None:
    prove = verbs.add_parser(
        "prove", help="decide a problem; write its certificate or witness",
        description="Decide a problem. The first line of output is sat, unsat or unknown. "
                    "Exit 0 for sat or unsat, 1 for unknown, 2 for bad input.")
    prove.add_argument("file", metavar="FILE", help="problem file (.smt2 or .tess)")
    prove.add_argument("--cert", metavar="OUT", help="write the certificate (unsat) or "
                                                     "witness (sat) to OUT")
    prove.add_argument("--timeout", metavar="SECONDS", type=float, default=None,
                       help="give up with 'unknown' after this long (default: no limit)")
    prove.add_argument("--core", action="store_true",
                       help="for unsat, list the assertions the refutation uses")
    prove.add_argument("--json", action="store_true", help="print one JSON object")
    prove.add_argument("-v", "--verbose", action="store_true",
                       help="show progress on standard error")
    prove.set_defaults(run=prove_command)


def add_check(verbs) -> None:
    from checker.__main__ import add_arguments
    check = verbs.add_parser(
        "check", help="replay a certificate or witness against its problem",
        description="Replay a certificate with the independent checker. The first line of "
                    "output is accepted or rejected. Exit 0 accepted, 1 rejected, 2 bad input.")
    add_arguments(check)
    check.set_defaults(run=check_command)


def check_command(args) -> int:
    """``tessella check PROBLEM CERT``: the same as ``python -m checker``."""
    from checker.__main__ import run
    return run(args)


class _Progress:
    """A one-line progress display on standard error, redrawn at most ten times a second."""

    def __init__(self):
        self.started = time.monotonic()
        self.last = 0.0

    def __call__(self, info: dict) -> None:
        now = time.monotonic()
        if now - self.last >= 0.1:
            self.last = now
            print(f"\r  {now - self.started:7.1f} s  {info.get('nodes', 0):8d} covering nodes"
                  f"  level {info.get('level', 0)}", end="", file=sys.stderr, flush=True)

    def done(self) -> None:
        if self.last:
            print(file=sys.stderr)


def prove_command(args) -> int:
    """``tessella prove FILE [--cert OUT] [--timeout S] [--core] [--json] [-v]``."""
    from prover.solve import prove
    problem = load_problem(args.file)
    progress = _Progress() if args.verbose else None
    result = prove(problem, timeout=args.timeout, progress=progress)
    if progress:
        progress.done()
    if args.cert and result.certificate_text:
        try:
            with open(args.cert, "w", encoding="utf-8") as f:
                f.write(result.certificate_text)
        except OSError as err:
            raise InputError(f"cannot write the certificate: {err.strerror or err}",
                             args.cert) from None
    report = prove_report(problem, result, args.cert)
    if args.json:
        print(json.dumps(report, indent=2, ensure_ascii=False))
    else:
        print(_prove_text(report, args.core))
    return EXIT_OK if result.answer in ("sat", "unsat") else EXIT_REFUTED


def prove_report(problem, result, cert_path) -> dict:
    """The outcome of ``prove`` as plain data (the JSON of ``prove --json``)."""
    names = problem.variables
    report = {"file": problem.path, "sha256": problem.sha256, "answer": result.answer,
              "reason": result.reason or None, "seconds": round(result.stats.get("time", 0), 6),
              "certificate": cert_path if result.certificate_text else None,
              "stats": {k: v for k, v in result.stats.items() if k != "time"}}
    if result.answer == "sat":
        report["model"] = {name: _number_text(a) for name, a in result.model.items()}
        report["bool_model"] = result.bool_model or {}
        report["atom_signs"] = [{"atom": f"{poly_to_text(atom.poly, names)} {atom.rel} 0",
                                 "sign": sign} for atom, sign in result.atom_signs]
    if result.answer == "unsat":
        core = _core_of(result.certificate_text)
        report["core"] = [{"assertion": i, "line": problem.assertions[i - 1].line,
                           "text": problem.assertions[i - 1].text} for i in core]
    return report


def _core_of(text: str) -> list[int]:
    for line in text.splitlines():
        if line.startswith("core"):
            return [int(k) for k in line.split()[1:]]
    return []


def _number_text(a) -> dict:
    """A real algebraic number for people: exact form and a decimal approximation."""
    if a.is_rational:
        exact = str(a.value)
    else:
        exact = f"root of {a.poly} in ({a.low}, {a.high})"
    return {"exact": exact, "approx": f"{a.to_float():.12g}"}


def _prove_text(report: dict, show_core: bool) -> str:
    lines = [report["answer"]]
    if report["answer"] == "unknown":
        lines.append(f"reason: {report['reason']}")
    if report["answer"] == "sat":
        width = max((len(n) for n in report["model"]), default=0)
        for name, value in report["model"].items():
            lines.append(f"  {name:<{width}} = {value['approx']}    ({value['exact']})")
        for name, value in report["bool_model"].items():
            lines.append(f"  {name:<{width}} = {'true' if value else 'false'}")
        for item in report["atom_signs"]:
            sign = {-1: "negative", 0: "zero", 1: "positive"}[item["sign"]]
            lines.append(f"  atom {item['atom']}: left side {sign}")
    if report["answer"] == "unsat" and show_core:
        lines.append(f"unsat core ({len(report['core'])} of the assertions):")
        lines += [f"  #{c['assertion']} (line {c['line']}): {c['text']}" for c in report["core"]]
    if report["certificate"]:
        kind = "certificate" if report["answer"] == "unsat" else "witness"
        lines.append(f"{kind} written to {report['certificate']}")
    lines.append(f"time: {report['seconds']:.3f} s")
    return "\n".join(lines)


def add_inspect(verbs) -> None:
    inspect = verbs.add_parser("inspect", help="show how a problem file was understood",
                               description="Show how a problem file was understood: its "
                                           "variables, atoms and Boolean structure.")
    inspect.add_argument("file", metavar="FILE", help="problem file (.smt2 or .tess)")
    inspect.add_argument("--json", action="store_true", help="print one JSON object")
    inspect.set_defaults(run=inspect_command)


def inspect_command(args) -> int:
    """``tessella inspect FILE [--json]``."""
    report = inspect_report(load_problem(args.file))
    if args.json:
        print(json.dumps(report, indent=2, ensure_ascii=False))
    else:
        print(_inspect_text(report))
    return EXIT_OK


def inspect_report(problem) -> dict:
    """What was understood of ``problem``, as plain data (the JSON of ``inspect --json``)."""
    names = problem.variables
    formula = problem.formula()
    conjuncts = formula.args if isinstance(formula, And) else (formula,)
    atoms = []
    for atom in problem.atoms():
        degrees = atom.poly.degrees()
        atoms.append({
            "atom": f"{poly_to_text(atom.poly, names)} {atom.rel} 0",
            "polynomial": poly_to_text(atom.poly, names),
            "relation": atom.rel,
            "degree": int(atom.poly.total_degree()),
            "degrees": {names[i]: int(d) for i, d in enumerate(degrees) if d > 0},
        })
    return {
        "file": problem.path,
        "sha256": problem.sha256,
        "status": problem.status,
        "logic": problem.logic,
        "variables": list(names),
        "bool_variables": list(problem.bool_variables),
        "assertions": len(problem.assertions),
        "formula_size": formula_size(formula),
        "pure_conjunction": formula == BoolConst(True)
        or all(isinstance(c, Atom) for c in conjuncts),
        "atoms": atoms,
    }


def _inspect_text(report: dict) -> str:
    def listed(items):
        return ", ".join(items) if items else "(none)"
    lines = [
        f"file:              {report['file']}",
        f"sha256:            {report['sha256']}",
        f"declared status:   {report['status'] or '(none)'}",
        f"logic:             {report['logic'] or '(none)'}",
        f"variables:         {listed(report['variables'])}",
        f"Boolean variables: {listed(report['bool_variables'])}",
        f"assertions:        {report['assertions']}",
        f"formula size:      {report['formula_size']} nodes",
        f"pure conjunction:  {'yes' if report['pure_conjunction'] else 'no'}",
        f"atoms ({len(report['atoms'])}):",
    ]
    for i, atom in enumerate(report["atoms"], 1):
        per_variable = ", ".join(f"{v}: {d}" for v, d in atom["degrees"].items())
        lines.append(f"  [{i}] {atom['atom']}")
        lines.append(f"      degree {atom['degree']} ({per_variable})")
    return "\n".join(lines)


def formula_size(f) -> int:
    """Number of nodes of the Boolean structure."""
    n, stack = 0, [f]
    while stack:
        g = stack.pop()
        n += 1
        if isinstance(g, Not):
            stack.append(g.arg)
        elif isinstance(g, (And, Or)):
            stack.extend(g.args)
        elif isinstance(g, Iff):
            stack.extend((g.left, g.right))
    return n


def _one_line(text: str) -> str:
    return text.replace("\r", " ").replace("\n", " ")
