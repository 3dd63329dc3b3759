"""Start-up: importing the CLI loads no heavy library, a check loads only what it uses, and the
deck grammar's analysis is cached between runs, safely (no timing here: benchmarks/startup.py)."""

import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from fem.deck import sources
from fem.deck.model_checks import close_pairs
from fem.deck.syntax import parse
from fem.errors import DeckError

ROOT = Path(__file__).parents[1]


def _modules_after(code: str) -> set[str]:
    r = subprocess.run([sys.executable, "-c", code + "\nimport sys; print(' '.join(sys.modules))"], cwd=ROOT,
                       env=dict(os.environ, PYTHONPATH=str(ROOT)), capture_output=True, text=True, timeout=300)
    assert r.returncode == 0, r.stderr
    return set(r.stdout.splitlines()[-1].split())


def test_importing_the_cli_imports_no_heavy_library():
    loaded = _modules_after("import fem.cli")
    heavy = {m for m in loaded if m.split(".")[0] in ("scipy", "pyvista", "vtk", "vtkmodules", "matplotlib",
                                                      "numpy", "lark", "meshio")}
    assert heavy == set()


def test_a_check_imports_only_what_it_uses():
    # the check assembles and factors K (scipy.sparse), nothing else of scipy, and draws nothing
    loaded = _modules_after("import io, contextlib\nfrom fem.cli import main\n"
                            "with contextlib.redirect_stdout(io.StringIO()):\n"
                            "    assert main(['check', 'decks/rack.deck']) == 0")
    unused = {m for m in loaded if m.split(".")[0] in ("pyvista", "vtk", "vtkmodules", "matplotlib", "meshio")
              or m.startswith(("scipy.spatial", "scipy.signal", "scipy.optimize", "scipy.integrate"))}
    assert unused == set()


def _grammar() -> str:
    return (ROOT / "grammar" / "deck.lark").read_text()


def test_a_cached_parser_reads_every_demo_deck_as_the_grammar_does(tmp_path):
    cache = tmp_path / "deck-grammar.lark-cache"
    made = sources.build_parser(_grammar(), cache)             # analysed, and saved
    assert cache.exists() and cache.stat().st_size > 0
    loaded = sources.build_parser(_grammar(), cache)           # read back
    plain = sources.build_parser(_grammar(), None)
    for deck in sorted((ROOT / "decks").glob("*.deck")):
        text = deck.read_text()
        assert parse(loaded, text, deck) == parse(plain, text, deck) == parse(made, text, deck), deck.name
    # the keyword callbacks come back with the cached parser: the same message for a glued keyword
    bad = "node A = (0, 0, 0)\nsupportA fixed\n"
    with pytest.raises(DeckError) as a:
        parse(loaded, bad, Path("bad.deck"))
    with pytest.raises(DeckError) as b:
        parse(plain, bad, Path("bad.deck"))
    assert str(a.value) == str(b.value)


@pytest.mark.parametrize("spoil", ["garbage", "truncated", "unwritable"])
def test_a_spoilt_grammar_cache_is_passed_over(tmp_path, spoil):
    cache = tmp_path / "deck-grammar.lark-cache"
    sources.build_parser(_grammar(), cache)
    if spoil == "garbage":
        cache.write_bytes(b"not a cache\n\x80\x04junk")
    elif spoil == "truncated":
        cache.write_bytes(cache.read_bytes()[:500])
    else:
        cache = tmp_path / "a-file" / "deck-grammar.lark-cache"
        (tmp_path / "a-file").write_text("a file, not a folder")
    deck = ROOT / "decks" / "rack.deck"
    parser = sources.build_parser(_grammar(), cache)
    assert parse(parser, deck.read_text(), deck) == parse(sources.build_parser(_grammar(), None), deck.read_text(),
                                                          deck)


def test_the_grammar_cache_lives_in_a_folder_only_the_user_writes(tmp_path, monkeypatch):
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path))
    assert sources._grammar_cache() == tmp_path / "quaver" / "deck-grammar.lark-cache"
    assert (tmp_path / "quaver").stat().st_mode & 0o777 == 0o700
    (tmp_path / "quaver").chmod(0o777)                             # others could plant a pickle there
    assert sources._grammar_cache() is None
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "file"))
    (tmp_path / "file").write_text("")
    assert sources._grammar_cache() is None


@pytest.mark.parametrize("n", [300, 2500], ids=["all-pairs", "k-d-tree"])
def test_close_pairs_agree_with_a_k_d_tree(n):
    # scipy's cKDTree.query_pairs is the reference: pairs at most tol apart, each once
    from scipy.spatial import cKDTree

    rng = np.random.default_rng(17)
    pts = rng.uniform(0, 10, (n, 3))
    pts[rng.choice(n, n // 10, replace=False)] = pts[rng.choice(n, n // 10, replace=False)] + 1e-7
    tol = 1e-5
    got = {tuple(sorted(p)) for p in close_pairs(pts, tol).tolist()}
    want = {tuple(sorted(p)) for p in cKDTree(pts).query_pairs(tol)}
    assert got == want and len(got) >= n // 20
    assert close_pairs(pts[:1], tol).shape == (0, 2)
