"""``tessella report PROBLEM [--cert CERT] --out DIR``: an audit report of one problem.

The report binds a verdict to exact files: the SHA-256 of the problem and of the
certificate, the verdict of the independent checker (run here, in-process, with
its default limits), the checker's version and trusted base, the answer and what
it means, the unsat core in the user's own assertion text (or the witness),
certificate statistics, a picture for two-variable problems (:mod:`prover.picture`,
needs matplotlib) and the caution of README.md. Without ``--cert`` the problem
is proved first and its certificate is written into DIR beside the report.

DIR receives ``report.md``, ``report.html`` (self-contained: inline style, the
picture as a data URI, no scripts, no external resources), ``report.json`` and
the picture (``covering.png`` or ``witness.png``). The content is deterministic:
the same files, options and installation give the same bytes (no timestamps).
"""
from __future__ import annotations

import base64
import hashlib
import html
import json
import platform
from pathlib import Path

from certformat.certio import MAX_CERTIFICATE_BYTES, parse_certificate_bytes
from certformat.errors import InputError, read_limited
from certformat.problem import load_problem

from .certwrite import number_text, poly_terms

TRUSTED = ("checker", "certformat")
TRUSTED_BUDGET = 2500
ROOT = Path(__file__).resolve().parents[1]
PICTURES = ("covering.png", "witness.png")

CAUTION_ESTABLISHES = (
    "An accepted unsat certificate establishes one mathematical fact: the constraints, "
    "exactly as written in the problem file identified above by its SHA-256, have no real "
    "solution. An accepted witness establishes that the stated point satisfies them. Either "
    "rests on the published theorems listed in certformat/SOUNDNESS.md and on the trusted base "
    "listed above.")
CAUTION_DOES_NOT = (
    "It does not establish that the constraints model the real system faithfully, that "
    "floating-point code implementing the system behaves like this real-number model, or that "
    "this problem file is the right one for the safety argument at hand. A certificate is "
    "evidence, not a safety case: use it within the process that the applicable safety "
    "standards require, and have the modelling and every conclusion drawn from it reviewed by "
    "qualified people.")


# ---------------------------------------------------------------- the command

def add_report(verbs) -> None:
    report = verbs.add_parser(
        "report", help="write an audit report (Markdown, HTML, JSON, picture)",
        description="Write an audit report of a problem and its certificate into DIR. "
                    "Without --cert the problem is proved first and the certificate is "
                    "written into DIR. The first line of output is the checker's verdict "
                    "(accepted, rejected, or unknown when there is no certificate). Exit 0 "
                    "accepted, 1 rejected or unknown, 2 bad input.")
    report.add_argument("problem", metavar="PROBLEM", help="problem file (.smt2 or .tess)")
    report.add_argument("--cert", metavar="CERT",
                        help="certificate or witness to report on (default: prove PROBLEM)")
    report.add_argument("--out", metavar="DIR", required=True,
                        help="directory for the report (created if missing)")
    report.add_argument("--timeout", metavar="SECONDS", type=float, default=None,
                        help="without --cert: give up proving after this long")
    report.set_defaults(run=report_command)


def report_command(args) -> int:
    """``tessella report PROBLEM [--cert CERT] --out DIR [--timeout S]``."""
    data = make_report(args.problem, args.cert, args.out, args.timeout)
    print(data["verdict"]["verdict"])
    files = ", ".join(data["files"][1:])
    print(f"report written to {Path(args.out) / data['files'][0]} (also {files})")
    return 0 if data["verdict"]["verdict"] == "accepted" else 1


def make_report(problem_path: str, cert_path: str | None, out_dir: str,
                timeout: float | None = None) -> dict:
    """Check (or prove and check), write the report files into ``out_dir``; return its data."""
    problem = load_problem(problem_path)
    out = _output_directory(out_dir)
    prover_note = None
    if cert_path is None:
        cert_path, prover_note = _prove_into(problem, out, timeout)
    cert = certificate_bytes = None
    if cert_path is not None:
        cert, certificate_bytes = _load_certificate(cert_path)
    verdict = _verdict(problem, cert)
    data = report_data(problem, cert, cert_path, certificate_bytes, verdict, prover_note)
    png = _picture(problem, cert, verdict, data)
    files = ["report.html", "report.md", "report.json"]
    _write(out / "report.json", json.dumps(data, indent=2, ensure_ascii=False) + "\n")
    _write(out / "report.md", markdown(data))
    _write(out / "report.html", html_page(data, png))
    for name in PICTURES:
        if png is not None and name == data["picture"]["file"]:
            _write(out / name, png)
            files.append(name)
        elif (out / name).is_file():
            (out / name).unlink()  # a picture of an earlier report would mislead
    data["files"] = files
    return data


def _output_directory(out_dir: str) -> Path:
    out = Path(out_dir)
    if out.exists() and not out.is_dir():
        raise InputError("--out must name a directory, and this is a file", out_dir)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as err:
        raise InputError(f"cannot create the report directory: {err.strerror or err}",
                         out_dir) from None
    return out


def _prove_into(problem, out: Path, timeout) -> tuple[str | None, str]:
    """Prove ``problem``; write its certificate or witness into ``out``; return path and note."""
    from .solve import prove
    result = prove(problem, timeout=timeout)
    if not result.certificate_text:
        return None, f"the prover answered {result.answer}: {result.reason or 'no reason given'}"
    path = out / (Path(problem.path).stem + ".cert")
    _write(path, result.certificate_text)
    kind = "certificate" if result.answer == "unsat" else "witness"
    return str(path), f"the prover answered {result.answer}; the {kind} was written by this report"


def _load_certificate(path: str):
    """The certificate and the very bytes it was parsed from (the report hashes what it checked)."""
    data = read_limited(path, MAX_CERTIFICATE_BYTES, "certificate")
    return parse_certificate_bytes(data, path), data


def _write(path: Path, content) -> None:
    try:
        if isinstance(content, bytes):
            path.write_bytes(content)
        else:
            path.write_text(content, encoding="utf-8")
    except OSError as err:
        raise InputError(f"cannot write the report: {err.strerror or err}", str(path)) from None


def _verdict(problem, cert) -> dict:
    if cert is None:
        return {"verdict": "unknown", "kind": None, "rule": None, "reason": None, "line": None}
    from checker.check import check
    try:
        v = check(problem, cert)
    except (MemoryError, RecursionError) as err:
        return {"verdict": "rejected", "kind": cert.kind, "rule": "LIMITS",
                "reason": f"resource limit: {type(err).__name__}", "line": None}
    return {"verdict": "accepted" if v.accepted else "rejected", "kind": v.kind,
            "rule": v.rule or None, "reason": v.reason or None, "line": v.line or None}


def _picture(problem, cert, verdict, data) -> bytes | None:
    """Draw the picture into ``data["picture"]`` (file and caption, or why it was skipped)."""
    from .picture import PictureUnavailable, draw_covering, draw_witness
    if verdict["verdict"] != "accepted":
        why = ("there is no certificate" if cert is None else
               "the certificate was rejected, so its covering establishes nothing")
        data["picture"] = {"file": None, "caption": None, "skipped": why}
        return None
    name = "covering.png" if cert.kind == "unsat" else "witness.png"
    try:
        png, caption = draw_covering(cert) if cert.kind == "unsat" else draw_witness(cert, problem)
    except PictureUnavailable as err:
        data["picture"] = {"file": None, "caption": None, "skipped": str(err)}
        return None
    except (ValueError, ArithmeticError) as err:  # display only: never fail the report for it
        data["picture"] = {"file": None, "caption": None,
                           "skipped": f"drawing failed ({type(err).__name__}: {err})"}
        return None
    data["picture"] = {"file": name, "caption": caption, "skipped": None}
    return png


# ---------------------------------------------------------------- the content

def code_lines(path: Path) -> int:
    """Lines that are neither blank nor comment-only."""
    return sum(1 for line in path.read_text(encoding="utf-8").splitlines()
               if line.strip() and not line.strip().startswith("#"))


def trusted_base_lines() -> dict[str, int]:
    """Code lines of each Python module of the trusted base (``checker/``, ``certformat/``)."""
    return {str(p.relative_to(ROOT)): code_lines(p)
            for d in TRUSTED for p in sorted((ROOT / d).glob("*.py"))}


def _versions() -> dict[str, str]:
    from importlib import metadata

    import flint
    import lark

    from checker.check import CHECKER_VERSION
    try:
        tessella = metadata.version("tessella")
    except metadata.PackageNotFoundError:
        tessella = "unknown"
    return {"checker": CHECKER_VERSION, "tessella": tessella, "python": platform.python_version(),
            "python-flint": flint.__version__, "lark": lark.__version__}


def report_data(problem, cert, cert_path, cert_bytes, verdict, prover_note) -> dict:
    """Everything the report says, as plain data (``report.json``)."""
    modules = trusted_base_lines()
    accepted = verdict["verdict"] == "accepted"
    data = {
        "title": f"tessella audit report: {Path(problem.path).name}",
        "problem": {"file": problem.path, "sha256": problem.sha256,
                    "variables": list(problem.variables),
                    "bool_variables": list(problem.bool_variables),
                    "assertions": len(problem.assertions)},
        "certificate": None if cert is None else {
            "file": cert_path, "sha256": hashlib.sha256(cert_bytes).hexdigest(),
            "claims": cert.kind, "names_problem_sha256": cert.sha256},
        "prover": prover_note,
        "verdict": verdict,
        "meaning": _meaning(problem, cert, verdict, prover_note),
        "checker": {"versions": _versions(), "trusted_base": modules,
                    "trusted_lines": sum(modules.values()), "budget": TRUSTED_BUDGET},
        "core": None, "witness": None,
        "statistics": None if cert is None else statistics(cert, cert_bytes),
        "caution": [CAUTION_ESTABLISHES, CAUTION_DOES_NOT],
    }
    if accepted and cert.kind == "unsat":
        data["core"] = [{"assertion": i, "line": problem.assertions[i - 1].line,
                         "text": problem.assertions[i - 1].text} for i in cert.core]
    if accepted and cert.kind == "sat":
        data["witness"] = _witness(problem, cert)
    return data


def _meaning(problem, cert, verdict, prover_note) -> str:
    if cert is None:
        return (f"No certificate: {prover_note}. Nothing is established about the problem.")
    if verdict["verdict"] == "rejected":
        where = f" at certificate line {verdict['line']}" if verdict["line"] else ""
        return (f"The checker rejected the certificate{where} (rule {verdict['rule']}: "
                f"{verdict['reason']}). A rejected certificate establishes nothing about the "
                "problem: neither that it has no solution nor that it has one.")
    if cert.kind == "unsat":
        return ("unsat: the checker replayed the certificate exactly and accepted it. The "
                "constraints of the problem file, exactly as written, have no real solution; "
                f"the {len(cert.core)} assertion(s) of the unsat core below already have none "
                "on their own.")
    return ("sat: the checker evaluated every atom exactly at the witness below and the "
            "problem's formula holds there, so the constraints have a real solution.")


def _witness(problem, cert) -> list[dict]:
    from .picture import number_value
    out = []
    for v in sorted(cert.variables, key=lambda v: v.problem_index):
        nid = cert.values[f"x{v.index}"]
        out.append({"variable": v.name, "exact": number_text(cert.numbers[nid]),
                    "approx": f"{number_value(cert, nid):.12g}"})
    for j, name in enumerate(problem.bool_variables, 1):
        out.append({"variable": name, "exact": str(cert.bools.get(j, False)).lower(),
                    "approx": None})
    return out


def statistics(cert, cert_bytes: bytes) -> dict[str, int]:
    """Counts of what the certificate contains."""
    segments = [s for node in cert.nodes.values() for s in node.segments]
    degrees = [sum(e) for p in cert.polys.values() for e in poly_terms(p, len(cert.variables))]
    return {
        "bytes": len(cert_bytes),
        "lines": cert_bytes.count(b"\n"),
        "lemmas": len(cert.lemmas),
        "covering nodes": len(cert.nodes),
        "deepest level": max((len(n.sample) + 1 for n in cert.nodes.values()), default=0),
        "segments": len(segments),
        "direct segments": sum(1 for s in segments if s.literal is not None),
        "lifted segments": sum(1 for s in segments if s.child is not None),
        "polynomials": len(cert.polys),
        "largest total degree": max(degrees, default=0),
        "numbers": len(cert.numbers),
        "irrational numbers": sum(1 for n in cert.numbers.values() if n.poly is not None),
        "atoms": len(cert.atoms),
        "core assertions": len(cert.core),
        "inference steps": len(cert.steps),
    }


def _verdict_line(data: dict) -> str:
    v = data["verdict"]
    if v["verdict"] == "accepted":
        return f"accepted ({v['kind']})"
    if v["verdict"] == "rejected":
        where = f", certificate line {v['line']}" if v["line"] else ""
        return f"rejected (rule {v['rule']}{where}): {v['reason']}"
    return "unknown (no certificate to check)"


# ---------------------------------------------------------------- Markdown

def _md_code(text: str) -> str:
    """Inline code that survives any backticks and pipes in ``text``."""
    text = str(text).replace("\r", " ").replace("\n", " ")
    longest = 0
    run = 0
    for ch in text:
        run = run + 1 if ch == "`" else 0
        longest = max(longest, run)
    fence = "`" * (longest + 1)
    pad = " " if text.startswith("`") or text.endswith("`") else ""
    return f"{fence}{pad}{text}{pad}{fence}".replace("|", "\\|")


def _md_block(lines: list[str]) -> list[str]:
    body = "\n".join(lines)
    fence = "```"
    while fence in body:
        fence += "`"
    return [fence, *lines, fence]


def markdown(data: dict) -> str:
    p, c, ck = data["problem"], data["certificate"], data["checker"]
    versions = ck["versions"]
    out = [f"# {_md_escape(data['title'])}", "", "| | |", "|---|---|",
           f"| Problem file | {_md_code(p['file'])} |",
           f"| Problem SHA-256 | `{p['sha256']}` |"]
    if c:
        out += [f"| Certificate file | {_md_code(c['file'])} |",
                f"| Certificate SHA-256 | `{c['sha256']}` |",
                f"| Certificate claims | {c['claims']} |"]
    out += [f"| Verdict of the checker | **{_md_escape(_verdict_line(data))}** |",
            f"| Checker version | {versions['checker']} |", ""]
    out += ["## Verdict", "", _md_escape(data["meaning"]), ""]
    if data["prover"]:
        out += [f"Prover: {_md_escape(data['prover'])}.", ""]
    if data["core"] is not None:
        out += ["## Unsat core", "",
                f"The refutation uses {len(data['core'])} of the {p['assertions']} assertions "
                "(numbers and lines of the problem file, in your own text):", ""]
        out += _md_block([line for a in data["core"] for line in _core_lines(a)]) + [""]
    if data["witness"] is not None:
        out += ["## Witness", "", "Each variable's exact value (and a decimal approximation):",
                ""]
        out += _md_block([f"{w['variable']} = {w['exact']}"
                          + (f"   (≈ {w['approx']})" if w["approx"] else "")
                          for w in data["witness"]]) + [""]
    out += ["## Picture", ""]
    pic = data["picture"]
    if pic["file"]:
        out += [f"![{_md_escape(pic['caption'])}]({pic['file']})", "",
                _md_escape(pic["caption"]), ""]
    else:
        out += [f"Picture skipped: {_md_escape(pic['skipped'])}.", ""]
    if data["statistics"]:
        out += ["## Certificate statistics", "", "| | |", "|---|---:|"]
        out += [f"| {k} | {v} |" for k, v in data["statistics"].items()] + [""]
    out += ["## Checker and trusted base", "",
            f"Checker version {versions['checker']} (tessella {versions['tessella']}), run "
            f"in-process with its default resource limits. Trusted base: the modules below "
            f"({ck['trusted_lines']} code lines, budget about {ck['budget']}), python-flint "
            f"{versions['python-flint']}, lark {versions['lark']}, Python {versions['python']}.",
            "", "| module | code lines |", "|---|---:|"]
    out += [f"| `{name}` | {n} |" for name, n in ck["trusted_base"].items()] + [""]
    out += ["## What this report does and does not establish", ""]
    for paragraph in data["caution"]:
        out += [paragraph, ""]
    return "\n".join(out)


def _core_lines(a: dict) -> list[str]:
    head = f"#{a['assertion']}  line {a['line']}:"
    text = a["text"].splitlines() or [""]
    if len(text) == 1:
        return [f"{head}  {text[0]}"]
    return [head] + ["    " + line for line in text]


def _md_escape(text: str) -> str:
    out = _one_line(str(text))
    for ch in "\\`*_[]<>|#":
        out = out.replace(ch, "\\" + ch)
    return out


def _one_line(text: str) -> str:
    return " ".join(str(text).split())


# ---------------------------------------------------------------- HTML

_STYLE = """
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,sans-serif;max-width:60rem;
margin:2rem auto;padding:0 1rem;color:#1b1f23;line-height:1.5}
h1{font-size:1.6rem;border-bottom:2px solid #d0d7de;padding-bottom:.3rem}
h2{font-size:1.2rem;margin-top:2rem;border-bottom:1px solid #d0d7de}
table{border-collapse:collapse;margin:.5rem 0}
td,th{border:1px solid #d0d7de;padding:.25rem .6rem;text-align:left;vertical-align:top}
td.n{text-align:right}
td code{white-space:pre-wrap}
code,pre{font-family:ui-monospace,"DejaVu Sans Mono",monospace;font-size:.9em}
pre{background:#f6f8fa;padding:.6rem;overflow-x:auto;white-space:pre-wrap}
.accepted{color:#116329;font-weight:bold}.rejected{color:#a40e26;font-weight:bold}
.unknown{color:#7d4e00;font-weight:bold}
.caution{background:#fff8c5;border:1px solid #d4a72c;padding:.2rem 1rem;margin-top:2rem}
img{max-width:100%;border:1px solid #d0d7de}
"""


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def html_page(data: dict, png: bytes | None) -> str:
    """A self-contained HTML page: inline style, the picture inline, no scripts."""
    p, c, ck = data["problem"], data["certificate"], data["checker"]
    versions, v = ck["versions"], data["verdict"]
    rows = [("Problem file", f"<code>{_e(p['file'])}</code>"),
            ("Problem SHA-256", f"<code id=\"problem-sha256\">{_e(p['sha256'])}</code>")]
    if c:
        rows += [("Certificate file", f"<code>{_e(c['file'])}</code>"),
                 ("Certificate SHA-256",
                  f"<code id=\"certificate-sha256\">{_e(c['sha256'])}</code>"),
                 ("Certificate claims", _e(c["claims"]))]
    verdict = f"<span id=\"verdict\" class=\"{_e(v['verdict'])}\">{_e(_verdict_line(data))}</span>"
    rows += [("Verdict of the checker", verdict),
             ("Checker version", _e(versions["checker"]))]
    out = ["<!DOCTYPE html>", "<html lang=\"en\"><head><meta charset=\"utf-8\">",
           "<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; "
           "img-src data:; style-src 'unsafe-inline'\">",
           f"<title>{_e(data['title'])}</title><style>{_STYLE}</style></head><body>",
           f"<h1>{_e(data['title'])}</h1>", _table(rows),
           "<h2>Verdict</h2>", f"<p>{_e(data['meaning'])}</p>"]
    if data["prover"]:
        out.append(f"<p>Prover: {_e(data['prover'])}.</p>")
    if data["core"] is not None:
        out += ["<h2>Unsat core</h2>",
                f"<p>The refutation uses {len(data['core'])} of the {p['assertions']} "
                "assertions (numbers and lines of the problem file, in your own text):</p>",
                _table([(f"#{a['assertion']}", f"line {a['line']}",
                         f"<code>{_e(a['text'])}</code>") for a in data["core"]],
                       header=("assertion", "line", "text"))]
    if data["witness"] is not None:
        out += ["<h2>Witness</h2>",
                _table([(f"<code>{_e(w['variable'])}</code>", f"<code>{_e(w['exact'])}</code>",
                         _e(w["approx"] or "")) for w in data["witness"]],
                       header=("variable", "exact value", "approximately"))]
    out.append("<h2>Picture</h2>")
    pic = data["picture"]
    if pic["file"] and png is not None:
        src = "data:image/png;base64," + base64.b64encode(png).decode("ascii")
        out += [f"<figure><img id=\"picture\" src=\"{src}\" alt=\"{_e(pic['caption'])}\">",
                f"<figcaption>{_e(pic['caption'])}</figcaption></figure>"]
    else:
        out.append(f"<p>Picture skipped: {_e(pic['skipped'])}.</p>")
    if data["statistics"]:
        out += ["<h2>Certificate statistics</h2>",
                _table([(_e(k), f"{n}") for k, n in data["statistics"].items()], numeric=True)]
    out += ["<h2>Checker and trusted base</h2>",
            f"<p>Checker version {_e(versions['checker'])} (tessella {_e(versions['tessella'])}), "
            "run in-process with its default resource limits. Trusted base: the modules below "
            f"({ck['trusted_lines']} code lines, budget about {ck['budget']}), python-flint "
            f"{_e(versions['python-flint'])}, lark {_e(versions['lark'])}, Python "
            f"{_e(versions['python'])}.</p>",
            _table([(f"<code>{_e(name)}</code>", f"{n}") for name, n in ck["trusted_base"].items()],
                   header=("module", "code lines"), numeric=True),
            "<div class=\"caution\"><h2>What this report does and does not establish</h2>"]
    out += [f"<p>{_e(paragraph)}</p>" for paragraph in data["caution"]]
    out += ["</div>", "</body></html>", ""]
    return "\n".join(out)


def _table(rows, header=None, numeric=False) -> str:
    out = ["<table>"]
    if header:
        out.append("<tr>" + "".join(f"<th>{_e(h)}</th>" for h in header) + "</tr>")
    for row in rows:
        cells = [f"<td>{cell}</td>" for cell in row]
        if numeric:
            cells[-1] = f"<td class=\"n\">{row[-1]}</td>"
        out.append("<tr>" + "".join(cells) + "</tr>")
    out.append("</table>")
    return "\n".join(out)
