"""Results folders: every --out form answered, a user's files kept, true messages at every
step of the swap, killed runs tidied without touching folders still in use, exit statuses."""

import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from interrupts import sigint_as_at_a_terminal
from shared_decks import TINY_CANTILEVER

import fem.output.folder as folder
import fem.output.report as report
import fem.output.summary as summary
import fem.solver
from fem.cli import INTERNAL_ERROR, main

ROOT = Path(__file__).parents[1]

# a one-member cantilever: fast enough for many runs, with a static and a modes case
TINY = TINY_CANTILEVER


@pytest.fixture
def deck(tmp_path):
    d = tmp_path / "decks" / "tiny.deck"
    d.parent.mkdir()
    d.write_text(TINY)
    return d


def _quaver(*args, cwd=ROOT, env=None):
    e = dict(os.environ, PYTHONPATH=str(ROOT), **(env or {}))
    return subprocess.run([sys.executable, "-m", "fem", *map(str, args)], capture_output=True, text=True,
                          timeout=300, cwd=cwd, env=e)


def _run(deck, out, *extra):
    return main(["run", str(deck), "--out", str(out), "--no-render", *extra])


def _state(folder_path: Path) -> dict:
    """Every file under a folder with its bytes (the manifest aside), to compare states."""
    return {p.relative_to(folder_path).as_posix(): p.read_bytes() for p in sorted(folder_path.rglob("*"))
            if p.is_file() and p.name != folder.MANIFEST}


def _leftovers(parent: Path) -> list[str]:
    return sorted(p.name for p in parent.iterdir() if p.name.startswith(".quaver-"))


def _dead_pid() -> int:
    p = subprocess.Popen([sys.executable, "-c", "pass"])
    p.wait()
    return p.pid


def _one_line_error(r, status=2):
    """A refusal: the status, one line on stderr ending in a newline, no traceback, nothing solved."""
    assert r.returncode == status, r.stderr
    assert r.stderr.endswith("\n") and not r.stderr.endswith("\n\n")
    assert "Traceback" not in r.stderr and len(r.stderr.splitlines()) == 1, r.stderr
    assert r.stdout == ""
    return r.stderr


# ---------------------------------------------------------------- every --out form

def test_out_forms_that_are_refused(tmp_path, deck):
    # one subprocess per form, as a user types it; each is refused before solving, with a reason
    work = tmp_path / "work"
    (work / "inner").mkdir(parents=True)
    home = tmp_path / "home"
    home.mkdir()
    (home / "letter.txt").write_text("mine")
    plain = work / "plain.txt"
    plain.write_text("not a folder")
    cases = [
        (".", work, "the results folder . (%s) is the current folder" % work),
        ("..", work / "inner", "the results folder .. (%s) holds the current folder" % work),
        ("/", work, "the results folder / is the root of the file system"),
        ("~", work, "~ (%s) holds files that are not Quaver results (letter.txt)" % home),
        (str(deck.parent), work, f"the results folder {deck.parent} contains the deck"),
        ("plain.txt", work, "plain.txt (%s) exists and is not a folder" % plain),
        ("", work, "--out is empty"),
    ]
    # the deck grammar's cache (the user's cache folder) is kept out of this home: it stands for a folder of files
    env = {"HOME": str(home), "XDG_CACHE_HOME": str(tmp_path / "cache")}
    for out, cwd, why in cases:
        err = _one_line_error(_quaver("run", deck, "--out", out, "--no-render", cwd=cwd, env=env))
        assert err.startswith("error: " + why), (out, err)
    assert plain.read_text() == "not a folder" and (home / "letter.txt").read_text() == "mine"
    assert sorted(p.name for p in deck.parent.iterdir()) == ["tiny.deck"]
    assert not _leftovers(work) and not _leftovers(tmp_path)


def test_out_forms_that_write(tmp_path, deck):
    # a leading ~ is the home folder; a path through a link to a folder is followed as the
    # system follows it (link/.. is the parent of the link's target); an --out that is itself a
    # link to a results folder keeps pointing at the new results
    work, home, real = tmp_path / "work", tmp_path / "home", tmp_path / "elsewhere" / "real"
    for d in (work, home, real):
        d.mkdir(parents=True)
    (work / "link").symlink_to(real)
    for out, where in [("~/res", home / "res"), ("link/res", real / "res"), ("link/../beside", real.parent / "beside")]:
        r = _quaver("run", deck, "--out", out, "--no-render", cwd=work, env={"HOME": str(home)})
        assert r.returncode == 0, r.stderr
        assert r.stdout.splitlines()[-2] == f"results in {out}/"
        assert json.loads((where / "results.json").read_text())["model"]["nodes"] == 2
        assert (where / folder.MANIFEST).exists()
    assert not (work / "~").exists() and not (work / "link" / ".." / "res").exists()
    (work / "to_res").symlink_to(real / "res")
    before = (real / "res" / "results.json").stat().st_mtime_ns
    assert _run(deck, work / "to_res") == 0
    assert (work / "to_res").is_symlink() and (real / "res" / "results.json").stat().st_mtime_ns != before
    assert not _leftovers(real)


def test_read_only_results_folder_is_refused(tmp_path, deck):
    # chmod cannot stop root from writing: as root the folder is made read-only by a read-only
    # bind mount of itself in a private mount namespace (util-linux unshare); without that the
    # test is skipped
    import shutil

    out = tmp_path / "res"
    assert _run(deck, out) == 0
    before = _state(out)
    cmd = [sys.executable, "-m", "fem", "run", str(deck), "--out", str(out), "--no-render"]
    if os.geteuid() == 0:
        if not shutil.which("unshare") or subprocess.run(["unshare", "--mount", "true"]).returncode:
            pytest.skip("running as root without mount namespaces: no way to make a folder read-only")
        cmd = ["unshare", "--mount", "sh", "-c", 'mount --bind "$0" "$0" && mount -o remount,bind,ro "$0" '
               '&& exec "$@"', str(out), *cmd]
    else:
        out.chmod(0o555)
    try:
        r = subprocess.run(cmd, capture_output=True, text=True, timeout=300, cwd=ROOT,
                           env=dict(os.environ, PYTHONPATH=str(ROOT)))
    finally:
        out.chmod(0o755)
    err = _one_line_error(r)
    assert err.startswith(f"error: the results folder {out} is read-only"), err
    assert _state(out) == before and not _leftovers(tmp_path)


def test_error_output_ends_with_a_newline(tmp_path):
    # an unknown section with its caret and hint lines: the last line ends in a newline
    d = tmp_path / "bad.deck"
    d.write_text("section P = pipe(od = 100 mm, wall = 5 mm)\nnode A = (0, 0, 0)\nnode B = (1 m, 0, 0)\n"
                 "member M : A -> B beam Q S\n")
    r = _quaver("check", d)
    assert r.returncode == 2 and "Traceback" not in r.stderr
    assert r.stderr.endswith("\n") and not r.stderr.endswith("\n\n")


# ---------------------------------------------------------------- a user's files are kept

def test_files_a_user_put_in_a_results_folder_are_kept(tmp_path, deck, capsys):
    out = tmp_path / "proj"
    assert _run(deck, out) == 0
    (out / "notes.txt").write_text("notes")
    (out / "drawings").mkdir()
    (out / "drawings" / "a.dxf").write_text("drawing")
    (out / "plots" / "marked.png").write_bytes(b"mine")      # inside a folder Quaver writes
    capsys.readouterr()
    assert _run(deck, out) == 0
    text = capsys.readouterr().out
    assert "kept 3 items that Quaver did not write: drawings/, notes.txt, plots/marked.png" in text
    assert (out / "notes.txt").read_text() == "notes"
    assert (out / "drawings" / "a.dxf").read_text() == "drawing"
    assert (out / "plots" / "marked.png").read_bytes() == b"mine"
    listed = json.loads((out / folder.MANIFEST).read_text())
    assert "notes.txt" not in listed["files"] and "results.json" in listed["files"]
    assert "plots/marked.png" not in listed["files"] and "plots" in listed["folders"]
    assert folder.foreign_items(out) == ["drawings", "notes.txt", "plots/marked.png"]
    assert not _leftovers(tmp_path)


def test_a_file_that_only_quaver_wrote_is_replaced(tmp_path, deck):
    # a result file of the previous run that this run does not write is removed
    out = tmp_path / "proj"
    assert _run(deck, out) == 0
    (out / "history_OLD.csv").write_text("from an earlier deck")
    m = json.loads((out / folder.MANIFEST).read_text())
    m["files"].append("history_OLD.csv")
    (out / folder.MANIFEST).write_text(json.dumps(m))
    assert _run(deck, out) == 0
    assert not (out / "history_OLD.csv").exists()


def test_results_written_before_manifests_keep_the_users_files(tmp_path, deck, capsys):
    out = tmp_path / "proj"
    assert _run(deck, out) == 0
    (out / folder.MANIFEST).unlink()                           # as written before manifests existed
    (out / "notes.txt").write_text("notes")
    assert _run(deck, out) == 0
    assert (out / "notes.txt").read_text() == "notes"
    assert "kept 1 item that Quaver did not write: notes.txt" in capsys.readouterr().out


def test_a_users_file_in_the_place_of_a_result_is_refused(tmp_path, deck, capsys):
    out = tmp_path / "proj"
    assert _run(deck, out) == 0
    m = json.loads((out / folder.MANIFEST).read_text())
    m["files"].remove("reactions.csv")                          # now the user's file, by the manifest
    (out / folder.MANIFEST).write_text(json.dumps(m))
    before = _state(out)
    capsys.readouterr()
    assert _run(deck, out) == 2
    err = capsys.readouterr().err
    assert f"{out}/reactions.csv was not written by Quaver, and this run writes results in its place" in err
    assert _state(out) == before and not _leftovers(tmp_path)


def test_a_folder_that_is_not_a_result_is_left_alone(tmp_path, deck, capsys):
    out = tmp_path / "mine"
    out.mkdir()
    (out / "notes.txt").write_text("keep me")
    assert _run(deck, out) == 2
    assert "holds files that are not Quaver results (notes.txt)" in capsys.readouterr().err
    assert _state(out) == {"notes.txt": b"keep me"}


# ---------------------------------------------------------------- interrupts at every step

def _interrupt_at(monkeypatch, name, exc=KeyboardInterrupt):
    def step(at):
        if at == name:
            raise exc
    monkeypatch.setattr(folder, "_step", step)


@pytest.mark.parametrize("step, new_in_place", [("before-move", False), ("moved-aside", False),
                                                ("moved-in", True), ("kept-moved", True), ("cleaned", True)],
                         ids=["before-move", "moved-aside", "moved-in", "kept-moved", "cleaned"])
def test_interrupt_at_each_step_of_the_swap(tmp_path, deck, capsys, monkeypatch, step, new_in_place):
    out = tmp_path / "proj"
    assert _run(deck, out) == 0
    (out / "notes.txt").write_text("notes")
    earlier = _state(out)
    deck.write_text(TINY.replace("1 kN", "2 kN"))               # new results differ from the earlier
    _interrupt_at(monkeypatch, step)
    capsys.readouterr()
    assert _run(deck, out) == 130
    err = capsys.readouterr().err
    assert err.endswith("\n") and len(err.splitlines()) == 1, err
    aside = [tmp_path / n for n in _leftovers(tmp_path)]
    # the user's file is in the results folder in every window
    assert (out / "notes.txt").read_text() == "notes"
    if not new_in_place:
        assert err == f"interrupted: no results were written; the earlier results in {out} are as they were\n"
        assert _state(out) == earlier and not aside
        return
    assert _state(out) != earlier and json.loads((out / "results.json").read_text())["cases"][0][
        "max_translation_m"] == pytest.approx(2 * json.loads(earlier["results.json"])["cases"][0]["max_translation_m"])
    if step == "cleaned":
        assert err == f"interrupted: the new results are in {out}\n" and not aside
        return
    # the earlier results are aside, holding only files Quaver wrote; the message names the folder
    assert len(aside) == 1 and aside[0].name.startswith(f".quaver-{os.getpid()}-old-")
    assert err == (f"interrupted: the new results are in {out}; the earlier results are in {aside[0]}, "
                   "which the next run removes\n")
    assert folder.foreign_items(aside[0]) == []
    monkeypatch.setattr(folder, "_step", lambda at: None)
    assert _run(deck, out) == 0 and not _leftovers(tmp_path)
    assert (out / "notes.txt").read_text() == "notes"


def test_interrupt_while_removing_the_earlier_results(tmp_path, deck, capsys, monkeypatch):
    out = tmp_path / "proj"
    assert _run(deck, out) == 0
    (out / "notes.txt").write_text("notes")

    def half(aside):                                  # removes one file, then Ctrl-C
        (aside / "results.json").unlink()
        raise KeyboardInterrupt
    monkeypatch.setattr(folder, "_discard", half)
    assert _run(deck, out) == 130
    aside = [tmp_path / n for n in _leftovers(tmp_path)]
    assert len(aside) == 1 and not (aside[0] / "results.json").exists()
    assert capsys.readouterr().err == (f"interrupted: the new results are in {out}; the earlier results are in "
                                       f"{aside[0]}, which the next run removes\n")
    assert (out / "results.json").exists() and (out / "notes.txt").read_text() == "notes"
    monkeypatch.undo()
    assert _run(deck, out) == 0 and not _leftovers(tmp_path)
    assert (out / "notes.txt").read_text() == "notes"


def test_interrupt_into_a_new_folder(tmp_path, deck, capsys, monkeypatch):
    out = tmp_path / "fresh"
    _interrupt_at(monkeypatch, "before-move")
    assert _run(deck, out) == 130
    assert capsys.readouterr().err == "interrupted: no results were written\n"
    assert not out.exists() and not _leftovers(tmp_path)


def _swallowing_interrupt(at):
    """A folder step that meets Ctrl-C (a real SIGINT to this process) inside library code that
    turns it into an error of its own, as matplotlib's C drawing code does."""
    def step(name):
        if name == at:
            try:
                signal.raise_signal(signal.SIGINT)
            except KeyboardInterrupt:
                raise ValueError("Invalid bounding box") from None
    return step


def test_an_interrupt_a_library_turned_into_an_error_is_reported_as_the_interrupt(tmp_path, deck, capsys,
                                                                                    monkeypatch):
    out = tmp_path / "fresh"
    monkeypatch.setattr(folder, "_step", _swallowing_interrupt("before-move"))
    assert _run(deck, out) == 130
    assert capsys.readouterr().err == "interrupted: no results were written\n"
    assert not out.exists() and not _leftovers(tmp_path)
    # the command's handler is gone with it: Python's own again
    assert signal.getsignal(signal.SIGINT) is signal.default_int_handler


def test_the_same_error_without_an_interrupt_is_an_internal_error(tmp_path, deck, capsys, monkeypatch):
    def step(name):
        if name == "before-move":
            raise ValueError("Invalid bounding box")
    monkeypatch.setattr(folder, "_step", step)
    assert _run(deck, tmp_path / "fresh") == 70
    assert capsys.readouterr().err.startswith("internal error (ValueError: Invalid bounding box)")


def test_interrupt_while_writing_and_while_printing_the_summary(tmp_path, deck, capsys, monkeypatch):
    out = tmp_path / "proj"
    assert _run(deck, out) == 0
    earlier = _state(out)

    def boom(*a, **k):
        raise KeyboardInterrupt
    with monkeypatch.context() as m:
        m.setattr(report, "report", boom)
        capsys.readouterr()
        assert _run(deck, out) == 130
    assert capsys.readouterr().err == (f"interrupted: no results were written; the earlier results in {out} "
                                       "are as they were\n")
    assert _state(out) == earlier and not _leftovers(tmp_path)

    def cut(*a, **k):                                           # Ctrl-C as the summary is printed
        if a and str(a[0]).startswith("results in"):
            raise KeyboardInterrupt
    deck.write_text(TINY.replace("1 kN", "3 kN"))
    monkeypatch.setattr(summary, "print", cut, raising=False)
    assert _run(deck, out) == 130
    assert capsys.readouterr().err == f"interrupted: the new results are in {out}\n"
    assert _state(out) != earlier and not _leftovers(tmp_path)


@pytest.mark.parametrize("moving", ["earlier", "new"])
def test_a_real_ctrl_c_right_after_a_move(tmp_path, deck, moving):
    # SIGINT arriving just after a move (the earlier results aside, or the new ones in): the
    # interrupt acts once the move and its account are done; before the new results are in,
    # the earlier ones are moved back; after, the user's file is brought over
    out = tmp_path / "proj"
    assert _run(deck, out) == 0
    (out / "notes.txt").write_text("notes")
    earlier = _state(out)
    deck.write_text(TINY.replace("1 kN", "2 kN"))
    end = "a" if moving == "earlier" else "b"       # the results folder is the move's source or its end
    code = f"""
import os, signal, sys
import fem.output.folder as f
real = os.replace
def replace(a, b):
    done = real(a, b)
    if str({end}) == {str(out)!r}:
        os.kill(os.getpid(), signal.SIGINT)
    return done
f.os.replace = replace
from fem.cli import main
sys.exit(main(["run", {str(deck)!r}, "--out", {str(out)!r}, "--no-render"]))
"""
    r = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=300, cwd=ROOT,
                       env=dict(os.environ, PYTHONPATH=str(ROOT)), preexec_fn=sigint_as_at_a_terminal)
    assert r.returncode == 130, r.stderr
    assert (out / "notes.txt").read_text() == "notes"
    if moving == "earlier":
        assert r.stderr == f"interrupted: no results were written; the earlier results in {out} are as they were\n"
        assert _state(out) == earlier and not _leftovers(tmp_path)
        return
    aside = _leftovers(tmp_path)
    assert len(aside) == 1 and _state(out) != earlier
    assert r.stderr == (f"interrupted: the new results are in {out}; the earlier results are in "
                        f"{tmp_path / aside[0]}, which the next run removes\n")
    assert _run(deck, out) == 0 and not _leftovers(tmp_path)        # tidied: that run is gone


# ---------------------------------------------------------------- runs killed outright

def _aside_of(out: Path, pid: int) -> Path:
    aside = out.parent / f".quaver-{pid}-old-k1k1k1k1"
    out.rename(aside)
    return aside


def test_a_run_killed_between_the_moves_is_undone(tmp_path, deck, capsys):
    # killed after moving the earlier results aside, before moving the new ones in
    out = tmp_path / "proj"
    assert _run(deck, out) == 0
    (out / "notes.txt").write_text("notes")
    earlier = _state(out)
    pid = _dead_pid()
    aside = _aside_of(out, pid)
    (tmp_path / f".quaver-{pid}-new-k2k2k2k2").mkdir()                # its staged results
    (tmp_path / f".quaver-{pid}-new-k2k2k2k2" / "results.json").write_text("{}")
    assert folder.tidy_after_kill(out, "proj") == [
        "the previous results, moved aside by a run that was killed, are back in proj"]
    assert _state(out) == earlier and not aside.exists() and not _leftovers(tmp_path)


def test_tidying_touches_only_folders_of_its_own_naming(tmp_path):
    pid = _dead_pid()
    for name in (f".quaver-{pid}-notes", f".quaver-{pid}-old-my-drawings", f".quaver-{pid}-new-abc"):
        (tmp_path / name).mkdir()
        (tmp_path / name / "mine.txt").write_text("mine")
    (tmp_path / f".quaver-{pid}-new-abcd1234").mkdir()
    folder.tidy_after_kill(tmp_path / "proj", "proj")
    assert _leftovers(tmp_path) == sorted([f".quaver-{pid}-notes", f".quaver-{pid}-old-my-drawings",
                                           f".quaver-{pid}-new-abc"])


def test_a_run_killed_after_moving_the_new_results_in_is_finished(tmp_path, deck):
    # killed after moving the new results in, before the user's items came over
    out = tmp_path / "proj"
    assert _run(deck, out) == 0
    (out / "notes.txt").write_text("notes")
    (out / "plots" / "marked.png").write_bytes(b"mine")
    pid = _dead_pid()
    aside = _aside_of(out, pid)
    assert _run(deck, out) == 0
    assert (out / "notes.txt").read_text() == "notes" and (out / "plots" / "marked.png").read_bytes() == b"mine"
    assert not aside.exists() and not _leftovers(tmp_path)
    assert folder.foreign_items(out) == ["notes.txt", "plots/marked.png"]


def test_folders_of_a_killed_run_still_in_use_are_kept(tmp_path, deck):
    # a worker started by a run carries the run's pid in RUN_ENV; while it lives, the dead run's
    # temporary folder is in use and is not removed
    out = tmp_path / "proj"
    pid = _dead_pid()
    staged = tmp_path / f".quaver-{pid}-new-w1w1w1w1"
    (staged / "pictures").mkdir(parents=True)
    worker = subprocess.Popen([sys.executable, "-c", "import time; time.sleep(60)"],
                              env=dict(os.environ, **{folder.RUN_ENV: str(pid)}))
    try:
        if not Path("/proc").is_dir():
            pytest.skip("no /proc: workers of a dead run cannot be found (they die with their run)")
        # the child's environment shows in /proc only once it has started the new program
        marker = f"{folder.RUN_ENV}={pid}".encode()
        environ = Path(f"/proc/{worker.pid}/environ")
        for _ in range(200):
            if marker in environ.read_bytes():
                break
            time.sleep(0.02)
        folder.tidy_after_kill(out, "proj")
        assert staged.is_dir()
    finally:
        worker.kill()
        worker.wait()
    folder.tidy_after_kill(out, "proj")
    assert not staged.exists()


def test_a_run_marks_the_processes_it_starts(tmp_path):
    staged = folder.stage(tmp_path / "res")
    try:
        r = subprocess.run([sys.executable, "-c", f"import os; print(os.environ[{folder.RUN_ENV!r}])"],
                           capture_output=True, text=True)
        assert r.stdout.strip() == str(os.getpid())
        assert staged.stat().st_mode & 0o777 == 0o777 & ~_umask()
    finally:
        staged.rmdir()


def _umask() -> int:
    m = os.umask(0)
    os.umask(m)
    return m


# ---------------------------------------------------------------- internal errors

def test_an_internal_error_has_its_own_status_and_asks_for_a_report(tmp_path, deck, capsys, monkeypatch):
    def broken(model, cases=None):
        raise ZeroDivisionError("float division by zero")
    monkeypatch.setattr(fem.solver, "solve", broken)
    out = tmp_path / "proj"
    assert _run(deck, out) == INTERNAL_ERROR
    err = capsys.readouterr().err
    assert err.startswith("internal error (ZeroDivisionError: float division by zero): Quaver failed")
    assert "No results were written." in err and "--debug" in err and "QUAVER_DEBUG=1" in err
    assert "report" in err and "Traceback" not in err
    assert err.endswith("\n") and len(err.splitlines()) == 1
    assert not out.exists() and not _leftovers(tmp_path)
    assert _run(deck, out, "--debug") == INTERNAL_ERROR
    err = capsys.readouterr().err
    assert err.startswith("Traceback") and "in broken" in err and err.splitlines()[-1].startswith("internal error")
    monkeypatch.setenv("QUAVER_DEBUG", "1")
    assert main(["check", str(deck)]) == 0                     # the check command is untouched
    assert _run(deck, out) == INTERNAL_ERROR and "Traceback" in capsys.readouterr().err


def test_an_internal_error_after_the_results_are_written_says_where_they_are(tmp_path, deck, capsys, monkeypatch):
    def cut(*a, **k):
        if a and str(a[0]).startswith("results in"):
            raise RuntimeError("summary broke")
    monkeypatch.setattr(summary, "print", cut, raising=False)
    out = tmp_path / "proj"
    assert _run(deck, out) == INTERNAL_ERROR
    assert f"The new results are in {out}." in capsys.readouterr().err
    assert (out / "results.json").exists()


def test_an_internal_error_is_not_a_self_check_failure(tmp_path):
    # a crash in a subprocess: status 70, not 1 (results written, a check failed) nor 2
    code = ("import sys, fem.cli as r\n"
            "def bad(*a, **k):\n    raise IndexError('list index out of range')\n"
            "r.run_deck = bad\nfrom fem.cli import main\nsys.exit(main(['run', 'x.deck']))\n")
    p = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=300, cwd=tmp_path,
                       env=dict(os.environ, PYTHONPATH=str(ROOT)))
    assert p.returncode == INTERNAL_ERROR == 70
    assert p.stderr.startswith("internal error (IndexError: list index out of range)")
    assert "Nothing was written." in p.stderr and "Traceback" not in p.stderr and p.stderr.endswith(".\n")


def test_an_error_after_the_results_are_written_says_so(tmp_path, deck, capsys, monkeypatch):
    from fem.errors import ModelError

    def cut(*a, **k):
        if a and str(a[0]).startswith("results in"):
            raise ModelError("a check after writing refused the model")
    monkeypatch.setattr(summary, "print", cut, raising=False)
    out = tmp_path / "proj"
    assert _run(deck, out) == 2
    assert capsys.readouterr().err == (f"error: a check after writing refused the model\n"
                                       f"note: the new results are in {out}\n")
