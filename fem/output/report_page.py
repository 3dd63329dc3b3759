"""The report's page: its style sheet, navigation bar and picture grid, and the pictures and
animations as the page carries them (one self-contained file, no script, nothing fetched).

Stills are embedded as palette PNG (256 colours, `fem.output.png`): Quaver's own pictures and
plots are written so already and embedded as they are; another PNG is re-encoded when that
makes it smaller. On the demo rack this takes the stills from 2.5 MB to 0.7 MB; a still from
the renderer or a plot has flat colours and anti-aliased edges, which a 256-colour palette
keeps. An animation is found
by its file stem in the lightest format present (.webp, .mp4, .gif: the smallest file wins)
and embedded when it is at most ANIMATION_BUDGET bytes, else linked as a file beside the
report, so the report stays a few MB however long a response runs.
"""

from __future__ import annotations

import base64
import html
import os
from pathlib import Path

__all__ = ["ANIMATION_BUDGET", "ANIMATION_FORMATS", "STYLE", "animation_file", "encode_still", "figure",
           "grid", "navigation", "ok", "page_head", "table"]

# bytes of an animation embedded in the page; larger ones are linked, so their bytes are in the
# folder once: a mode's cycle (16 frames, 70-90 kB on the rack) is embedded, a response animation
# (up to 120 frames, 0.7 and 1.05 MB on the rack) linked; at 1.5 MB the rack's report took in both
# responses and grew from 1.4 to 3.7 MB
ANIMATION_BUDGET = 500_000
ANIMATION_FORMATS = (".webp", ".mp4", ".gif")
_MIME = {".png": "image/png", ".gif": "image/gif", ".webp": "image/webp", ".jpg": "image/jpeg",
         ".jpeg": "image/jpeg", ".mp4": "video/mp4"}

STYLE = """
*, *::before, *::after { box-sizing: border-box; }
html { scroll-padding-top: 3.2em; }
body { font-family: system-ui, sans-serif; color: #1d2733; margin: 0; line-height: 1.4;
       overflow-wrap: anywhere; }
main { max-width: 1500px; margin: 0 auto; padding: 0 1em 2em; }
nav.bar { position: sticky; top: 0; z-index: 5; background: #22313f; padding: 0.35em 1em;
          overflow-x: auto; white-space: nowrap; font-size: 0.9em; }
nav.bar a { color: #f4f6f8; text-decoration: none; margin-right: 1.1em; }
nav.bar a:hover { text-decoration: underline; }
nav.bar a.fail { color: #ffb4a9; font-weight: 700; }
h1 { font-size: 1.6em; margin: 0.6em 0 0.1em; }
h2 { border-bottom: 2px solid #c0562f; padding-bottom: 0.15em; margin-top: 1.8em; }
h3 { margin: 1.2em 0 0.3em; font-size: 1.05em; }
.caution { background: #fdf3e7; border-left: 5px solid #c0562f; padding: 0.6em 1em; font-size: 1.05em; }
table { border-collapse: collapse; margin: 0.6em 0; font-size: 0.88em; display: block;
        max-width: 100%; overflow-x: auto; width: max-content; }
th, td { border-bottom: 1px solid #e4e7ec; padding: 0.25em 0.7em; text-align: right;
         overflow-wrap: normal; }
th { background: #f4f6f8; } td.l, th.l, .last-l td:last-child, .last-l th:last-child { text-align: left; }
tr:hover td { background: #f8fafc; }
.pass { color: #2e7d32; font-weight: 600; } .fail { color: #b3261e; font-weight: 700; }
.cols { display: flex; flex-wrap: wrap; gap: 0 2.5em; align-items: flex-start; }
.cols > * { min-width: 0; max-width: 100%; }
.grid { display: grid; grid-template-columns: repeat(auto-fill, minmax(min(100%, 260px), 1fr));
        gap: 0.8em; margin: 0.8em 0; }
.grid > * { border: 1px solid #e4e7ec; border-radius: 4px; background: #fff; min-width: 0; }
.grid > details[open] { grid-column: 1 / -1; }
.grid > div { padding: 0.3em; }
.grid summary { list-style: none; cursor: zoom-in; padding: 0.3em; }
.grid summary::-webkit-details-marker { display: none; }
.grid img, .grid video { display: block; width: 100%; height: 190px; object-fit: contain; }
.grid details[open] summary { cursor: zoom-out; }
.grid details[open] img, .grid details[open] video { height: auto; max-height: 92vh; }
.cap { display: block; font-size: 0.8em; padding: 0.2em 0.2em 0; }
.linked { display: flex; align-items: center; justify-content: center; height: 190px;
          background: #f4f6f8; text-align: center; padding: 1em; }
ul.warnings li { color: #8a4b00; }
code { overflow-wrap: anywhere; }
@media (max-width: 600px) { main { padding: 0 0.6em 2em; } h1 { font-size: 1.3em; }
  table { font-size: 0.8em; } th, td { padding: 0.2em 0.45em; } }
@media print { nav.bar { display: none; } .grid img { height: auto; } }
"""


def table(head, rows, left=1, last_left: bool = False) -> str:
    """An HTML table (cells are HTML already); the first `left` columns aligned left. A table
    wider than the page scrolls in its own box (the style sheet), never the page."""
    th = "".join(f'<th class="{"l" if i < left else ""}">{html.escape(str(h))}</th>' for i, h in enumerate(head))
    body = []
    for r in rows:
        body.append("<tr>" + "".join(f'<td class="{"l" if i < left else ""}">{c}</td>' for i, c in enumerate(r))
                    + "</tr>")
    return f"<table{' class=last-l' if last_left else ''}><tr>{th}</tr>{''.join(body)}</table>"


def ok(flag) -> str:
    """A verdict: pass, FAIL or not run (None)."""
    if flag is None:
        return "not run"
    return '<span class="pass">pass</span>' if flag else '<span class="fail">FAIL</span>'


def page_head(title: str) -> str:
    return (f"<!doctype html><html lang='en'><head><meta charset='utf-8'>"
            f"<meta name='viewport' content='width=device-width, initial-scale=1'>"
            f"<title>{html.escape(title)}</title><style>{STYLE}</style></head><body>")


def navigation(links: list[tuple[str, str, bool]]) -> str:
    """The sticky bar: (anchor id, text, failed) per section; a failed one in red."""
    return "<nav class='bar' aria-label='sections'>" + "".join(
        f"<a href='#{html.escape(a)}'{' class=fail' if bad else ''}>{html.escape(t)}</a>" for a, t, bad in links) + "</nav>"


def encode_still(path: Path) -> tuple[bytes, str]:
    """(bytes, mime) of a still for the page: a 256-colour palette PNG when smaller than the
    file, else the file as it is (a JPEG or WebP is kept)."""
    data = path.read_bytes()
    if path.suffix.lower() != ".png":
        return data, _MIME.get(path.suffix.lower(), "image/png")
    if data[:8] == b"\x89PNG\r\n\x1a\n" and data[25:26] == b"\x03":     # IHDR colour type 3: palette already
        return data, "image/png"
    from .png import palette_png

    small = palette_png(data)
    return (small, "image/png") if len(small) < len(data) else (data, "image/png")


def animation_file(folder: Path, stem: str) -> Path | None:
    """The lightest existing animation `folder/stem` + one of ANIMATION_FORMATS, or None."""
    found = [folder / f"{stem}{ext}" for ext in ANIMATION_FORMATS if (folder / f"{stem}{ext}").is_file()]
    return min(found, key=lambda f: f.stat().st_size) if found else None


def _uri(data: bytes, mime: str) -> str:
    return f"data:{mime};base64,{base64.b64encode(data).decode('ascii')}"


def figure(path: Path, caption: str, base: Path | None = None) -> str:
    """One picture of a grid: a thumbnail that opens to full width when clicked (<details>, no
    script). An animation over ANIMATION_BUDGET is linked by its path relative to `base` (the
    report's folder) instead of embedded."""
    cap = html.escape(caption)
    ext = path.suffix.lower()
    if ext in ANIMATION_FORMATS and path.stat().st_size > ANIMATION_BUDGET:
        rel = path.name if base is None else Path(os.path.relpath(path, base)).as_posix()
        size = path.stat().st_size / 1e6
        return (f"<div><a class='linked' href='{html.escape(rel)}'>open {html.escape(rel)} ({size:.1f} MB, "
                f"a file beside the report)</a><span class='cap'>{cap}</span></div>")
    if ext == ".mp4":          # a video has its own controls (full screen among them): no details around it
        src = _uri(path.read_bytes(), _MIME[ext])
        return (f"<div><video src='{src}' muted loop autoplay playsinline controls aria-label='{cap}'></video>"
                f"<span class='cap'>{cap}</span></div>")
    data, mime = (path.read_bytes(), _MIME[ext]) if ext in ANIMATION_FORMATS else encode_still(path)
    media = f"<img alt='{cap}' src='{_uri(data, mime)}'>"
    return f"<details><summary>{media}<span class='cap'>{cap}</span></summary></details>"


def grid(images: list[tuple[Path, str]], base: Path | None = None) -> str:
    """The pictures of a section as a grid of thumbnails ('' when there are none)."""
    if not images:
        return ""
    return "<div class='grid'>" + "".join(figure(p, c, base) for p, c in images) + "</div>"
