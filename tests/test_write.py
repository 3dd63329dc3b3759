"""`fem.output.write.write_results` writes exactly what `quaver run` writes, and refuses a
folder that cannot take results before writing anything."""

import filecmp
from pathlib import Path

import pytest

from fem import solve
from fem.cli import main
from fem.deck.reader import read_deck
from fem.errors import ResultsError
from fem.output.write import write_results

ROOT = Path(__file__).resolve().parents[1]


def _files(folder: Path) -> list[str]:
    return sorted(p.relative_to(folder).as_posix() for p in folder.rglob("*") if p.is_file())


def test_write_results_writes_what_quaver_run_writes(tmp_path, capsys):
    deck = ROOT / "decks" / "rack.deck"
    assert main(["run", str(deck), "--out", str(tmp_path / "cli"), "--no-render"]) == 0
    results = solve(read_deck(deck))
    written = write_results(results, tmp_path / "api", render=False)
    assert written.path == (tmp_path / "api").resolve() and written.notice == "pictures skipped (--no-render)"
    cli, api = tmp_path / "cli", tmp_path / "api"
    assert _files(cli) == _files(api) and "results.json" in _files(api)
    # the manifest names its own folder; every other file is the same, byte for byte
    same, differ, errors = filecmp.cmpfiles(cli, api, [f for f in _files(cli) if f != "quaver-files.json"],
                                            shallow=False)
    assert differ == [] and errors == []
    assert written.doc["model"]["title"] == results.model.title and results.ok


def test_a_folder_of_other_files_is_refused_and_left_alone(tmp_path):
    mine = tmp_path / "mine"
    mine.mkdir()
    (mine / "notes.txt").write_text("keep me")
    results = solve(read_deck(ROOT / "decks" / "rack.deck"))
    with pytest.raises(ResultsError, match="holds files that are not Quaver results"):
        write_results(results, mine, render=False)
    assert [p.name for p in mine.iterdir()] == ["notes.txt"]
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".quaver-")]
