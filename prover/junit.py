"""JUnit XML for CI systems: one ``testcase`` per problem of a batch.

The common JUnit report layout: ``testsuites`` > ``testsuite`` (counts, time) >
``testcase`` (``classname``, ``name``, ``time``) with a ``failure`` child for a
failed problem (wrong answer, rejected or missing certificate, error) and a
``skipped`` child for an unknown answer.  ``system-out`` carries the hashes.
"""
from __future__ import annotations

import re
import time
import xml.etree.ElementTree as ET

from .batch import failure_reason

_NOT_XML = re.compile("[^\t\n\r\x20-\ud7ff\ue000-\ufffd\U00010000-\U0010ffff]")


def junit_xml(records: list[dict], wall: float, mode: str) -> str:
    """The records of a batch (see :mod:`prover.batch`) as a JUnit XML document."""
    failures = sum(1 for r in records if r["outcome"] == "fail")
    skipped = sum(1 for r in records if r["outcome"] == "skip")
    root = ET.Element("testsuites", name="tessella", tests=str(len(records)),
                      failures=str(failures), errors="0", skipped=str(skipped),
                      time=f"{wall:.3f}")
    suite = ET.SubElement(root, "testsuite", name=f"tessella batch ({mode})",
                          tests=str(len(records)), failures=str(failures), errors="0",
                          skipped=str(skipped), time=f"{wall:.3f}",
                          timestamp=time.strftime("%Y-%m-%dT%H:%M:%S"))
    for r in records:
        seconds = (r["prove_seconds"] or 0.0) + (r["check_seconds"] or 0.0)
        case = ET.SubElement(suite, "testcase", classname="tessella", name=r["file"],
                             time=f"{seconds:.3f}")
        if r["outcome"] == "fail":
            failure = ET.SubElement(case, "failure", type=r["failure"],
                                    message=f"{r['failure']}: {failure_reason(r)}")
            failure.text = failure_reason(r)
        elif r["outcome"] == "skip":
            ET.SubElement(case, "skipped", message=f"unknown: {r['reason'] or 'no reason given'}")
        ET.SubElement(case, "system-out").text = _details(r)
    for element in root.iter():
        element.text = _clean(element.text)
        element.attrib = {k: _clean(v) for k, v in element.attrib.items()}
    ET.indent(root)
    return ET.tostring(root, encoding="unicode", xml_declaration=True) + "\n"


def _details(r: dict) -> str:
    lines = [f"problem {r['file']} sha256 {r['sha256']}",
             f"answer {r['answer']}" + (f" (declared {r['expected']})" if r["expected"] else "")]
    if r["certificate"]:
        lines.append(f"certificate {r['certificate']} sha256 {r['certificate_sha256']}")
    if r["verdict"]:
        lines.append(f"checker {r['checker_version']}: {r['verdict']}")
    if r["unchanged"]:
        lines.append("unchanged since the last run: not re-run")
    return "\n".join(lines)


def _clean(text: str | None) -> str | None:
    """``text`` without the characters XML 1.0 cannot carry (control characters)."""
    return None if text is None else _NOT_XML.sub("\ufffd", text)
