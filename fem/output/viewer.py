"""viewer.html: an interactive 3D view of the model and its shapes, one self-contained HTML file
that works offline.

A reviewer turns the model (members along their interpolated shapes, nodes, supports marked),
picks a mode of any modes case (its frequency in the label), a buckled shape, or a static case or
combination (its deflected shape) from a list, sets the drawing scale, and animates the shape.

What the file holds:

- the drawing library, plotly.js's bundle of its 3D traces (stored in `data/`), gzip-compressed
  and base64 encoded (0.74 MB instead of 1.75 MB; the whole library took 2.0 MB), decompressed
  in the browser with the standard
  `DecompressionStream` (Chromium 80+, Firefox 113+, Safari 16.4+; an older browser gets a
  sentence saying so instead of a broken page);
- the geometry once (node coordinates, the members' undeformed curves) and per shape its node
  translations (the result's values, SI, six significant figures) and the members' curves as
  integers in 1/10000 of the model's largest extent at the drawing scale, all in one JSON
  document (schema `quaver-viewer/1`), gzip-compressed and base64 encoded like the library
  (`<script type="application/octet-stream" id="quaver-data">`; the rack's 0.28 MB of JSON
  text in 0.08 MB): `json.loads(gzip.decompress(base64.b64decode(block)))` reads it back;
- a few lines of script that draw with `Plotly.newPlot` and animate with `Plotly.restyle`
  (one pose a frame: the shape times sin(2 pi t) for a mode, a ramp 0 to 1 and back for a
  static shape), so the file grows with the shapes, not with the frames. `viewer.html#N` opens
  on the shape N (from 0) of the list.

The drawing scale is the pictures' own (`fem.output.vtk.drawing_scale`): the largest
translation drawn as 5 % of the model's largest extent, fewer where rotations would turn a
member past MAX_TURN. Each label states it.
"""

from __future__ import annotations

import base64
import functools
import gzip
import html
import json
import os
import re
from pathlib import Path

import numpy as np

__all__ = ["SCHEMA", "VIEWER", "viewer_html", "write_viewer"]

VIEWER = "viewer.html"
SCHEMA = "quaver-viewer/1"
STEPS = 10_000       # curve offsets are integers in extent / STEPS: 0.01 % of the model's size
# numbers of the shapes in one page (curve integers plus node values): the rack's 50 shapes hold
# about 86 000; beyond the budget, members are drawn straight (2 points) and then the last shapes
# are left out, with a note in the page, so a large model's page stays under about 15 MB (our choice)
BUDGET = 2_000_000


# plotly.js's own bundle of its 3D traces (npm plotly.js-gl3d-dist-min 4.1.1, MIT licence in
# data/LICENSE-plotly.js.txt), stored gzip-compressed: the page draws scatter3d traces only, and
# this bundle is 0.56 MB compressed against 1.47 MB for the whole library (our measurement)
PLOTLY = "plotly-gl3d.min.js.gz"
PLOTLY_SHA256 = "aab04dcd9c103a92b18723f8c837712fe820f325d0bcd2421e415e8124a75b9f"    # of the .js


@functools.cache
def _plotly_gz() -> str:
    """The stored plotly.js bundle (gzip-compressed), base64 (read once)."""
    from importlib.resources import files

    return base64.b64encode((files("fem.output.data") / PLOTLY).read_bytes()).decode("ascii")


def _sig(a, digits: int = 6) -> list:
    """The values of `a`, flattened, as floats of `digits` significant figures (short JSON)."""
    return [float(f"{v:.{digits}g}") for v in np.asarray(a, float).ravel().tolist()]


def _shapes(results):
    """(group, label, kind, shape (n, 6)) of every shape worth viewing, in the results' order:
    static cases and combinations, modes, buckled shapes."""
    out = []
    for r in results.statics:
        out.append(("Static cases and combinations", r.name, "static", np.asarray(r.u, float)))
    for r in results.of_kind("modes"):
        f = r.modes.freq
        for jj in range(r.shapes.shape[2]):
            j = r.first_mode + jj
            out.append((f"Modes: {r.name}", f"mode {j + 1}: {f[j]:.4g} Hz", "mode", r.shapes[:, :, jj]))
    for r in results.of_kind("buckling"):
        for j in range(len(r.factors)):
            out.append((f"Buckling: {r.name}", f"shape {j + 1}: load factor {r.factors[j]:.4g}", "mode",
                        r.shapes[:, :, j]))
    return out


def _data(results) -> dict:
    """The viewer's JSON document (schema SCHEMA; see the module notes)."""
    from ..elements.interpolate import member_curves, points_per_member, prepare_curves
    from .stress_out import units_of
    from .vtk import drawing_scale, shape_scale

    model = results.model
    lo, hi = model.bounding_box()
    extent = float(max(np.max(hi - lo), 1e-9))
    length = shape_scale(model)
    units = units_of(results)
    to_unit = units.per_si("length")
    shapes = _shapes(results)
    p = points_per_member(model.n_members)
    numbers = lambda q: 3 * (model.n_members * q + model.n_nodes)    # numbers a shape holds at q points
    if len(shapes) * numbers(p) > BUDGET:
        p = 2
    keep = max(1, min(len(shapes), BUDGET // numbers(p)))
    left = (f"{len(shapes) - keep} of the {len(shapes)} shapes left out to keep the page small "
            f"(from {shapes[keep][0]}, {shapes[keep][1]}); every shape is in results.json" if keep < len(shapes) else "")
    prepared = prepare_curves(model, p)
    held = np.asarray(model.restraint, bool) | (np.asarray(model.springs) != 0)
    dirs = np.array(["ux", "uy", "uz", "rx", "ry", "rz"])
    supports = [int(i) for i in np.flatnonzero(held.any(axis=1))]
    views = []
    for group, label, kind, shape in shapes[:keep]:
        curves = member_curves(model, shape, prepared=prepared)
        k = drawing_scale(curves, shape, length)
        top = float(np.abs(shape[:, :3]).max(initial=0.0))
        if k == 0:
            scale = "No motion to draw"
        elif kind == "static":
            scale = (f"Deflections drawn {k:.3g} times true size; largest translation "
                     f"{top * to_unit:.4g} {units.label('length')}")
        elif group.startswith("Modes"):
            scale = f"Shape drawn {k:.3g} times its mass-normalised size"
        else:
            scale = f"Shape drawn {k:.3g} times its size (largest translation 1)"
        views.append({"group": group, "label": label, "kind": kind, "scale": k, "scale_text": scale,
                      "nodes": _sig(shape[:, :3]),
                      "curve": np.rint(curves.disp * (k * STEPS / extent)).astype(int).ravel().tolist()})
    return {
        "schema": SCHEMA,
        "title": _data_title(results),
        "extent_m": extent,
        "steps": STEPS,
        "points": p,
        "nodes": {"names": list(model.node_names), "xyz": _sig(model.coords)},
        "members": {"names": list(model.member_names)},
        "base": _sig(_base(model, prepared)),
        "supports": [{"node": i, "held": " ".join(dirs[held[i]])} for i in supports],
        "views": views,
        "left_out": left,
    }


def _base(model, prepared) -> np.ndarray:
    """(e, p, 3) undeformed points along the members."""
    from ..elements.interpolate import member_curves

    return member_curves(model, np.zeros((model.n_nodes, 6)), prepared=prepared).base


def viewer_html(results) -> str:
    """The text of viewer.html for `results`."""
    data = json.dumps(_data(results), separators=(",", ":"), allow_nan=False).encode("utf-8")
    parts = {"TITLE": html.escape(f"Quaver 3D view: {_data_title(results)}"),
             "DATA": base64.b64encode(gzip.compress(data, 9, mtime=0)).decode("ascii"),
             "PLOTLY": _plotly_gz(), "SCRIPT": _SCRIPT}
    # one pass: a title or name holding '%DATA%' stays text
    return re.sub(r"%(TITLE|DATA|PLOTLY|SCRIPT)%", lambda m: parts[m.group(1)], _PAGE)


def _data_title(results) -> str:
    m = results.model
    return m.title or (Path(m.source).name if m.source else "model")


def write_viewer(results, out: Path) -> str | None:
    """Write out/viewer.html for `results`, whole or not at all: written under a temporary name
    and renamed into place. Returns None, or one line saying why the view was not written (a
    failure here never loses results)."""
    if not results.statics and not results.of_kind("modes", "buckling"):
        return None
    part = Path(out) / (VIEWER + ".part")
    try:
        part.write_text(viewer_html(results), encoding="utf-8")
        os.replace(part, Path(out) / VIEWER)
    except Exception as exc:   # noqa: BLE001 - the view is an extra; the results stand without it
        part.unlink(missing_ok=True)
        first = (str(exc).splitlines() or [""])[0]
        return f"3D view not written: {type(exc).__name__}: {first}"
    return None


_PAGE = """<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>%TITLE%</title>
<style>
body{margin:0;font:14px/1.4 system-ui,sans-serif;color:#1d2731;background:#f7f8f6}
header{display:flex;flex-wrap:wrap;gap:.6em 1.2em;align-items:center;padding:.5em 1em;background:#e4e9e2}
header h1{font-size:1.05em;margin:0}
select,button{font:inherit}
#plot{height:calc(100vh - 9em);min-height:360px}
#caption{margin:.3em 1em}
.caution{margin:.2em 1em .6em;font-size:.85em;color:#5a4a1e}
.key{margin:.2em 1em;font-size:.9em}
#status{color:#8a2c1b}
</style></head><body>
<header><h1>%TITLE%</h1>
<label>Shape <select id="view"></select></label>
<button id="play" type="button">Animate</button>
<label>Pose <input id="pose" type="range" min="-100" max="100" value="100"></label>
<label>Scale <select id="mult"><option>0.25</option><option>0.5</option><option selected>1</option>
<option>2</option><option>4</option><option>10</option></select></label>
</header>
<div id="plot"></div>
<p id="caption"></p><p id="status"></p>
<p class="key">Colour: each point's motion in the shape chosen, relative to its largest (dark blue none, yellow the
largest). Drag to turn, scroll to zoom; hover a member, node or support for its name.</p>
<p class="caution">Caution: results support, and never replace, the judgement of a qualified engineer;
local codes and licensed practice govern. Shapes are drawn enlarged; the numbers are in results.json.</p>
<script type="application/octet-stream" id="quaver-data">%DATA%</script>
<script type="application/octet-stream" id="plotly-gz">%PLOTLY%</script>
<script>%SCRIPT%</script>
</body></html>
"""

_SCRIPT = r"""
(async () => {
  const $ = (id) => document.getElementById(id), status = $("status");
  window.addEventListener("error", (e) => { status.textContent = "Error: " + e.message; });
  if (typeof DecompressionStream === "undefined") {
    status.textContent = "This 3D view needs a browser with DecompressionStream " +
      "(Chromium 80+, Firefox 113+, Safari 16.4+).";
    return;
  }
  const inflate = (id) => {        // a block's text: base64 of gzip-compressed UTF-8
    const bytes = Uint8Array.from(atob($(id).textContent), (c) => c.charCodeAt(0));
    return new Response(new Blob([bytes]).stream().pipeThrough(new DecompressionStream("gzip"))).text();
  };
  const code = await inflate("plotly-gz");
  const lib = document.createElement("script");
  lib.textContent = code;
  document.head.appendChild(lib);                // runs it: window.Plotly
  lib.remove(); $("plotly-gz").remove();         // 7 MB of text the page no longer needs
  const D = JSON.parse(await inflate("quaver-data"));
  const P = D.points, E = D.members.names.length, N = D.nodes.names.length, B = D.base, X = D.nodes.xyz;
  const unit = D.extent_m / D.steps;
  let view = D.views[0], amp = 1, mult = 1, playing = false, t0 = 0;
  const lines = (f) => {            // member curves, one polyline per member, null between them
    const x = [], y = [], z = [], c = view.curve, g = f * unit;
    for (let e = 0; e < E; e++) {
      for (let p = 0; p < P; p++) {
        const i = 3 * (e * P + p);
        x.push(B[i] + g * c[i]); y.push(B[i + 1] + g * c[i + 1]); z.push(B[i + 2] + g * c[i + 2]);
      }
      x.push(null); y.push(null); z.push(null);
    }
    return [x, y, z];
  };
  const nodes = (f) => {
    const x = [], y = [], z = [], u = view.nodes, g = f * view.scale;
    for (let n = 0; n < N; n++) {
      x.push(X[3 * n] + g * u[3 * n]); y.push(X[3 * n + 1] + g * u[3 * n + 1]); z.push(X[3 * n + 2] + g * u[3 * n + 2]);
    }
    return [x, y, z];
  };
  const motion = () => {             // colour: the shape's motion at each point, relative to its largest
    const c = view.curve, m = [];
    for (let e = 0; e < E; e++) {
      for (let p = 0; p < P; p++) { const i = 3 * (e * P + p); m.push(Math.hypot(c[i], c[i + 1], c[i + 2])); }
      m.push(0);
    }
    const top = m.reduce((a, b) => Math.max(a, b), 0) || 1;
    return m.map((v) => v / top);
  };
  const names = [];
  for (let e = 0; e < E; e++) { for (let p = 0; p < P; p++) names.push(D.members.names[e]); names.push(null); }
  const [bx, by, bz] = lines(0);   // the undeformed curves
  const s = D.supports.map((q) => q.node);
  const traces = [
    {type: "scatter3d", mode: "lines", name: "undeformed", x: bx, y: by, z: bz, hoverinfo: "skip",
     line: {color: "#b8c0c8", width: 2}},
    {type: "scatter3d", mode: "lines", name: "members", text: names, hoverinfo: "text", showlegend: false,
     line: {color: motion(), colorscale: "Cividis", cmin: 0, cmax: 1, width: 5}},
    {type: "scatter3d", mode: "markers", name: "nodes", text: D.nodes.names, hoverinfo: "text",
     marker: {size: 2.5, color: "#27323d"}},
    {type: "scatter3d", mode: "markers", name: "supports", x: s.map((n) => X[3 * n]), y: s.map((n) => X[3 * n + 1]),
     z: s.map((n) => X[3 * n + 2]), text: D.supports.map((q) => D.nodes.names[q.node] + ": held " + q.held),
     hoverinfo: "text", marker: {size: 7, symbol: "diamond", color: "#c0562b"}},
  ];
  const draw = () => {
    const f = amp * mult, [lx, ly, lz] = lines(f), [nx, ny, nz] = nodes(f);
    return Plotly.restyle("plot", {x: [lx, nx], y: [ly, ny], z: [lz, nz]}, [1, 2]);
  };
  const caption = () => {
    $("caption").textContent = view.group + " / " + view.label + ". " + view.scale_text +
      (mult !== 1 ? ", then times " + mult + " (Scale)" : "") + ".";
  };
  const groups = {};
  D.views.forEach((v, i) => {
    if (!groups[v.group]) { groups[v.group] = document.createElement("optgroup"); groups[v.group].label = v.group;
      $("view").appendChild(groups[v.group]); }
    const o = document.createElement("option"); o.value = i; o.textContent = v.label; groups[v.group].appendChild(o);
  });
  [traces[1].x, traces[1].y, traces[1].z] = lines(1);
  [traces[2].x, traces[2].y, traces[2].z] = nodes(1);
  const size = [0, 1, 2].map((a) => {
    const c = X.filter((_, i) => i % 3 === a);
    return c.reduce((h, v) => Math.max(h, v), -Infinity) - c.reduce((l, v) => Math.min(l, v), Infinity);
  });
  const big = Math.max(...size) || 1, ratio = size.map((d) => Math.max(d, 0.05 * big) / big);
  await Plotly.newPlot("plot", traces, {       // true proportions, the longest side 1: the whole model in view
    margin: {l: 0, r: 0, t: 0, b: 0}, showlegend: true, uirevision: "keep", legend: {x: 0, y: 1},
    scene: {aspectmode: "manual", aspectratio: {x: ratio[0], y: ratio[1], z: ratio[2]},
            camera: {eye: {x: 0.9, y: -0.9, z: 0.6}},
            xaxis: {title: {text: "X (m)"}}, yaxis: {title: {text: "Y (m)"}}, zaxis: {title: {text: "Z (m)"}}},
  }, {responsive: true, displaylogo: false});
  caption();
  if (D.left_out) status.textContent = D.left_out + ".";
  const pose = () => { amp = $("pose").value / 100; return draw(); };
  const pick = (i) => {
    view = D.views[i]; caption();
    return Plotly.restyle("plot", {"line.color": [motion()]}, [1]).then(pose);
  };
  $("view").onchange = () => pick(+$("view").value);
  $("mult").onchange = () => { mult = +$("mult").value; caption(); pose(); };
  $("pose").oninput = () => { if (!playing) pose(); };
  let timer = null, busy = false;
  const step = () => {              // 25 poses a second, one cycle in two seconds; a slow pose skips the next
    if (busy) return;
    const w = Math.PI * (performance.now() - t0) / 1000;
    amp = view.kind === "mode" ? Math.sin(w) : (1 - Math.cos(w)) / 2;
    $("pose").value = Math.round(100 * amp);
    busy = true;
    draw().finally(() => { busy = false; });
  };
  $("play").onclick = () => {
    playing = !playing; $("play").textContent = playing ? "Stop" : "Animate";
    clearInterval(timer);
    if (playing) { t0 = performance.now(); timer = setInterval(step, 40); } else pose();
  };
  const asked = +location.hash.slice(1);     // viewer.html#12 opens on the 13th shape of the list
  if (location.hash && Number.isInteger(asked) && asked >= 0 && asked < D.views.length) {
    $("view").value = asked; await pick(asked);
  }
  const done = document.createElement("p");
  done.id = "viewer-ready"; done.hidden = true;
  done.textContent = "ready " + D.views.length + " views in " + Math.round(performance.now()) + " ms";
  document.body.appendChild(done);
})().catch((e) => { document.getElementById("status").textContent = "The 3D view could not start: " + e; });
"""
