"""A results folder that loses nothing.

A run writes its results into a staged folder beside the target (``.quaver-<pid>-new-*``), lists
every file and folder it wrote in the manifest ``quaver-files.json``, and then swaps it in:

1. the previous results folder is moved aside (``.quaver-<pid>-old-*``);
2. the staged folder is moved to the target (from here on the new results are in place);
3. items in the previous folder that its manifest does not list (a user's notes, drawings)
   are moved into the new folder, at the same relative place;
4. what is left aside (only files Quaver wrote) is removed.

Each move is one rename and runs with Ctrl-C held back until it and the sentence describing
the new state are done, so `where()` always says truthfully where the previous and the new
results are; an interrupt before step 2 moves the previous folder back, an interrupt after it
finishes step 3. A run killed outright (SIGKILL, power cut) is tidied by the next run into the
same parent folder (`tidy_after_kill`): the previous folder is moved back when the kill came
before step 2, a user's items are moved into the new folder after it, and temporary folders
are removed once neither the dead run nor any process it started (marked by `RUN_ENV` in its
environment) is alive.

The steps call `_step(name)` between them; tests replace it to inject an interrupt at each.
"""

from __future__ import annotations

import json
import os
import re
import shutil
import signal
import tempfile
import threading
from contextlib import contextmanager
from pathlib import Path

from ..errors import ResultsError

__all__ = ["MANIFEST", "RUN_ENV", "check_target", "foreign_items", "resolve_target", "stage", "swap",
           "tidy_after_kill", "where", "write_manifest", "writable_parent"]

MANIFEST = "quaver-files.json"
SCHEMA = "quaver-files/1"
RUN_ENV = "QUAVER_RUN_PID"      # set in every process a run starts: a worker outliving its run is found by it

# names a results folder held before manifests were written (results.json, schema quaver-results/1)
_EARLIER_NAMES = re.compile(r"(results\.json|report\.html|displacements\.csv|reactions\.csv|member_forces\.csv"
                            r"|modes\.csv|mode_shapes\.csv|(free|history|frf|frf_reactions|frf_member_forces|stresses)_.*\.csv"
                            r"|modes|response|plots|pictures)")

_where = ["nothing was written"]
_mine: set[Path] = set()        # folders this process is using now; any other of its pid is stale


def where() -> str:
    """Where the previous and the new results are at this moment, as a sentence."""
    return _where[0]


def _say(text: str) -> None:
    _where[0] = text


def _step(name: str) -> None:
    """A point between two steps of staging or swapping; tests replace it to inject an interrupt."""


@contextmanager
def _held_interrupt():
    """Hold Ctrl-C back until the block is done (then it is raised), so that a step and the
    `_say` describing its outcome happen together."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    got = []
    old = signal.signal(signal.SIGINT, lambda sig, frame: got.append(sig))
    try:
        yield
    finally:
        signal.signal(signal.SIGINT, old)
        if got and callable(old):
            old(signal.SIGINT, None)
        elif got and old == signal.SIG_DFL:
            raise KeyboardInterrupt


def _what(target: Path, shown: str) -> str:
    """The folder as the user wrote it, and where that is when it differs."""
    return shown if str(target) == shown else f"{shown} ({target})"


def resolve_target(out: str | None, deck: str) -> tuple[Path, str]:
    """The results folder as an absolute path, links resolved (a link to a folder keeps pointing
    at the new results), and as the user wrote it. A leading ``~`` is the home folder."""
    if out is not None and not out.strip():
        raise ResultsError("--out is empty; give the results folder, or leave --out out for "
                           f"results/{Path(deck).stem}")
    shown = (out.rstrip("/") or "/") if out else str(Path("results") / Path(deck).stem)
    return Path(os.path.expanduser(shown)).resolve(), shown


def check_target(target: Path, shown: str, deck: Path | None) -> list[str]:
    """Refuse a results folder that cannot safely hold results (or that holds the `deck`, when
    the results come from one); return the items in it that Quaver did not write (they will be
    kept)."""
    what = _what(target, shown)
    if target.parent == target:
        raise ResultsError(f"the results folder {what} is the root of the file system; choose a folder of its "
                           "own with --out")
    try:
        cwd = Path.cwd().resolve()
    except OSError:
        cwd = None                                   # the current folder was removed
    if cwd is not None and (target == cwd or target in cwd.parents):
        here = "is the current folder" if target == cwd else "holds the current folder"
        raise ResultsError(f"the results folder {what} {here}: a run replaces its results folder by moving it, "
                           "which would leave this shell in a folder that no longer exists; choose a folder "
                           "below it, e.g. --out results")
    d = None if deck is None else deck.resolve()
    if d is not None and (target == d.parent or target in d.parents):
        raise ResultsError(f"the results folder {what} contains the deck; choose another --out")
    if not target.exists():
        return []
    if not target.is_dir():
        raise ResultsError(f"{what} exists and is not a folder; choose another --out")
    if not os.access(target, os.W_OK | os.X_OK):
        raise ResultsError(f"the results folder {what} is read-only, so Quaver cannot write there; "
                           "choose another --out")
    if _manifest(target) is None:
        entries = sorted(p.name for p in target.iterdir())
        if entries:
            shown_entries = ", ".join(entries[:3]) + (", ..." if len(entries) > 3 else "")
            raise ResultsError(f"{what} holds files that are not Quaver results ({shown_entries}); it is left "
                               "alone - choose an empty or new folder with --out")
        return []
    return foreign_items(target)


def writable_parent(target: Path, shown: str) -> None:
    """Make sure results can be staged beside `target`; a clear ResultsError otherwise."""
    parent = target.parent
    head = f"cannot write the results folder {shown}: "
    tail = "; choose another --out"
    blocker = next((a for a in (parent, *parent.parents) if a.exists() and not a.is_dir()), None)
    if blocker is not None:
        raise ResultsError(head + f"{blocker} is a file, not a folder" + tail)
    try:
        parent.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise ResultsError(head + f"its parent folder {parent} could not be created "
                           f"({exc.strerror or exc})" + tail) from None
    try:
        os.rmdir(tempfile.mkdtemp(prefix=f".quaver-{os.getpid()}-", dir=parent))
    except OSError as exc:
        raise ResultsError(head + f"its parent folder {parent} does not take new files "
                           f"({exc.strerror or exc})" + tail) from None


def begin(target: Path | None = None, shown: str = "") -> None:
    """Start the account of a command (of a run into `target`): nothing written yet."""
    if target is None:
        _say("nothing was written")
    else:
        _say(f"no results were written; the earlier results in {shown} are as they were" if target.exists()
             else "no results were written")


def stage(target: Path) -> Path:
    """A new empty folder beside `target` for the results of this run, readable as a folder
    made with mkdir would be. Processes started from here on carry `RUN_ENV`."""
    os.environ[RUN_ENV] = str(os.getpid())
    tmp = Path(tempfile.mkdtemp(prefix=f".quaver-{os.getpid()}-new-", dir=target.parent))
    _mine.add(tmp)
    mask = os.umask(0)
    os.umask(mask)
    tmp.chmod(0o777 & ~mask)
    return tmp


def _listing(folder: Path) -> tuple[list[str], list[str]]:
    files, folders = [], []
    for root, dirs, names in os.walk(folder):
        rel = Path(root).relative_to(folder)
        folders += [(rel / d).as_posix() for d in dirs]
        files += [(rel / n).as_posix() for n in names]
    return sorted(f for f in files if f != MANIFEST), sorted(folders)


def write_manifest(staged: Path, name: str) -> None:
    """List every file and folder in `staged` (all written by this run) in its manifest."""
    files, folders = _listing(staged)
    (staged / MANIFEST).write_text(json.dumps({"schema": SCHEMA, "folder": name, "files": files,
                                               "folders": folders}, indent=1) + "\n")


def _manifest(folder: Path) -> dict | None:
    """The manifest of a results folder; for one written before manifests existed, its entries
    of the names Quaver wrote then; None when the folder is not a Quaver results folder."""
    try:
        doc = json.loads((folder / MANIFEST).read_text())
        if isinstance(doc, dict) and doc.get("schema") == SCHEMA:
            return {"files": set(doc.get("files", ())), "folders": set(doc.get("folders", ())),
                    "folder": doc.get("folder")}
    except (OSError, ValueError):
        pass
    try:
        earlier = '"schema": "quaver-results/' in (folder / "results.json").read_text(errors="ignore")[:200]
    except OSError:
        return None
    if not earlier:
        return None
    top = [p for p in folder.iterdir() if _EARLIER_NAMES.fullmatch(p.name) and not p.is_symlink()]
    files = {p.name for p in top if p.is_file()}
    folders = {p.name for p in top if p.is_dir()}
    for d in list(folders):
        f, sub = _listing(folder / d)
        files |= {f"{d}/{x}" for x in f}
        folders |= {f"{d}/{x}" for x in sub}
    return {"files": files, "folders": folders, "folder": folder.name}


def foreign_items(folder: Path, manifest: dict | None = None) -> list[str]:
    """Items (relative paths) in a results folder that its manifest does not list: a folder not
    listed counts as one item, with all it holds."""
    m = manifest if manifest is not None else _manifest(folder)
    if m is None:
        return []
    out = []

    def walk(d: Path, rel: str) -> None:
        for e in sorted(os.scandir(d), key=lambda e: e.name):
            r = f"{rel}{e.name}"
            if r == MANIFEST:
                continue
            if e.is_dir(follow_symlinks=False) and r in m["folders"]:
                walk(Path(e.path), r + "/")
            elif not (e.is_file(follow_symlinks=False) and r in m["files"]):
                out.append(r)

    walk(folder, "")
    return out


def _shown_items(items: list[str], folder: Path) -> str:
    named = [i + ("/" if (folder / i).is_dir() and not (folder / i).is_symlink() else "") for i in items]
    return ", ".join(named[:5]) + (f" and {len(named) - 5} more" if len(named) > 5 else "")


def _move_items(src: Path, dst: Path, items: list[str]) -> list[str]:
    """Move `items` from folder src to the same places in dst; return those that could not be."""
    left = []
    for rel in items:
        a, b = src / rel, dst / rel
        try:
            if os.path.lexists(b):
                raise FileExistsError(rel)
            b.parent.mkdir(parents=True, exist_ok=True)
            with _held_interrupt():
                os.replace(a, b)
        except OSError:
            left.append(rel)
    return left


def _discard(aside: Path) -> None:
    """Remove a folder of previous results, its manifest last (until then it says what is ours)."""
    for p in sorted(aside.iterdir(), key=lambda p: p.name == MANIFEST):
        if p.is_dir() and not p.is_symlink():
            shutil.rmtree(p)
        else:
            p.unlink()
    aside.rmdir()


def _clash(staged: Path, rel: str) -> bool:
    """Whether the staged results use the place of a user's item `rel` (or a folder on its way)."""
    parts = Path(rel).parts
    for i in range(1, len(parts)):
        p = staged.joinpath(*parts[:i])
        if os.path.lexists(p) and (p.is_symlink() or not p.is_dir()):
            return True
    return os.path.lexists(staged / rel)


def swap(staged: Path, target: Path, shown: str) -> list[str]:
    """Move the staged results (manifest written) into `target`, keeping every item of the
    previous folder that Quaver did not write; return notes for the summary.

    A user's item whose place the new results also use is refused before anything moves; after
    the new results are in place nothing is raised but an interrupt (`where` says the state)."""
    if not target.exists():
        _step("before-move")
        with _held_interrupt():
            os.replace(staged, target)
            _say(f"the new results are in {shown}")
            _mine.discard(staged)
        return []
    previous = _manifest(target)
    if previous is None and any(target.iterdir()):
        # it was empty when checked; something arrived while the results were written
        raise ResultsError(f"{shown} now holds files that are not Quaver results; it is left alone - choose "
                           "an empty or new folder with --out")
    if previous is not None and not (target / MANIFEST).exists():
        # results written before manifests existed: record what was ours, so that after a kill
        # below our files are still told from the user's
        (target / MANIFEST).write_text(json.dumps({"schema": SCHEMA, "folder": target.name,
                                                   "files": sorted(previous["files"]),
                                                   "folders": sorted(previous["folders"])}) + "\n")
    kept = foreign_items(target, previous)
    for rel in kept:
        if _clash(staged, rel):
            raise ResultsError(f"{shown}/{rel} was not written by Quaver, and this run writes results in its "
                               "place; move or rename it, or choose another --out")
    aside = Path(tempfile.mkdtemp(prefix=f".quaver-{os.getpid()}-old-", dir=target.parent))
    _mine.add(aside)
    notes = [f"kept {len(kept)} item{'s' if len(kept) > 1 else ''} that Quaver did not write: "
             f"{_shown_items(kept, target)}"] if kept else []
    try:
        _step("before-move")
        with _held_interrupt():
            os.replace(target, aside)
            _say(f"no results were written; the earlier results are in {aside}, not in {shown}: "
                 f"move that folder back to {shown}")
        _step("moved-aside")
        with _held_interrupt():
            os.replace(staged, target)
            _say(_after(shown, aside, kept))
        _step("moved-in")
        left = _move_items(aside, target, kept)
        _say(_after(shown, aside, left))
        _step("kept-moved")
        if left:
            notes = [f"could not move {_shown_items(left, aside)} (not written by Quaver) from the earlier "
                     f"results into {shown}: they are in {aside}; move them yourself"]
            return notes
        _say(f"the new results are in {shown}; the earlier results were being removed from {aside}, "
             "which the next run finishes")
        try:
            _discard(aside)
        except OSError as exc:
            notes.append(f"the earlier results could not all be removed from {aside} ({exc.strerror or exc}); "
                         "the next run tries again")
        _say(f"the new results are in {shown}")
        _step("cleaned")
    except BaseException:
        with _held_interrupt():
            _recover(staged, target, aside, shown, kept)
        raise
    finally:
        if not staged.exists():
            _mine.discard(staged)
        _mine.discard(aside)
    return notes


def _after(shown: str, aside: Path, left: list[str]) -> str:
    """Where things are once the new results are in place and `left` items are still aside."""
    return (f"the new results are in {shown}"
            + (f"; the items Quaver did not write ({_shown_items(left, aside)}) are in {aside}" if left else "")
            + f"; the earlier results are in {aside}, which the next run removes")


def _recover(staged: Path, target: Path, aside: Path, shown: str, kept: list[str]) -> None:
    """After an interrupt or error inside `swap`: before the new results were moved in, move
    the previous ones back; after, bring the user's items over. Say where everything is."""
    if staged.exists():                              # the new results never reached the target
        if not target.exists():
            try:
                os.replace(aside, target)
            except OSError:
                return                               # _say already names the aside folder
        else:
            shutil.rmtree(aside, ignore_errors=True)     # still the empty placeholder
        _say(f"no results were written; the earlier results in {shown} are as they were")
        return
    if aside.exists():
        left = _move_items(aside, target, [k for k in kept if os.path.lexists(aside / k)])
        _say(_after(shown, aside, left))


def _run_alive(pid: int) -> bool:
    """Whether run `pid`, or any process it started, is still alive (then its folders are in use)."""
    try:
        os.kill(pid, 0)
        return True
    except ProcessLookupError:
        pass
    except OSError:
        return True                                  # alive under another user
    proc = Path("/proc")
    if not proc.is_dir():
        return False
    mark = f"{RUN_ENV}={pid}".encode()
    for d in proc.iterdir():
        if not d.name.isdigit():
            continue
        try:
            env = (d / "environ").read_bytes()
        except OSError:
            continue                                 # gone, or another user's: not a worker of ours
        if mark in env.split(b"\0"):
            return True
    return False


def tidy_after_kill(target: Path, shown: str) -> list[str]:
    """Undo what a killed run (SIGKILL, power cut) left beside `target`; return notes for the
    summary. Folders of a run that is alive, or whose workers are, are left alone."""
    notes = []
    for p in sorted(target.parent.glob(".quaver-*-*")):
        # only names of our making: pid, role, and the 8-character suffix of tempfile.mkdtemp
        m = re.fullmatch(r"\.quaver-(\d+)-(new-|old-)?[a-z0-9_]{8}", p.name)
        if not m or p in _mine or not p.is_dir() or p.is_symlink():
            continue
        if int(m[1]) != os.getpid() and _run_alive(int(m[1])):
            continue
        try:
            note = _tidy_one(p, m[2] == "old-", target, shown)
        except OSError as exc:
            note = f"could not tidy {p}, left by a run that was killed ({exc.strerror or exc}); remove it yourself"
        if note:
            notes.append(note)
    return notes


def _tidy_one(p: Path, aside: bool, target: Path, shown: str) -> str:
    """Tidy one folder of a dead run; a note for the summary, or ''."""
    man = _manifest(p) if aside else None
    if man is None:
        shutil.rmtree(p)                                 # a staged or placeholder folder
        return ""
    if man["folder"] != target.name:
        return ""                                        # the previous results of another folder here
    if not target.exists():
        os.replace(p, target)
        return f"the previous results, moved aside by a run that was killed, are back in {shown}"
    left = _move_items(p, target, foreign_items(p, man))
    if left:
        return (f"a killed run left {_shown_items(left, p)} (not written by Quaver) in {p} and they could "
                f"not be moved into {shown}; move them yourself")
    _discard(p)
    return ""
