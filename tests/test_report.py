"""The review report: self-contained HTML whose images decode, with the expected sections;
rendered in headless Chromium when it is installed (always in CI), screenshot kept."""

import base64
import html
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
MARKED = {}          # harmonic case -> the natural frequencies its FRF plot marked


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


def _every_kind(text: str) -> str:
    """The rack deck with every case kind: a second, smaller modes case first (with a mass
    target it cannot reach), the sweep tied to the full one, and a free release."""
    text = text.replace("case MODES modes", "case LOW modes { target = (99 percent, 0, 0), max = 2 }\n"
                        "case MODES modes", 1)
    text = text.replace("case PUMP harmonic { ", "case PUMP harmonic { modes = MODES, ", 1)
    assert "modes = MODES" in text and "case LOW" in text
    return text + ('\ncase SWAY free { start = WIND, duration = 1 s, step = 0.005 s, damping = 2 percent, '
                   'modes = MODES, record = "U*_0" }\n')


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    from fem.output import plots

    folder = tmp_path_factory.mktemp("rep")
    deck = folder / "rack_all.deck"
    deck.write_text(_every_kind(RACK.read_text()))
    (folder / "records").mkdir()
    for f in (RACK.parent / "records").iterdir():
        (folder / "records" / f.name).write_bytes(f.read_bytes())
    marked = MARKED
    original = plots.plot_frf

    def spy(path, harm, node, j, natural, **kw):
        marked[harm.name] = list(natural)
        return original(path, harm, node, j, natural, **kw)

    plots.plot_frf = spy
    try:
        out = folder / "res"
        # exit status 1: the LOW modes case's effective-mass target is out of reach on purpose
        assert main(["run", str(deck), "--out", str(out), "--no-render"]) == 1
    finally:
        plots.plot_frf = original
    return out / "report.html"


def test_report_sections_follow_the_run(report):
    """Warnings listed; a history plot per recorded node; the FRF marks the natural
    frequencies of its own modes case; the mass target says how far it got."""
    import json

    doc = json.loads((report.parent / "results.json").read_text())
    text = report.read_text(encoding="utf-8")
    warn = text.split("id='warnings'", 1)[1].split("<h2", 1)[0]
    # the coarse-step warnings of the history cases, and the target LOW cannot reach
    for c in doc["cases"]:
        for w in c["checks"].get("warnings") or []:
            assert html.escape(f"{c['name']}: {w}") in warn
    assert "LOW: the effective-mass target was not met" in warn
    for case in ("SURGE", "QUAKE", "SWAY"):
        section = text.split(f"id='case-{case}'", 1)[1].split("<h2", 1)[0]
        got = [f"U{i}_0" for i in range(6) if f"displacement history at U{i}_0" in section]
        assert got == [f"U{i}_0" for i in range(6)]           # record = "U*_0": six nodes
    modes = {c["name"]: c for c in doc["cases"] if c["kind"] == "modes"}
    assert MARKED["PUMP"] == modes["MODES"]["frequency_Hz"] != modes["LOW"]["frequency_Hz"]
    low = modes["LOW"]["checks"]
    reached = f"X {100 * low['cumulative_mass_fraction']['X']:.1f}%"
    assert f"target X 99%, Y 0%, Z 0%; reached {reached}" in text and "with 2 modes" in text


def test_report_is_self_contained_and_valid(report):
    text = report.read_text(encoding="utf-8")
    p = _Collect()
    p.feed(text)
    assert not p.errors and p.stack == []
    assert {"caution", "model", "warnings", "checks", "modes-MODES", "modes-LOW", "case-DEAD", "case-SEISMIC",
            "case-PUMP", "case-SURGE", "case-QUAKE", "case-SWAY"} <= p.ids
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
    dom = subprocess.run([exe, *flags, "--enable-logging=stderr", "--v=0", "--dump-dom", report.as_uri()],
                         capture_output=True, text=True, timeout=180)
    assert dom.returncode == 0, dom.stderr[-1500:]
    # the page has no script: any console message (a resource that failed, a blocked load) is an error
    console = [ln for ln in dom.stderr.splitlines() if ":CONSOLE" in ln]
    assert console == []
    for section in ("Warnings", "Self-checks", "Modes: MODES", "spectrum case SEISMIC", "history case QUAKE",
                    "free case SWAY", "harmonic case PUMP", "static case DEAD", "Caution."):
        assert section in dom.stdout
    ARTIFACTS.mkdir(exist_ok=True)
    shot = ARTIFACTS / "report.png"
    r = subprocess.run([exe, *flags, f"--screenshot={shot}", "--window-size=1200,1600", report.as_uri()],
                       capture_output=True, text=True, timeout=180)
    assert r.returncode == 0, r.stderr[-1500:]
    img = Image.open(shot)
    assert img.size == (1200, 1600)
    assert len(np.unique(np.asarray(img.convert("L")))) > 10      # not a blank page
