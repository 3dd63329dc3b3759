"""Deck reading speed: a generated flat deck (one line per node and member) and the same model
written with loops, read by `fem.read_deck`, against a plain `re.finditer` tokenization of the
flat text (the practical floor of any reader) and against the reference reading, lark for every
statement (`fem.deck.fast_lines.lark_only`). With --against DIR the same decks are also read by
the checkout in DIR (e.g. a worktree of an older commit), in a child process of this run. Ratios
measured in one run; the load average is printed beside them because the machines are shared.

    PYTHONPATH=. python benchmarks/deck_reading.py [statements] [--against DIR]   # default 20000
"""

from __future__ import annotations

import argparse
import json
import os
import re
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HEAD = """title "generated frame"
material S { E = 210 GPa, nu = 0.3, density = 7850 kg/m^3 }
section P = pipe(od = 168.3 mm, wall = 7.11 mm)
"""


def flat(n: int) -> str:
    """About n statements: n/2 nodes on a line and the members between them."""
    k = n // 2
    lines = [HEAD]
    lines += [f"node N{i} = ({i * 0.5} m, {(i % 7) * 0.1} m, {(i % 3) * 0.2} m)" for i in range(k)]
    lines += [f"member M{i} : N{i} -> N{i + 1} beam P S" for i in range(k - 1)]
    lines += ["support N0 fixed", "case MODES modes { count = 3 }"]
    return "\n".join(lines) + "\n"


def looped(n: int) -> str:
    k = n // 2
    return HEAD + (f"for i in 0..{k - 1} {{\n  node N[i] = (i*0.5 m, 0.1 m, 0.2 m)\n}}\n"
                   + f"for i in 0..{k - 2} {{\n  member M[i] : N[i] -> N[i+1] beam P S\n}}\n"
                   + "support N0 fixed\ncase MODES modes { count = 3 }\n")


TOKEN = re.compile(r'"[^"\n]*"|[A-Za-z_][A-Za-z0-9_]*|\d+(?:\.\d*)?(?:[eE][-+]?\d+)?|->|\.\.|[^\s]')


def best(f, repeat: int = 3) -> float:
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        f()
        times.append(time.perf_counter() - t)
    return min(times)


# run in a child process with another checkout first on the path: best times of both decks
_CHILD = """
import json, sys, time
import fem
assert fem.__file__.startswith(sys.argv[4]), fem.__file__
fem.read_deck(sys.argv[2])
out = []
for deck in sys.argv[1:3]:
    times = []
    for _ in range(int(sys.argv[3])):
        t = time.perf_counter(); fem.read_deck(deck); times.append(time.perf_counter() - t)
    out.append(min(times))
print(json.dumps(out))
"""


def _other(folder: str, a: Path, b: Path, repeat: int) -> list[float]:
    env = dict(os.environ, PYTHONPATH=str(Path(folder).resolve()))
    # run in that folder: `python -c` puts the working folder first on the path
    done = subprocess.run([sys.executable, "-c", _CHILD, str(a), str(b), str(repeat),
                           str(Path(folder).resolve())], env=env,
                          cwd=Path(folder).resolve(), capture_output=True, text=True, check=True)
    return json.loads(done.stdout.strip().splitlines()[-1])


def main() -> None:
    import fem
    from fem.deck import fast_lines

    ap = argparse.ArgumentParser()
    ap.add_argument("statements", nargs="?", type=int, default=20000)
    ap.add_argument("--against", help="a checkout whose reader is timed on the same decks")
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()
    n, repeat = args.statements, args.repeat
    load = os.getloadavg()
    with tempfile.TemporaryDirectory() as tmp:
        a, b = Path(tmp, "flat.deck"), Path(tmp, "loops.deck")
        a.write_text(flat(n))
        b.write_text(looped(n))
        fem.read_deck(b)                                # imports and the grammar, outside the timing
        text = a.read_text()
        t_re = best(lambda: sum(1 for _ in TOKEN.finditer(text)), repeat)
        t_flat = best(lambda: fem.read_deck(a), repeat)
        t_loop = best(lambda: fem.read_deck(b), repeat)
        with fast_lines.lark_only():
            r_flat = best(lambda: fem.read_deck(a), repeat)
            r_loop = best(lambda: fem.read_deck(b), repeat)
        other = _other(args.against, a, b, repeat) if args.against else None
    load = " ".join(f"{x:.2f}" for x in load) + " -> " + " ".join(f"{x:.2f}" for x in os.getloadavg())
    print(f"deck reading, {n} statements ({len(text) / 1e6:.2f} MB flat), best of {repeat}; "
          f"load average {load}")
    print(f"  re.finditer tokens of the flat text  {t_re:8.3f} s")
    print(f"  flat deck                            {t_flat:8.3f} s   {t_flat / t_re:6.1f}x the tokenizer")
    print(f"  same model in loops                  {t_loop:8.3f} s   {t_loop / t_re:6.1f}x the tokenizer")
    print(f"  flat deck, lark for every statement  {r_flat:8.3f} s   quick reader {r_flat / t_flat:5.1f}x faster")
    print(f"  loops, lark for every statement      {r_loop:8.3f} s   quick reader {r_loop / t_loop:5.1f}x faster")
    if other:
        print(f"  flat deck, reader of {args.against}  {other[0]:8.3f} s   this one {other[0] / t_flat:5.1f}x faster")
        print(f"  loops, reader of {args.against}      {other[1]:8.3f} s   this one {other[1] / t_loop:5.1f}x faster")


if __name__ == "__main__":
    main()
