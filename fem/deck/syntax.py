"""Syntax errors of the deck in a user's words.

The LALR parser reports a terminal it did not expect and the terminals it would have taken;
`syntax_error` turns that into a DeckError located at the token to fix: a misspelled keyword
gets the nearest keywords, the end of the file inside a block names the line where the block
was opened, a bracket that closes nothing says so, and the expected terminals are listed in
plain words (one phrase for all statements, one for all operators).
"""

from __future__ import annotations

import difflib
import re
import threading
from pathlib import Path

from lark import Token
from lark.exceptions import UnexpectedCharacters, UnexpectedInput

from ..errors import DeckError, Location
from . import units as U

__all__ = ["STATEMENTS", "keyword_callbacks", "parse", "syntax_error"]

STATEMENTS = ("title", "let", "assume", "include", "material", "section", "node", "member",
              "support", "spring", "mass", "group", "case", "combo", "for", "settings", "machine", "band",
              "link", "envelope")
# words the grammar reserves besides the statements (`a..b` and `->` are punctuation)
_KEYWORDS = STATEMENTS + ("release", "in", "at", "over")
_OPERATORS = {"PLUS", "MINUS", "STAR", "SLASH", "CIRCUMFLEX"}
_WORDS = {"NAME": "a name", "NUMBER": "a number", "QUANTITY": "a number with a unit",
          "STRING": "a quoted text", "PATTERN": "a name pattern", "LBRACE": "'{'", "RBRACE": "'}'",
          "LPAR": "'('", "RPAR": "')'", "LSQB": "'['", "RSQB": "']'", "EQUAL": "'='", "COMMA": "','",
          "COLON": "':'", "SEMICOLON": "';'", "__ANON_0": "'->'", "__ANON_1": "'..'",
          "$END": "the end of the file", "_AT": "'at' and the node"}
# the words that may follow a harmonic load's value or a vibration limit's (grammar: _load_extra, _limit_extra)
_WORDS.update({f"_{w.upper()}": f"'{w}'" for w in ("times", "lag", "about", "like", "limit", "rms", "over")})
_PAIRS = {"(": ")", "{": "}", "[": "]"}
_CLOSERS = {v: k for k, v in _PAIRS.items()}


def _phrase(items: list[str]) -> str:
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " or " + items[-1]


def expected_words(names) -> str:
    """Terminal names -> "',' or ')'", with all statements and all operators one phrase each."""
    names = set(names)
    stmts = [s for s in STATEMENTS if s.upper() in names]
    words = []
    if len(stmts) >= 4:
        names -= {s.upper() for s in stmts} | {"$END"}
        words.append("a statement (" + ", ".join(stmts[:6]) + (", ..." if len(stmts) > 6 else "") + ")")
    ops = names & _OPERATORS
    names -= _OPERATORS
    for n in sorted(names, key=lambda n: (n not in _WORDS, n)):
        words.insert(0 if n in ("RPAR", "RBRACE", "RSQB", "COMMA") else len(words),
                     _WORDS.get(n, f"'{n.lower()}'"))
    if ops:
        words.append("an operator (" + " ".join(w for n, w in (("PLUS", "+"), ("MINUS", "-"), ("STAR", "*"),
                                                              ("SLASH", "/"), ("CIRCUMFLEX", "^")) if n in ops) + ")")
    return _phrase(words) if words else "something else"


def _found(tok: Token) -> str:
    kind = {"NAME": "name", "NUMBER": "number", "QUANTITY": "value", "STRING": "text",
            "PATTERN": "pattern"}.get(tok.type)
    if kind is None:
        return f"keyword '{tok}'" if str(tok).isalpha() else f"'{tok}'"
    return f"{kind} '{tok}'" if kind != "text" else f"text {tok}"


def _brackets(text: str, upto: int):
    """The brackets open at offset `upto` as [(char, offset)], and a closer that matched nothing
    as (char, offset) or None; comments and quoted texts are skipped."""
    stack, stray, i = [], None, 0
    while i < upto:
        c = text[i]
        if c == "#":
            j = text.find("\n", i)
            i = upto if j < 0 else j
        elif c == '"':
            j = text.find('"', i + 1)
            nl = text.find("\n", i + 1)
            i = j if j >= 0 and (nl < 0 or j < nl) else i
        elif c in _PAIRS:
            stack.append((c, i))
        elif c in _CLOSERS:
            if stack and stack[-1][0] == _CLOSERS[c]:
                stack.pop()
            elif stray is None:
                stray = (c, i)
        i += 1
    return stack, stray


def _unit_slip(text: str, start: int, word: str, where_at) -> DeckError | None:
    """A DeckError if `word` at offset `start` is a unit that does not follow its number
    directly (`100*up kg`) or a word after a number that is not a unit (`5 tonne`), else None."""
    before = text[text.rfind("\n", 0, start) + 1:start]
    if word in U.UNITS:
        after = re.search(r"([A-Za-z_]\w*|\))[ \t]*$", before)
        if after is None:
            return None
        scaled = re.search(r"(?<![\w.])(\d+(?:\.\d*)?(?:[eE][+-]?\d+)?)[ \t]*\*[ \t]*([A-Za-z_]\w*)[ \t]*$", before)
        if scaled:
            fix = f"write {scaled.group(2)}*{scaled.group(1)} {word}"
        elif after.group(1) == ")":
            fix = f"write (...)*1 {word}"
        else:
            fix = f"write {after.group(1)}*1 {word}"
        what = "a bracket" if after.group(1) == ")" else f"the name '{after.group(1)}'"
        return DeckError(f"the unit '{word}' follows {what}; a unit is written directly after a number "
                         f"(100 {word})", where_at(start), f"to scale a quantity by a parameter, {fix}")
    if re.search(r"(?<![\w.])(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?[ \t]*$", before):
        near = U.unit_suggestion(word) or _nearest(word, U.UNITS)
        return DeckError(f"unknown unit '{word}'" + (f"; did you mean '{near}'?" if near else ""), where_at(start),
                         f"the units are {' '.join(U.UNITS)}; if '{word}' is an option, write {word} = value")
    return None


def _nearest(word: str, choices) -> str | None:
    close = difflib.get_close_matches(word, list(choices), n=1, cutoff=0.6)
    return close[0] if close else None


class GluedKeyword(Exception):
    """A keyword lexed from the front of a longer word (`nodeA`, `inn`): the contextual lexer
    matches a keyword wherever only keywords are expected, so `nodeA = (...)` would read as
    `node A = (...)`; keyword_callbacks refuse that."""

    def __init__(self, token: Token):
        self.token = token


_TEXT = threading.local()   # the text being parsed, for the keyword callbacks


def keyword_callbacks() -> dict:
    """lark lexer callbacks that refuse a keyword followed directly by a letter, digit or '_'."""
    def whole_word(tok: Token) -> Token:
        text = getattr(_TEXT, "text", "")
        nxt = text[tok.end_pos:tok.end_pos + 1]
        if nxt and (nxt.isalnum() or nxt == "_"):
            raise GluedKeyword(tok)
        return tok
    return {k.upper(): whole_word for k in _KEYWORDS}


def parse(parser, text: str, path: Path):
    """parser.parse(text), with every failure a DeckError located in `path`."""
    _TEXT.text = text
    try:
        return parser.parse(text)
    except UnexpectedInput as exc:
        raise syntax_error(exc, text, path) from None
    except GluedKeyword as exc:
        tok = exc.token
        word = re.match(r"\w+", text[tok.start_pos:]).group(0)
        kw, rest = str(tok), word[len(str(tok)):]
        lines = text.splitlines()
        where = Location(str(path), tok.line, tok.column, lines[tok.line - 1] if tok.line <= len(lines) else "")
        raise DeckError(f"unknown word '{word}' here", where,
                        f"if '{kw} {rest}' is meant, put a space after '{kw}'") from None
    finally:
        _TEXT.text = ""


def syntax_error(exc: UnexpectedInput, text: str, path: Path) -> DeckError:
    """A DeckError for lark's UnexpectedInput `exc` raised on `text` read from `path`."""
    lines = text.splitlines()

    def where_at(offset: int) -> Location:
        line = text.count("\n", 0, offset) + 1
        col = offset - (text.rfind("\n", 0, offset) + 1) + 1
        return Location(str(path), line, col, lines[line - 1] if line <= len(lines) else "")

    if isinstance(exc, UnexpectedCharacters):
        ch = text[exc.pos_in_stream]
        hint = ""
        if ch in "\u201c\u201d\u2018\u2019":
            hint = 'write texts in plain double quotes "..." (an editor or word processor put in curly ones)'
        elif not ch.isascii() and ch.isalpha():
            hint = "names use the letters A-Z and a-z, digits and '_'"
        elif ch == '"':
            hint = 'a quoted text ends on the line where it starts: close it with "'
        elif ch == "%":
            num = re.search(r"(\d[\d.eE+-]*)[ \t]*$", text[:exc.pos_in_stream])
            return DeckError(f"unexpected character '%': write a percentage with the unit percent, "
                             f"{num.group(1) if num else '2'} percent", where_at(exc.pos_in_stream),
                             "percent is a unit like any other: damping = 2 percent means 0.02")
        return DeckError(f"unexpected character {ch!r}", where_at(exc.pos_in_stream), hint)

    tok = getattr(exc, "token", None)
    try:
        accepts = exc.interactive_parser.accepts()
    except Exception:   # no interactive parser on this kind of error: lark's own list
        accepts = set(getattr(exc, "expected", ()) or ())
    if tok is None or tok.type == "$END":
        stack, _ = _brackets(text, len(text))
        if stack:
            ch, at = stack[-1]
            return DeckError(f"the file ends before the '{ch}' opened here is closed", where_at(at),
                             f"add the closing '{_PAIRS[ch]}' (a block or list ends in the file it starts in)")
        end = len(text.rstrip())
        prev = re.search(r"([A-Za-z_]\w*)\s*$", text)
        if prev and "EQUAL" in accepts and (err := _unit_slip(text, prev.start(1), prev.group(1), where_at)):
            return err
        if prev and accepts == {"EQUAL"}:
            return DeckError(f"'{prev.group(1)}' needs a value: write {prev.group(1)} = ...", where_at(prev.start(1)),
                             "an option is written name = value")
        return DeckError(f"the file ends in the middle of a statement; expected {expected_words(accepts)}",
                         where_at(end), "complete the last statement")
    pos = tok.start_pos
    here = where_at(pos)
    # a word read as an option name (the parser wants its '=') or a name where none fits, right
    # after a value: most often a unit written apart from its number or misspelled
    prev = re.search(r"([A-Za-z_]\w*)\s*$", text[:pos])
    if prev and "EQUAL" in accepts and (err := _unit_slip(text, prev.start(1), prev.group(1), where_at)):
        return err
    if tok.type == "NAME" and str(tok) in U.UNITS and (err := _unit_slip(text, pos, str(tok), where_at)):
        return err
    if tok.type == "NAME" and re.search(r"\d[ \t]*$", text[:pos]):
        near = U.unit_suggestion(str(tok)) or _nearest(str(tok), U.UNITS)
        number = re.search(r"[\d.eE+-]*\d[ \t]*$", text[:pos]).group(0).strip()
        if U.unit_suggestion(str(tok)):
            return DeckError(f"unknown unit '{tok}'; did you mean '{near}'?", here,
                             f"write {number} {near}; the units are {' '.join(U.UNITS)}")
        return DeckError(f"unknown unit '{tok}'" + (f"; did you mean '{near}'?" if near else ""), here,
                         f"the units are {' '.join(U.UNITS)}; to multiply by a parameter or a case, "
                         f"write {number}*{tok}")
    if str(tok) in _CLOSERS:
        stack, stray = _brackets(text, pos + 1)
        if stray is not None and stray[1] == pos:
            if any(c == _CLOSERS[str(tok)] for c, _ in stack):
                ch, at = stack[-1]
                opened = where_at(at)
                return DeckError(f"this '{tok}' does not close the '{ch}' opened at line {opened.line}, column "
                                 f"{opened.column}", here, f"close that one with '{_PAIRS[ch]}' first")
            if stack:
                ch, at = stack[-1]
                opened = where_at(at)
                return DeckError(f"this '{tok}' closes nothing: the bracket open here is the '{ch}' of line "
                                 f"{opened.line}, column {opened.column}", here, f"close it with '{_PAIRS[ch]}'")
            return DeckError(f"this '{tok}' closes nothing: no '{_CLOSERS[str(tok)]}' is open", here,
                             "remove it, or add the opening bracket where it belongs")
    if tok.type.lower() in STATEMENTS:
        stack, _ = _brackets(text, pos)
        if stack:
            ch, at = stack[-1]
            return DeckError(f"the '{ch}' opened here is not closed before the '{tok}' statement on line "
                             f"{here.line}", where_at(at), f"add the closing '{_PAIRS[ch]}'")
    # a vector given to a let: the grammar reads up to the comma
    if str(tok) == "," and re.match(r"\s*let\b", text[text.rfind("\n", 0, pos) + 1:pos]):
        return DeckError("a let parameter holds one value, not a vector", here,
                         "give each component its own let (let vz = 1) and write the vector where it is used: "
                         "up = (0, 0, vz)")
    # a catalogue section's designation without its quotes, or a designation without the word
    line_start = text.rfind("\n", 0, pos) + 1
    if re.match(r"[ \t]*section\b", text[line_start:pos]):
        rest = text[pos:text.find("\n", pos) if "\n" in text[pos:] else len(text)].split("#")[0].strip()
        if accepts >= {"LPAR", "STRING"} and tok.type != "STRING" and re.search(r"\bcatalogue\s*$", text[:pos]):
            return DeckError(f"unexpected {_found(tok)}: a section's designation is written in double quotes",
                             here, f'write "{rest}"')
        if tok.type == "STRING" and accepts == {"NAME"}:
            return DeckError(f"unexpected {_found(tok)}: a designation follows the word 'catalogue'", here,
                             f"write catalogue {rest}")
    # a statement keyword misspelled at the start of a statement
    stmts = {s for s in STATEMENTS if s.upper() in accepts}
    if tok.type == "NAME" and stmts:
        near = _nearest(str(tok), STATEMENTS)
        return DeckError(f"unknown statement '{tok}'" + (f"; did you mean '{near}'?" if near else ""), here,
                         "a statement starts with one of: " + ", ".join(STATEMENTS))
    # a misspelled keyword read as an option name (after a member, `suport A fixed` reads as
    # the option `suport` of that member until the '=' is missing)
    prev = re.search(r"([A-Za-z_]\w*)\s*$", text[:pos])
    if prev and "EQUAL" in accepts and prev.group(1) not in _KEYWORDS:
        near = _nearest(prev.group(1), _KEYWORDS)
        starts_line = not text[text.rfind("\n", 0, prev.start(1)) + 1:prev.start(1)].strip()
        if near in STATEMENTS and starts_line:
            return DeckError(f"unknown statement '{prev.group(1)}'; did you mean '{near}'?", where_at(prev.start(1)),
                             "a statement starts with one of: " + ", ".join(STATEMENTS))
        if near:
            return DeckError(f"unknown word '{prev.group(1)}' here; did you mean '{near}'?", where_at(prev.start(1)),
                             "an option is written name = value")
        if accepts <= {"EQUAL"}:
            return DeckError(f"'{prev.group(1)}' needs a value: write {prev.group(1)} = ...", where_at(prev.start(1)),
                             "an option is written name = value")
    # a misspelled keyword where the grammar wants one (assume length inn mm)
    if tok.type == "NAME":
        wanted = [n.lower() for n in accepts if n.lower() in _KEYWORDS]
        near = _nearest(str(tok), wanted)
        if near:
            return DeckError(f"unexpected name '{tok}'; did you mean '{near}'?", here)
    return DeckError(f"unexpected {_found(tok)}; expected {expected_words(accepts)}", here)
