"""The HTML report as a browser shows it: headless Chromium renders it and takes a screenshot.

Skipped when ``chromium`` is not on the PATH; ``.ci/run`` installs it (Debian's package).
"""
import hashlib
import shutil
import subprocess
from pathlib import Path

import pytest

CHROMIUM = shutil.which("chromium")
ARM = Path(__file__).resolve().parents[1] / "samples" / "arm-reach.tess"

pytestmark = pytest.mark.skipif(CHROMIUM is None, reason="chromium is not installed")


def chromium(tmp_path: Path, *args: str) -> subprocess.CompletedProcess:
    """Run headless Chromium quietly, offline, with a throw-away profile."""
    command = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
               "--no-first-run", "--disable-background-networking", "--disable-component-update",
               "--disable-sync", f"--user-data-dir={tmp_path / 'profile'}", *args]
    return subprocess.run(command, capture_output=True, text=True, timeout=120, check=False)


def test_html_report_renders_with_verdict_hashes_and_picture(tmp_path):
    from prover.report import make_report
    out = tmp_path / "report"
    make_report(str(ARM), None, str(out))
    page = (out / "report.html").as_uri()
    problem_hash = hashlib.sha256(ARM.read_bytes()).hexdigest()
    cert_hash = hashlib.sha256((out / "arm-reach.cert").read_bytes()).hexdigest()

    dom = chromium(tmp_path, "--dump-dom", page)
    assert dom.returncode == 0, dom.stderr[-2000:]
    assert '<span id="verdict" class="accepted">accepted (unsat)</span>' in dom.stdout
    assert f'<code id="problem-sha256">{problem_hash}</code>' in dom.stdout
    assert f'<code id="certificate-sha256">{cert_hash}</code>' in dom.stdout
    assert '<img id="picture" src="data:image/png;base64,' in dom.stdout
    assert "What this report does and does not establish" in dom.stdout

    shot = tmp_path / "screenshot.png"
    run = chromium(tmp_path, f"--screenshot={shot}", "--window-size=1200,2000", page)
    assert run.returncode == 0 and shot.is_file(), run.stderr[-2000:]
    import matplotlib.image
    image = matplotlib.image.imread(str(shot))
    assert image.shape[:2] == (2000, 1200)
    # The page is not blank: text, table rules and the coloured cells of the picture.
    assert image[..., :3].std() > 0.05
    colourful = (image[..., :3].max(axis=2) - image[..., :3].min(axis=2)) > 0.15
    assert colourful.sum() > 20_000  # the filled cells of the covering (and the green verdict)
