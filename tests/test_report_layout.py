"""The report as a review document: its tables, its size on the demo rack, and its layout in
headless Chromium at a desktop width (1400 px) and a phone's (390 px).

The rack is run once for the module, with pictures where this machine can draw them (the size
check needs them; it skips without). The layout is measured by a copy of the report with a small
probe script that paints its measurements as the colours of squares at the top left,
read back from the screenshot: the viewport width, the page's scroll width (wider than the
viewport means the page scrolls sideways), the number of columns of the fullest picture grid
and the width of its first picture before and after it is opened.
Headless Chromium does not make its window narrower than 500 px, so the phone width is laid out
in a 390 px iframe, which the page's media queries see as its viewport.
"""

import io
import json
import re
import shutil
import subprocess
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pytest
from PIL import Image

from fem.cli import main
from fem.output.report_page import ANIMATION_BUDGET, animation_file, encode_still, figure

ROOT = Path(__file__).parents[1]
ARTIFACTS = ROOT / "test-artifacts"
SIZE_LIMIT = 5_000_000      # bytes: the "about 5 MB" for the demo rack, with its pictures


@pytest.fixture(scope="module")
def rack(tmp_path_factory):
    out = tmp_path_factory.mktemp("layout") / "rack"
    assert main(["run", str(ROOT / "decks" / "rack.deck"), "--out", str(out)]) == 0
    return out


class _Sections(HTMLParser):
    """The text of each h2 section by its id, the ids and the navigation bar's targets."""

    def __init__(self):
        super().__init__()
        self.ids, self.links, self.section, self.text = set(), [], None, {}

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if "id" in a:
            self.ids.add(a["id"])
            if tag == "h2":
                self.section = a["id"]
        if tag == "a" and a.get("href", "").startswith("#"):
            self.links.append(a["href"][1:])

    def handle_data(self, data):
        if self.section:
            self.text[self.section] = self.text.get(self.section, "") + data


def _sections(path: Path) -> _Sections:
    p = _Sections()
    p.feed(path.read_text(encoding="utf-8"))
    return p


def test_every_table_is_present(rack):
    """At a glance, the modes table with rotational participation, the resonance table, and per
    case its reactions, governing end forces and stresses; every navigation link lands."""
    doc = json.loads((rack / "results.json").read_text())
    p = _sections(rack / "report.html")
    assert p.links and set(p.links) <= p.ids
    assert "self-checks" in p.text["glance"] and "MODES: lowest natural frequencies" in p.text["glance"]
    modes = p.text["modes-MODES"]
    assert all(f"{a} %" in modes for a in ("X", "Y", "Z", "RX", "RY", "RZ")) and "Resonance check" in modes
    wanted = {"static": ("Reactions (signed)", "Governing member end forces (signed)"),
              "spectrum": ("Reactions (combined peaks)", "Governing member end forces (combined peaks)"),
              "history": ("Reactions (peaks over time)", "Governing member end forces (peaks over time)"),
              "harmonic": ("Reactions (amplitudes", "Governing member end forces (amplitudes"),
              "combination": ("Reactions (largest and smallest, ", "Governing member end forces"),
              "envelope": ("Reactions (largest and smallest, governing case", "Governing member end forces")}
    kinds = set()
    for c in [*doc["cases"], *doc["demands"]]:
        if c["kind"] == "modes":
            continue
        kinds.add(c["kind"])
        text = p.text[f"case-{c['name']}"]
        assert all(w in text for w in wanted[c["kind"]]), c["name"]
        if c.get("stresses"):
            assert "Member stresses" in text, c["name"]
    assert kinds == set(wanted)                 # the rack has every kind the report tabulates
    html_text = (rack / "report.html").read_text(encoding="utf-8")
    assert html_text.count("qualified engineer") == 2          # the caution at the top and at the end


def test_reaction_table_balances_the_loads(rack):
    """The reactions of a static case shown per node sum to the applied load (equilibrium of a
    body at rest; the table's own sum row against results.json's applied load, 4 figures)."""
    doc = json.loads((rack / "results.json").read_text())
    text = (rack / "report.html").read_text(encoding="utf-8")
    dead = next(c for c in doc["cases"] if c["name"] == "DEAD")
    section = text.split("id='case-DEAD'", 1)[1].split("<h2", 1)[0]
    row = re.search(r"<b>sum of forces</b></td>(.*?)</tr>", section).group(1)
    fx, fy, fz = (float(v) for v in re.findall(r"<td[^>]*>([-0-9.e+]+)</td>", row)[:3])
    assert fz == pytest.approx(-dead["applied_sum_N"][2] / 1e3, rel=5e-4)       # kN, 4 figures shown
    assert (fx, fy) == (0.0, 0.0)               # round-off under fem.display.ZERO_TOL shows as 0


def test_rack_report_is_small(rack):
    """Under about 5 MB with the pictures and animations: stills as palette PNG, animations over
    the budget linked as files that exist beside the report."""
    if not (rack / "pictures").is_dir():
        pytest.skip("no pictures drawn here (no OpenGL context): the size would not be the rack's")
    report = rack / "report.html"
    assert report.stat().st_size < SIZE_LIMIT
    text = report.read_text(encoding="utf-8")
    for src in re.findall(r"src='data:[^;]+;base64,([^']*)'", text):
        assert len(src) * 3 / 4 <= ANIMATION_BUDGET + 3
    for href in re.findall(r"class='linked' href='([^']+)'", text):
        assert (rack / href).is_file() and (rack / href).stat().st_size > ANIMATION_BUDGET


def test_still_is_smaller_and_keeps_its_size(tmp_path):
    """A plot re-encoded for the page decodes to the same pixel size, is smaller, and differs
    from the original by little (256 colours: mean absolute error under 2 of 255)."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    fig, ax = plt.subplots(figsize=(7.7, 3.96), dpi=100)
    t = np.linspace(0, 10, 2000)
    ax.plot(t, np.sin(3 * t) * np.exp(-t / 5), t, np.cos(2 * t))
    ax.grid(True)
    f = tmp_path / "plot.png"
    fig.savefig(f)
    plt.close(fig)
    data, mime = encode_still(f)
    assert mime == "image/png" and len(data) < f.stat().st_size
    small = np.asarray(Image.open(io.BytesIO(data)).convert("RGB"), float)
    big = np.asarray(Image.open(f).convert("RGB"), float)
    assert small.shape == big.shape and np.abs(small - big).mean() < 2.0


def test_animation_lightest_format_and_budget(tmp_path, monkeypatch):
    """The lightest of .webp, .mp4 and .gif of a stem is chosen; one over the budget is linked by
    its path relative to the report, one under it embedded."""
    pics = tmp_path / "pictures"
    pics.mkdir()
    for ext, n in ((".gif", 3000), (".mp4", 1000), (".webp", 2000)):
        (pics / f"M_mode_001{ext}").write_bytes(b"\0" * n)
    assert animation_file(pics, "M_mode_001").suffix == ".mp4"
    assert animation_file(pics, "nothing") is None
    (pics / "M_mode_001.mp4").unlink()
    f = animation_file(pics, "M_mode_001")
    assert f.suffix == ".webp"
    assert "data:image/webp;base64," in figure(f, "mode 1", tmp_path)
    monkeypatch.setattr("fem.output.report_page.ANIMATION_BUDGET", 1500)
    linked = figure(f, "mode 1", tmp_path)
    assert "href='pictures/M_mode_001.webp'" in linked and "base64" not in linked


def _browser():
    for name in ("chromium", "chromium-browser", "google-chrome"):
        if shutil.which(name):
            return shutil.which(name)
    return None


# paints as colours: window.innerWidth, the page's scrollWidth, the columns of the fullest picture
# grid, the width of its first picture closed and opened, and the grid's width
_PROBE = """<script>(function () {
  var d = document.documentElement, g = null, cols = 0;
  document.querySelectorAll('.grid').forEach(function (x) {
    if (!g || x.children.length > g.children.length) g = x; });
  if (g) { var seen = {}; for (var i = 0; i < g.children.length; i++) seen[g.children[i].offsetLeft] = 1;
           cols = Object.keys(seen).length; }
  var pic = g && g.querySelector('details'), thumb = 0, opened = 0;
  if (pic) { thumb = pic.offsetWidth; pic.open = true; opened = pic.offsetWidth; }
  [window.innerWidth, d.scrollWidth, cols, thumb, opened, g ? g.clientWidth : 0].forEach(function (v, k) {
    var e = document.createElement('div');
    e.style.cssText = 'position:fixed;left:0;width:20px;height:20px;z-index:99;top:' + 25 * k +
      'px;background:rgb(' + (v >> 8) + ',' + (v & 255) + ',7)';
    document.body.appendChild(e); });
})();</script>"""


def _measure(shot: Path) -> tuple[int, ...]:
    im = Image.open(shot).convert("RGB")
    return tuple(int(r) * 256 + int(g) for r, g, _ in (im.getpixel((10, 10 + 25 * k)) for k in range(6)))


@pytest.mark.parametrize("width", [1400, 390])
def test_layout_holds_in_headless_browser(rack, tmp_path, width):
    """No sideways scroll of the page at either width (wide tables scroll in their own box), a
    grid of several columns on a desktop and one on a phone; screenshots kept in test-artifacts."""
    exe = _browser()
    if exe is None:
        pytest.skip("no Chromium here")
    probe = rack / "report_probe.html"
    probe.write_text((rack / "report.html").read_text(encoding="utf-8").replace("</body>", _PROBE + "</body>"),
                     encoding="utf-8")
    page = probe
    if width < 500:                   # Chromium's smallest headless window is 500 px wide
        page = rack / "phone.html"
        page.write_text("<!doctype html><html><body style='margin:0'><iframe src='report_probe.html' "
                        f"style='border:0;width:{width}px;height:2400px'></iframe></body></html>")
    flags = ["--headless", "--no-sandbox", "--disable-gpu", "--no-first-run", "--hide-scrollbars",
             "--disable-background-networking", "--disable-component-update", "--disable-sync",
             f"--user-data-dir={tmp_path / 'profile'}"]
    ARTIFACTS.mkdir(exist_ok=True)
    shot = ARTIFACTS / f"report_{width}.png"
    r = subprocess.run([exe, *flags, f"--screenshot={shot}", f"--window-size={max(width, 500)},2400",
                        page.as_uri()], capture_output=True, text=True, timeout=180)
    assert r.returncode == 0, r.stderr[-1500:]
    viewport, scroll, cols, thumb, opened, grid_width = _measure(shot)
    assert viewport == width and scroll <= width
    assert cols == 1 if width < 500 else cols >= 4
    # a picture opened (its <details> open, as a click does) takes the grid's whole width
    assert opened == grid_width and (thumb < opened if cols > 1 else thumb == opened)
    img = np.asarray(Image.open(shot).convert("L"))[:, :width]
    assert len(np.unique(img)) > 10                      # not a blank page


@pytest.mark.parametrize("chosen, force, moment", [("mm, kN, MPa", 1.0, 1.0), ("mm, N", 1e3, 1e3)])
def test_reaction_and_end_force_tables_in_display_units(chosen, force, moment):
    """A cantilever pipe with an arm, pushed sideways at the arm's tip: the base reaction is the
    push reversed and the moment of the push about the base (statics of a rigid body: R = -F,
    M = -r x F), shown in the units the document chose; the torque in the column is |r x F|_z."""
    from shared_decks import PIPE_ARM

    import fem
    from fem.display import parse_units
    from fem.output.report import case_tables

    res = fem.solve(fem.read_text(PIPE_ARM + "case PUSH static { force H = (0, 2 kN, 0) }\n"))
    u = parse_units(chosen)
    doc = {"display_units": {"length": u.length, "force": u.force, "moment": u.moment, "stress": u.stress,
                             "frequency": u.frequency, "chosen": True}}
    text = case_tables(res, doc)["PUSH"]
    row = re.search(r"<td class=\"l\">N0</td>(.*?)</tr>", text).group(1)
    got = [float(v) for v in re.findall(r"<td[^>]*>([-0-9.e+]+)</td>", row)]
    r, f = np.array([1.5, 0.0, 6.0]), np.array([0.0, 2.0, 0.0])          # m, kN
    want = np.r_[-f * force, -np.cross(r, f) * moment]                     # (0, -2, 0) kN, (12, 0, -3) kN m
    assert got == pytest.approx(want.tolist(), rel=5e-4, abs=1e-12)
    assert f"Fx {u.label('force')}" in text and f"Mx {u.label('moment')}" in text
    torque = re.search(r"<td class=\"l\">T</td><td[^>]*>([-0-9.e+]+) ", text).group(1)
    assert abs(float(torque)) == pytest.approx(3.0 * moment, rel=5e-4)


def test_envelope_tables_name_what_governs():
    """An envelope's reactions per node with the governing case beside each bound, and its member
    stress field (results.json, SI, Pa) shown in the chosen stress unit with its member and case."""
    from fem.output.report_tables import demand_tables, shown_units
    from fem.output.stress_demands import demand_report

    cols = ["Fx", "Fy", "Fz", "Mx", "My", "Mz"]
    c = {"kind": "envelope", "fields": {
        "reaction": {"columns": cols, "governing": {}, "values": {"G0": {
            "max": [1500.0, 0.0, 2e5, 0.0, 3e3, 0.0], "min": [-1500.0, -1e-12, 1e5, 0.0, -3e3, 0.0],
            "max_case": ["A", "A", "B", "A", "B", "A"], "min_case": ["B", "A", "A", "A", "A", "A"]}}},
    }}
    stress = {"basis": "static parts exact", "members": {
        "C1": {"section": "COL", "normal_max_Pa": 2.4e8, "normal_min_Pa": -1e8, "mises_Pa": 2.5e8,
               "ratio_to_yield": 0.704, "mises_point": "corner +y +z", "mises_case": "B"},
        "C2": {"section": "COL", "normal_max_Pa": 1e7, "normal_min_Pa": 0.0, "mises_Pa": 1e7,
               "ratio_to_yield": 0.028, "mises_point": "corner -y +z", "mises_case": "A"}}}
    doc = {"display_units": {"length": "mm", "force": "kN", "moment": "kN*m", "stress": "MPa", "frequency": "Hz",
                             "chosen": True}}
    text = demand_tables(c, shown_units(doc))
    assert ">1.5 (A)</td>" in text and ">-1.5 (B)</td>" in text and ">200 (B)</td>" in text
    assert ">0 (A)</td>" in text and ">-1e-12" not in text                 # -1e-12 of 200 kN is round-off: shown as 0
    table = demand_report(stress, "case", doc)
    assert "member stresses (MPa)" in table and "<td>250</td>" in table and "<td>B</td>" in table
    assert table.index("<td>C1</td>") < table.index("<td>C2</td>")          # most stressed first


def test_viewer_is_linked_when_present(rack, tmp_path):
    """viewer.html beside the report gets a link in its header; without one there is none."""
    from fem.output.report import write_report

    doc = json.loads((rack / "results.json").read_text())
    alone = write_report(tmp_path / "report.html", doc, {}).read_text(encoding="utf-8")
    assert "viewer.html" not in alone
    (tmp_path / "viewer.html").write_text("<!doctype html><title>view</title>")
    linked = write_report(tmp_path / "report.html", doc, {}).read_text(encoding="utf-8")
    assert "<a href='viewer.html'>interactive 3D view</a>" in linked
