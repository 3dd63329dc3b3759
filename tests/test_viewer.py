"""viewer.html, the interactive 3D view: self-contained, every shape of the results in it, the
shapes it carries equal to the results' own, written whole or not at all, and loaded without
script errors by headless Chromium when it is installed (always in CI)."""

import base64
import gzip
import hashlib
import json
import os
import re
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest
from shared_decks import TINY_CANTILEVER

from fem import read_deck, read_text, solve, write_results
from fem.output import pictures, viewer

ROOT = Path(__file__).parents[1]
RACK = ROOT / "decks" / "rack.deck"
SHAPES = ["DEAD", "PIPES", "WIND", "ULS", "MODES"]     # the rack's static cases, combination and modes


@pytest.fixture(scope="module")
def rack():
    return solve(read_deck(RACK), cases=SHAPES)


@pytest.fixture(scope="module")
def page(rack, tmp_path_factory):
    out = tmp_path_factory.mktemp("viewer")
    assert viewer.write_viewer(rack, out) is None
    return out / "viewer.html"


def _block(text: str, ident: str, strict: bool = False) -> str:
    m = re.search(rf'<script type="[^"]+" id="{ident}">(.*?)</script>', text, re.S)
    assert m, ident
    if strict:        # base64 only: nothing in it can end the script element or the page
        assert re.fullmatch(r"[A-Za-z0-9+/]*={0,2}", m.group(1)), ident
    return m.group(1)


def _json(text: str) -> dict:
    """The page's data block: base64 of the gzip-compressed JSON document."""
    return json.loads(gzip.decompress(base64.b64decode(_block(text, "quaver-data", strict=True))))


def _data(page: Path) -> dict:
    return _json(page.read_text(encoding="utf-8"))


def test_page_is_self_contained(page):
    text = page.read_text(encoding="utf-8")
    # nothing fetched: no script, style or image from elsewhere, no address at all in the page
    assert not re.search(r"\b(src|href)\s*=", text, re.I)
    assert "http:" not in text and "https:" not in text and "@import" not in text and "url(" not in text
    # the drawing library inside is the stored plotly.js bundle, whole (the published file's digest)
    bundle = gzip.decompress(base64.b64decode(_block(text, "plotly-gz")))
    assert hashlib.sha256(bundle).hexdigest() == viewer.PLOTLY_SHA256
    assert bundle.startswith(b"/**\n* plotly.js (gl3d - minified) v") and b"Licensed under the MIT license" in bundle[:200]
    assert "qualified engineer" in text


def test_every_mode_and_static_shape_is_offered(rack, page):
    d = _data(page)
    assert d["schema"] == viewer.SCHEMA
    labels = [(v["group"], v["label"]) for v in d["views"]]
    statics = [r.name for r in rack.statics]
    assert statics == ["DEAD", "PIPES", "WIND", "ULS"]                 # the combination ULS among them
    assert [lab for g, lab in labels if g.startswith("Static")] == statics
    m = rack["MODES"]
    want = [f"mode {j + 1}: {m.modes.freq[j]:.4g} Hz" for j in range(m.shapes.shape[2])]
    assert [lab for g, lab in labels if g == "Modes: MODES"] == want
    assert len(labels) == len(statics) + len(want)
    assert all("drawn" in v["scale_text"] and v["scale"] > 0 for v in d["views"])


def test_shapes_carried_equal_the_results(rack, page):
    """The node translations in the page are the results' (six significant figures, so within
    5e-6 of each value); the members' curves, integers in extent/steps at the drawing scale,
    end at the drawn node translations within half a step (rounding) plus the nodes' rounding."""
    d = _data(page)
    model = rack.model
    n, e, p = model.n_nodes, model.n_members, d["points"]
    xyz = np.reshape(d["nodes"]["xyz"], (n, 3))
    np.testing.assert_allclose(xyz, model.coords, rtol=5e-6, atol=1e-9)
    expected = [r.u for r in rack.statics] + [rack["MODES"].shapes[:, :, j] for j in range(rack["MODES"].shapes.shape[2])]
    assert len(expected) == len(d["views"])
    unit = d["extent_m"] / d["steps"]
    for v, shape in zip(d["views"], expected):
        got = np.reshape(v["nodes"], (n, 3))
        np.testing.assert_allclose(got, shape[:, :3], rtol=5e-6, atol=1e-12 * np.abs(shape).max())
        curve = np.reshape(v["curve"], (e, p, 3)) * unit / v["scale"]          # back to the shape's units
        ends = shape[model.conn, :3]                                            # (e, 2, 3)
        tol = (0.5 * unit / v["scale"]) * (1 + 1e-9) + 1e-5 * np.abs(shape[:, :3]).max()
        assert np.abs(curve[:, [0, -1]] - ends).max() <= tol
        assert np.abs(curve).max() > 0.9 * np.abs(shape[:, :3]).max()         # the largest motion is drawn


def test_rack_page_is_small(page):
    """Target: under about 3 MB for the demo rack (plotly.js is 0.74 MB of it)."""
    assert page.stat().st_size < 3_000_000


def _browser():
    for name in ("chromium", "chromium-browser", "google-chrome"):
        if shutil.which(name):
            return shutil.which(name)
    return None


def test_page_loads_in_headless_browser(rack, page, tmp_path):
    exe = _browser()
    if exe is None:
        if os.environ.get("CI"):
            pytest.fail("CI must install Chromium for the viewer test (.ci/run does)")
        pytest.skip("no Chromium here")
    d = _data(page)
    last = len(d["views"]) - 1          # opened on the last mode: the shape list, caption and restyle all run
    # a reviewer's clicks, once the page is ready: Animate, then (0.7 s later) Stop and Scale 4
    clicks = """<script>
    const wait = setInterval(() => {
      if (!document.getElementById("viewer-ready")) return;
      clearInterval(wait);
      const $ = (id) => document.getElementById(id);
      $("play").click();
      const seen = new Set(), look = setInterval(() => seen.add($("pose").value), 50);
      setTimeout(() => {
        clearInterval(look);
        const p = document.createElement("p"); p.id = "clicked";
        p.textContent = "poses " + seen.size + " " + $("play").textContent; document.body.appendChild(p);
        $("play").click(); $("mult").value = "4"; $("mult").onchange();
      }, 700);
    }, 50);
    </script></body>"""
    clicked = tmp_path / "clicked.html"
    clicked.write_text(page.read_text(encoding="utf-8").replace("</body>", clicks), encoding="utf-8")
    flags = ["--headless", "--no-sandbox", "--disable-gpu", "--enable-unsafe-swiftshader", "--disable-quic",
             "--no-first-run", "--disable-background-networking", "--disable-component-update", "--disable-sync",
             f"--user-data-dir={tmp_path / 'profile'}", "--enable-logging=stderr", "--v=0",
             "--virtual-time-budget=30000"]
    dom = subprocess.run([exe, *flags, "--dump-dom", f"{clicked.as_uri()}#{last}"],
                         capture_output=True, text=True, timeout=180)
    assert dom.returncode == 0, dom.stderr[-1500:]
    errors = [ln for ln in dom.stderr.splitlines()
              if ":CONSOLE" in ln and re.search(r"Uncaught|Error|could not start", ln)]
    assert errors == []
    assert re.search(rf'id="viewer-ready"[^>]*>ready {len(d["views"])} views in \d+ ms<', dom.stdout)
    assert re.search(r'id="status">\s*</p>', dom.stdout)                   # no error shown
    caption = re.search(r'id="caption">([^<]*)<', dom.stdout).group(1)
    assert caption.startswith(f"Modes: MODES / {d['views'][last]['label']}. Shape drawn")
    assert caption.endswith(", then times 4 (Scale).")
    poses = re.search(r'id="clicked">poses (\d+) Stop<', dom.stdout)          # it moved while animating
    assert poses and int(poses.group(1)) >= 3, dom.stdout[-500:]
    assert dom.stdout.count("<option") == len(d["views"]) + 6                # shapes, and the 6 scales
    assert "<svg" in dom.stdout and "<canvas" in dom.stdout                  # plotly drew the scene


def _fake_pictures(*args, **kwargs):
    return "2 pictures and animations in pictures/"


@pytest.fixture(scope="module")
def tiny():
    return solve(read_text(TINY_CANTILEVER))


def test_written_with_the_pictures_only(tiny, tmp_path, monkeypatch):
    monkeypatch.setattr(pictures, "draw_pictures", _fake_pictures)
    w = write_results(tiny, tmp_path / "drawn")
    assert (w.path / "viewer.html").is_file() and w.notice == _fake_pictures()
    assert "viewer.html" in json.loads((w.path / "quaver-files.json").read_text())["files"]
    for kwargs in ({"render": False}, {"write": "viewers"}):
        w = write_results(tiny, tmp_path / "plain", **kwargs)
        assert not (w.path / "viewer.html").exists()


def test_a_failed_view_leaves_no_file_and_keeps_the_results(tiny, tmp_path, monkeypatch):
    def broken(results):            # fails part-way through writing: the file exists by then
        return "<p>" * 100_000 + "\ud800"

    monkeypatch.setattr(pictures, "draw_pictures", _fake_pictures)
    monkeypatch.setattr(viewer, "viewer_html", broken)
    w = write_results(tiny, tmp_path / "out")
    assert w.notice.startswith(f"{_fake_pictures()}; 3D view not written: UnicodeEncodeError: ")
    assert (w.path / "results.json").is_file() and (w.path / "report.html").is_file()
    assert not [f.name for f in w.path.iterdir() if f.name.startswith("viewer")]


def test_a_large_model_page_is_bounded(rack, monkeypatch):
    """Past the budget of numbers, members are drawn straight, then the last shapes are left out,
    and the page says so (every shape stays in results.json)."""
    model = rack.model
    shapes = len(rack.statics) + rack["MODES"].shapes.shape[2]
    straight = 3 * (2 * model.n_members + model.n_nodes)          # numbers of one shape at 2 points a member

    def data():
        return _json(viewer.viewer_html(rack))

    monkeypatch.setattr(viewer, "BUDGET", shapes * straight)
    d = data()
    assert d["points"] == 2 and len(d["views"]) == shapes and d["left_out"] == ""
    monkeypatch.setattr(viewer, "BUDGET", 10 * straight)
    d = data()
    assert d["points"] == 2 and len(d["views"]) == 10                  # the 4 static shapes, modes 1 to 6
    assert d["left_out"] == (f"{shapes - 10} of the {shapes} shapes left out to keep the page small "
                             "(from Modes: MODES, mode 7: " + f"{rack['MODES'].modes.freq[6]:.4g} Hz); "
                             "every shape is in results.json")


def test_a_title_cannot_break_the_page():
    title = 'rack </script><!-- %DATA% %PLOTLY% <b>'
    results = solve(read_text(TINY_CANTILEVER.replace('"tiny cantilever"', f'"{title}"')))
    text = viewer.viewer_html(results)
    assert _json(text)["title"] == title           # the block is base64 only (_block strict)
    assert "<title>Quaver 3D view: rack &lt;/script&gt;&lt;!-- %DATA% %PLOTLY% &lt;b&gt;</title>" in text
    assert text.count('id="plotly-gz"') == 1 and len(_block(text, "plotly-gz")) > 700_000
