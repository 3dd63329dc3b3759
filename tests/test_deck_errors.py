"""User mistakes the deck reader must turn into one located DeckError (file:line:column, the
line with a caret under the offending token, what is wrong and how to fix it), and the CLI into
exit status 2 without a traceback."""

from pathlib import Path

import pytest

from fem.cli import main
from fem.deck.reader import read_deck
from fem.errors import DeckError

GOOD = """material S { E = 200 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
node A = (0, 0, 0)
node B = (2 m, 0, 0)
member M : A -> B beam P S
support A fixed
"""


def caret_under(err: DeckError) -> str:
    """The text the caret line points at in the quoted source line."""
    lines = str(err).splitlines()
    src, caret = lines[1][4:], lines[2][4:]
    return src[caret.index("^"):]


# ---------- 1. files that are not UTF-8 text, and folders

def test_latin1_byte_is_located(tmp_path: Path):
    deck = tmp_path / "stand.deck"
    deck.write_bytes(GOOD.encode() + 'title "pump 5 \u00b5m"\n'.encode("latin-1"))
    with pytest.raises(DeckError) as err:
        read_deck(deck)
    text = str(err.value)
    assert text.startswith("stand.deck:7:15: byte 0xb5 ('\u00b5' in the Windows/Latin-1 encoding) is not UTF-8")
    assert "must be UTF-8" in text and "save it as UTF-8" in text
    assert caret_under(err.value).startswith("\ufffdm")


def test_utf16_deck_is_refused(tmp_path: Path):
    deck = tmp_path / "stand.deck"
    deck.write_text(GOOD, encoding="utf-16")
    with pytest.raises(DeckError, match="'stand.deck' is UTF-16 .* must be UTF-8"):
        read_deck(deck)
    deck.write_bytes(GOOD.encode("utf-16-le"))          # no byte-order mark
    with pytest.raises(DeckError, match="is UTF-16"):
        read_deck(deck)


def test_utf8_byte_order_mark_is_accepted(tmp_path: Path):
    deck = tmp_path / "stand.deck"
    deck.write_bytes(b"\xef\xbb\xbf" + GOOD.encode())
    assert read_deck(deck).n_nodes == 2


def test_folder_given_as_deck(tmp_path: Path):
    (tmp_path / "stand.deck").mkdir()
    (tmp_path / "stand.deck" / "floor.deck").write_text(GOOD)
    with pytest.raises(DeckError, match=r"is a folder, not a file") as err:
        read_deck(tmp_path / "stand.deck")
    assert "decks in it: floor.deck" in str(err.value)


def test_included_folder_and_latin1_file(tmp_path: Path):
    (tmp_path / "parts").mkdir()
    (tmp_path / "top.deck").write_text(GOOD + 'include "parts"\n')
    with pytest.raises(DeckError, match=r"^top.deck:7:9: deck '.*parts' is a folder") as err:
        read_deck(tmp_path / "top.deck")
    assert caret_under(err.value) == '"parts"'
    (tmp_path / "top.deck").write_text(GOOD + '\ninclude "loads.deck"\n')
    (tmp_path / "loads.deck").write_bytes(b'title "a"\ntitle "\xe9"\n')
    with pytest.raises(DeckError, match=r"^loads.deck:2:8: byte 0xe9 .* \(included at top.deck:8:9\)"):
        read_deck(tmp_path / "top.deck")


def test_latin1_table_is_located(tmp_path: Path):
    (tmp_path / "pulse.csv").write_bytes(b"# t \xb5s\n0, 0\n1, 1\n")
    (tmp_path / "top.deck").write_text(
        GOOD + "case X modes { count = 2 }\n"
        'case H history { force B = (0, 1 kN, 0), table = "pulse.csv", duration = 1 s, step = 0.01 s }\n')
    with pytest.raises(DeckError, match=r"^pulse.csv:1:5: byte 0xb5 .* \(named at top.deck:8:"):
        read_deck(tmp_path / "top.deck")


def test_cli_exits_2_on_undecodable_deck(tmp_path: Path, capsys):
    deck = tmp_path / "stand.deck"
    deck.write_bytes(b'title "\xb5"\n')
    assert main(["check", str(deck)]) == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err and "stand.deck:1:8" in err
    assert main(["check", str(tmp_path)]) == 2
    assert "is a folder" in capsys.readouterr().err
