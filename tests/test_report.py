"""The review report: self-contained HTML whose images decode, with the expected sections;
rendered in headless Chromium when it is installed (always in CI), screenshot kept."""

import base64
import io
import os
import shutil
import subprocess
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pytest
from PIL import Image

from fem.cli import main

ROOT = Path(__file__).parents[1]
RACK = ROOT / "decks" / "rack.deck"
ARTIFACTS = ROOT / "test-artifacts"


class _Collect(HTMLParser):
    def __init__(self):
        super().__init__()
        self.ids, self.imgs, self.stack, self.errors = set(), [], [], []

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if "id" in a:
            self.ids.add(a["id"])
        if tag == "img":
            self.imgs.append(a.get("src", ""))
        if tag not in ("img", "meta", "br"):
            self.stack.append(tag)

    def handle_endtag(self, tag):
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"unbalanced </{tag}>")
        else:
            self.stack.pop()


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    out = tmp_path_factory.mktemp("rep") / "res"
    assert main(["run", str(RACK), "--out", str(out), "--no-render"]) == 0
    return out / "report.html"


def test_report_is_self_contained_and_valid(report):
    text = report.read_text(encoding="utf-8")
    p = _Collect()
    p.feed(text)
    assert not p.errors and p.stack == []
    assert {"caution", "model", "checks", "modes-MODES", "case-DEAD", "case-SEISMIC", "case-PUMP"} <= p.ids
    assert "qualified engineer" in text
    assert p.imgs and all(src.startswith("data:image/") for src in p.imgs)   # nothing to fetch
    for src in p.imgs:
        Image.open(io.BytesIO(base64.b64decode(src.split(",", 1)[1]))).verify()


def _browser():
    for name in ("chromium", "chromium-browser", "google-chrome"):
        if shutil.which(name):
            return shutil.which(name)
    return None


def test_report_renders_in_headless_browser(report, tmp_path):
    exe = _browser()
    if exe is None:
        if os.environ.get("CI"):
            pytest.fail("CI must install Chromium for the report test (.ci/run does)")
        pytest.skip("no Chromium here")
    flags = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
             "--disable-background-networking", "--disable-component-update", "--disable-sync",
             f"--user-data-dir={tmp_path / 'profile'}"]
    dom = subprocess.run([exe, *flags, "--dump-dom", report.as_uri()], capture_output=True, text=True, timeout=180)
    assert dom.returncode == 0, dom.stderr[-1500:]
    for section in ("Self-checks", "Modes: MODES", "spectrum case SEISMIC", "Caution."):
        assert section in dom.stdout
    ARTIFACTS.mkdir(exist_ok=True)
    shot = ARTIFACTS / "report.png"
    r = subprocess.run([exe, *flags, f"--screenshot={shot}", "--window-size=1200,1600", report.as_uri()],
                       capture_output=True, text=True, timeout=180)
    assert r.returncode == 0, r.stderr[-1500:]
    img = Image.open(shot)
    assert img.size == (1200, 1600)
    assert len(np.unique(np.asarray(img.convert("L")))) > 10      # not a blank page
