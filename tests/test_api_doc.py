"""docs/api.md is a walk-through a user copies into a notebook: its Python blocks run here, in
order, in one namespace, from a copy of the repository's example decks (so `decks/mast.deck`
is found and results are written into a temporary folder). A block that stops working, or an
assertion in it that stops holding, fails this test."""

import re
import shutil
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[1]
DOC = REPO / "docs" / "api.md"


def _blocks() -> list[tuple[int, str]]:
    text = DOC.read_text(encoding="utf-8")
    return [(text.count("\n", 0, m.start()) + 2, m.group(1))
            for m in re.finditer(r"^```python\n(.*?)^```", text, flags=re.S | re.M)]


def test_the_walk_through_has_code():
    assert len(_blocks()) >= 5


def test_api_doc_runs(tmp_path, monkeypatch):
    shutil.copytree(REPO / "decks", tmp_path / "decks")
    monkeypatch.chdir(tmp_path)
    names = {"__name__": "api_doc"}
    for line, code in _blocks():
        try:
            exec(compile(code, f"{DOC}:{line}", "exec"), names)
        except Exception as exc:   # name the block that failed
            pytest.fail(f"docs/api.md block at line {line} failed: {type(exc).__name__}: {exc}")
    assert (tmp_path / "results").is_dir()      # the walk-through ends by writing a results folder
