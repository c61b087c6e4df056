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

from certformat.errors import InputError
from certformat.formula import And, Atom, BoolConst, formula_size
from certformat.polytext import poly_to_text
from certformat.problem import load_problem

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
    return parser


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
            "degree": int(atom.degree()),
            "degrees": {names[i]: int(degrees[i]) for i in atom.variables()},
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


def _one_line(text: str) -> str:
    return text.replace("\r", " ").replace("\n", " ")
