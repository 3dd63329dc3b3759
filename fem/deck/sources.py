"""Deck sources: the files a deck reads (the top deck, its includes, its tables), the stack of
includes being read, and the Location of every token in them.

Every file goes through one guarded path: its name must be one a file can have, its links must
resolve, it must be a regular file inside the top deck's folder, below a size limit, and UTF-8.
"""

from __future__ import annotations

import gc
import os
import stat
from contextlib import contextmanager
from functools import lru_cache
from importlib import resources
from pathlib import Path

from lark import Lark, Token, Tree

from ..errors import DeckError, Location
from . import fast_lines
from .expressions import MAX_NESTING, too_deep
from .syntax import keyword_callbacks
from .syntax import parse as parse_deck_text

__all__ = ["MAX_DECK_BYTES", "MAX_TABLE_BYTES", "Sources", "build_parser", "file_name", "parses_kept", "read_utf8",
           "resolved"]

# Our choice, from a measurement (2-core machine shared with other jobs, load 8-12): a generated
# deck of 7.7 MB (90 000 node and 90 000 member lines) read in 8.9 s with a peak of 502 MB, the
# one-line statements by the quick reader (fem/deck/fast_lines.py); the same deck read by lark
# alone, as blocks, expressions and loops are, took 62 s and 1.08 GB, about 140 MB per MB. So
# 8 MB, the deck and its includes together, reads in a minute or less within about 1.1 GB; a
# deck of a hundred thousand members written out line by line fits, and loops keep larger
# models short.
MAX_DECK_BYTES = 8_000_000
# Our choice: a table (two numbers a row, ~25 bytes) of 32 MB holds over a million rows, e.g.
# 20 minutes of a record sampled at 1 kHz; read row by row at ~6 bytes of memory per byte.
MAX_TABLE_BYTES = 32_000_000


# (file, text) -> parse tree, while a study reads one deck again and again with other values
# (`parses_kept`); the reader never changes a tree, so a tree serves every reading of its text
_KEPT: dict = {}
_KEPT_MAX = 64          # trees kept at most (the deck's files and the overrides' one-line lets)
_keeping = [0]          # blocks of parses_kept running


@contextmanager
def parses_kept():
    """While the block runs, a deck text parsed in such a block before is not parsed again (its
    tree is kept for the rest of the process, at most _KEPT_MAX of them, the least recently used dropped).
    Outside such blocks nothing is kept or looked up, so a single reading frees its tree."""
    _keeping[0] += 1
    try:
        yield
    finally:
        _keeping[0] -= 1


@lru_cache(maxsize=1)
def _parser() -> Lark:
    here = Path(__file__).resolve().parents[2] / "grammar" / "deck.lark"
    text = here.read_text() if here.exists() else \
        resources.files("fem.grammar").joinpath("deck.lark").read_text()
    return build_parser(text, _grammar_cache())


def build_parser(text: str, cache: Path | None) -> Lark:
    """The deck parser of grammar `text`; its analysis (0.1-0.2 s, most of `quaver check`'s
    own start-up) is read from `cache` when lark finds there one made from the same grammar,
    options, lark and Python versions (it checks a hash), else made and saved there. A cache
    that cannot be read or written is passed over: the parser is then made from the grammar."""
    options = dict(parser="lalr", lexer="contextual", propagate_positions=True,
                   lexer_callbacks=keyword_callbacks())
    if cache is not None:
        try:
            return Lark(text, cache=str(cache), **options)
        except Exception:   # noqa: BLE001 - a cache is only a shortcut; the grammar is the reference
            pass
    return Lark(text, **options)


def _grammar_cache() -> Path | None:
    """Where the parser's analysis is kept between runs: the user's cache folder (XDG), made
    private to the user (the file is a pickle, read back only from there); None when there is
    no such folder to be had."""
    base = os.environ.get("XDG_CACHE_HOME", "").strip() or os.path.join(os.path.expanduser("~"), ".cache")
    folder = Path(base) / "quaver"
    try:
        folder.mkdir(mode=0o700, parents=True, exist_ok=True)
        st = folder.stat()
        if st.st_uid != getattr(os, "getuid", lambda: st.st_uid)() or st.st_mode & 0o022:
            return None                          # a folder others can write to: not trusted with a pickle
    except (OSError, RuntimeError):
        return None
    return folder / "deck-grammar.lark-cache"


class Sources:
    """The files of one deck: their lines, which file each token came from, the include stack
    (the file being read last) and the deck text read so far."""

    def __init__(self, top: Path):
        self.top_dir = top.resolve().parent
        self.stack: list[Path] = []
        self.lines: dict[Path, list[str]] = {}
        self.token_file: dict[int, Path] = {}
        self.deck_bytes = 0                            # bytes of deck text read so far (all files)
        self._shown: dict[Path, str] = {}
        self._located: dict[int, tuple] = {}           # id(item) -> (item, file, Location), in loops
        self.repeating = 0                             # loops running (their items are located again)

    def load(self, path: Path, where: Location | None = None) -> tuple[Path, Tree, list]:
        """The deck file at `path` (the top deck, or an include named at `where`) checked, read
        and parsed, its tokens located: (its resolved path, lark's tree, the quick lines)."""
        path = resolved(path, "include" if where else "deck", where)
        if path in self.stack:
            raise DeckError(f"'{self.shown(path)}' includes itself (through {' -> '.join(self.shown(p) for p in self.stack)})", where)
        if path == self.top_dir:
            raise DeckError(f"include names the deck's own folder {self.top_dir}, not a file", where,
                            "give the name of a deck file in it")
        if self.top_dir not in path.parents:
            raise DeckError(f"include '{path}' is outside the deck's folder {self.top_dir}", where,
                            "keep included decks in the same folder as the top deck or below it")
        text = read_utf8(path, "deck", where, self.shown(path), MAX_DECK_BYTES - self.deck_bytes,
                         total=self.deck_bytes)
        self.deck_bytes += len(text.encode("utf-8", errors="surrogatepass"))
        self.lines[path] = text.splitlines()
        tree, quick = self.read(text, path)
        self.mark(tree, path)
        return path, tree, quick

    def read(self, text: str, path: Path) -> tuple[Tree, list]:
        """A deck file's text parsed: (lark's tree of what the quick line reader leaves to it, the
        quick lines in order; fem/deck/fast_lines.py). A line that a statement of lark's spans is
        given back to lark; a cut text that lark refuses is parsed whole, so its error is lark's."""
        if not fast_lines.quick():
            return self.parse(text, path), []
        skip = frozenset()
        for _ in range(3):
            cut, quick = fast_lines.cut(text, skip)
            if not quick:
                break
            try:
                tree = self.parse(cut, path)
            except DeckError:
                break
            spanned = fast_lines.spanned(tree, quick)
            if not spanned:
                return tree, quick
            skip |= spanned
        return self.parse(text, path), []

    def mark(self, tree: Tree, path: Path) -> None:
        """Remember each item's file, once per file."""
        for sub in tree.iter_subtrees():
            sub.meta.qfile = path
            for c in sub.children:
                if isinstance(c, Token):
                    self.token_file[id(c)] = path

    @contextmanager
    def reading(self, path: Path):
        """`path` is the file being read while the block runs (the last resort of `loc`)."""
        self.stack.append(path)
        try:
            yield
        finally:
            self.stack.pop()

    def loc(self, item) -> Location:
        if type(item) is tuple:             # a name in a quick line: (match, group, line, file)
            match, group, line, path = item
            src = self.lines[path][line - 1] if 0 < line <= len(self.lines[path]) else ""
            return Location(self.shown(path), line, match.start(group) - match.start() + 1, src)
        meta = getattr(item, "meta", None)
        path = self.token_file.get(id(item)) or getattr(meta, "qfile", None) or self.stack[-1]
        known = self._located.get(id(item))
        if known is not None and known[0] is item and known[1] == path:
            return known[2]                  # a loop's statement, located again on every pass
        where = self._locate(item, path)
        if self.repeating:
            self._located[id(item)] = (item, path, where)     # the item kept, so its id stays its own
        return where

    def _locate(self, item, path: Path) -> Location:
        if isinstance(item, Token):
            line, col = item.line, item.column
        else:
            meta = item.meta
            line, col = getattr(meta, "line", 1), getattr(meta, "column", 1)
        src = self.lines[path][line - 1] if 0 < line <= len(self.lines[path]) else ""
        return Location(self.shown(path), line, col, src)

    def shown(self, path: Path) -> str:
        """How a file is named in messages: its place below the top deck's folder (rack.deck,
        parts/legs.deck), so that included files of the same name in different folders differ.
        Worked out once per file: every located item asks."""
        shown = self._shown.get(path)
        if shown is None:
            try:
                shown = str(path.relative_to(self.top_dir))
            except ValueError:
                shown = str(path)
            self._shown[path] = shown
        return shown

    def parse(self, text: str, path: Path) -> Tree:
        if not _keeping[0]:
            return self._parse(text, path)
        key = (str(path), text)
        if key in _KEPT:
            _KEPT[key] = tree = _KEPT.pop(key)      # the most recently used last
            return tree
        tree = self._parse(text, path)
        if len(_KEPT) >= _KEPT_MAX:
            _KEPT.pop(next(iter(_KEPT)))
        _KEPT[key] = tree
        return tree

    def _parse(self, text: str, path: Path) -> Tree:
        # the collector would scan the growing tree again and again while lark builds it (a
        # million objects for a large deck) and finds no cycles to free there: paused meanwhile
        paused = gc.isenabled()
        gc.disable()
        try:
            tree = parse_deck_text(_parser(), text, Path(self.shown(path)))
        finally:
            if paused:
                gc.enable()
        deep = too_deep(tree)
        if deep is not None:
            sub, levels = deep
            path = path.resolve()
            self.lines.setdefault(path, text.splitlines())
            with self.reading(path):
                where = self.loc(sub)
            raise DeckError(f"this is nested {levels} levels deep, above the limit of {MAX_NESTING} (each term of a "
                            "sum or product, each sign and each enclosing loop is one level)", where,
                            "split it with let parameters, e.g. let a = ... and let b = ..., then a + b")
        return tree


def file_name(name: str, what: str, where: Location | None) -> None:
    """Refuse a file name that no file can have (empty, a NUL character, a part too long)."""
    if not name:
        raise DeckError(f"{what}: the file name is empty", where, 'write the name between the quotes: "legs.deck"'
                        if what == "include" else 'write the name between the quotes: "record.csv"')
    if "\0" in name:
        raise DeckError(f"{what}: the file name holds a NUL character, which no file name can", where)
    longest = max(len(part.encode("utf-8", errors="surrogatepass")) for part in name.split("/"))
    if longest > 255 or len(name.encode("utf-8", errors="surrogatepass")) > 4095:
        raise DeckError(f"{what}: the file name is longer than a file system allows ({longest} bytes in one part; "
                        "the limit is 255, and 4095 for the whole path)", where)


def resolved(path: Path, what: str, where: Location | None) -> Path:
    """path.resolve(), with a name no file can have or a loop of links a DeckError."""
    file_name(str(path), what, where)
    try:
        return path.resolve()
    except (OSError, RuntimeError, ValueError) as exc:
        reason = "its symbolic links form a loop" if isinstance(exc, RuntimeError) else \
            getattr(exc, "strerror", None) or str(exc)
        raise DeckError(f"{what} '{path}' cannot be followed: {reason}", where) from None


def read_utf8(path: Path, what: str, where: Location | None, shown: str | None = None,
              limit: int | None = None, total: int = 0) -> str:
    """The text of a deck or table file, which must be UTF-8 (a UTF-8 byte-order mark is
    allowed). A folder, anything but a regular file (a pipe or device, which could block or never
    end), a file above `limit` bytes (checked before reading), an unreadable file or other bytes
    are a DeckError that says what is wrong; `where` is the statement that named the file (None
    for the top deck); `total` is the deck text already read from other files; `limit` is the
    size limit of a deck or a table unless given."""
    if limit is None:
        limit = MAX_DECK_BYTES if what == "deck" else MAX_TABLE_BYTES
    site = f" ({'included' if what == 'deck' else 'named'} at {where})" if where else ""
    try:
        info = os.stat(path)
    except OSError as exc:
        raise DeckError(f"cannot read {what} '{path}': {exc.strerror}", where) from None
    if stat.S_ISDIR(info.st_mode):
        inside = sorted(p.name for p in path.glob("*.deck"))[:5]
        hint = f"decks in it: {', '.join(inside)}" if inside else "give the path of a file"
        raise DeckError(f"{what} '{path}' is a folder, not a file", where, hint)
    _regular(info, path, what, where)
    _small_enough(info.st_size, path, what, where, limit, total)
    try:
        # non-blocking, so that a pipe put in the file's place after the check cannot hang the open
        fd = os.open(path, os.O_RDONLY | getattr(os, "O_NONBLOCK", 0))
        with os.fdopen(fd, "rb") as f:
            _regular(os.fstat(f.fileno()), path, what, where)
            data = f.read(limit + 1)
    except OSError as exc:
        raise DeckError(f"cannot read {what} '{path}': {exc.strerror}", where) from None
    _small_enough(len(data), path, what, where, limit, total)
    fix = "save it as UTF-8 (in most editors: Save As, encoding UTF-8)"
    if data.startswith((b"\xff\xfe", b"\xfe\xff")) or (b"\x00" in data[:200] and data.count(b"\x00") * 4 > len(data)):
        raise DeckError(f"{what} '{path.name}' is UTF-16 (or UTF-32) text; a {what} file must be UTF-8", where, fix)
    if data.startswith(b"\xef\xbb\xbf"):
        data = data[3:]
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        start = data.rfind(b"\n", 0, exc.start) + 1
        end = data.find(b"\n", exc.start)
        raw = data[start:end if end >= 0 else len(data)]
        line = data.count(b"\n", 0, exc.start) + 1
        column = len(data[start:exc.start].decode("utf-8", errors="replace")) + 1
        bad = data[exc.start]
        guess = bytes([bad]).decode("cp1252", errors="replace")
        like = f" ('{guess}' in the Windows/Latin-1 encoding)" if guess.isprintable() and guess != "\ufffd" else ""
        src = raw.decode("utf-8", errors="replace").rstrip("\r")
        raise DeckError(f"byte 0x{bad:02x}{like} is not UTF-8 text{site}; a {what} file must be UTF-8",
                        Location(shown or path.name, line, column, src), fix) from None


def _regular(info: os.stat_result, path: Path, what: str, where: Location | None) -> None:
    if not stat.S_ISREG(info.st_mode):
        kind = ("a named pipe" if stat.S_ISFIFO(info.st_mode) else "a device" if stat.S_ISCHR(info.st_mode)
                or stat.S_ISBLK(info.st_mode) else "a socket" if stat.S_ISSOCK(info.st_mode) else "not a file")
        raise DeckError(f"{what} '{path}' is {kind}, not a regular file", where,
                        f"a {what} is read from an ordinary file saved on disk")


def _small_enough(size: int, path: Path, what: str, where: Location | None, limit: int, total: int) -> None:
    if size <= limit:
        return
    cap = MAX_DECK_BYTES if what == "deck" else MAX_TABLE_BYTES
    if what == "deck":
        whole = f"the deck and its includes would be over {_mb(total + size)}" if total else \
            f"the deck '{path.name}' is {_mb(size)}"
        raise DeckError(f"{whole}, above the limit of {_mb(cap)} of deck text (reading takes up to about 140 MB "
                        "of memory per MB)", where, "write repeated nodes and members with for loops, which keeps "
                        "a deck of any model size short")
    raise DeckError(f"table '{path.name}' is {_mb(size)}, above the limit of {_mb(cap)} for a table", where,
                    "thin the record to the time step the case uses, or cut it to the part of interest")


def _mb(n: int) -> str:
    return f"{n / 1e6:.3g} MB" if n < 1e12 else f"{n:.3g} bytes"
