"""Deck reading speed: a generated flat deck (one line per node and member) and the same model
written with loops, read by `fem.read_deck`, against a plain `re.finditer` tokenization of the
flat text (the practical floor of any reader). Ratios measured in one run; the load average is
printed beside them because the development machines are shared.

    PYTHONPATH=. python benchmarks/deck_reading.py [statements]     # default 20000
"""

from __future__ import annotations

import os
import re
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


def main() -> None:
    import fem

    n = int(sys.argv[1]) if len(sys.argv) > 1 else 20000
    with tempfile.TemporaryDirectory() as tmp:
        a, b = Path(tmp, "flat.deck"), Path(tmp, "loops.deck")
        a.write_text(flat(n))
        b.write_text(looped(n))
        fem.read_deck(b)                                # imports and the grammar, outside the timing
        text = a.read_text()
        t_re = best(lambda: sum(1 for _ in TOKEN.finditer(text)))
        t_flat = best(lambda: fem.read_deck(a))
        t_loop = best(lambda: fem.read_deck(b))
    print(f"deck reading, {n} statements ({len(text) / 1e6:.2f} MB flat); load average "
          f"{' '.join(f'{x:.2f}' for x in os.getloadavg())}")
    print(f"  re.finditer tokens   {t_re:8.3f} s")
    print(f"  flat deck            {t_flat:8.3f} s   {t_flat / t_re:6.1f}x the tokenizer")
    print(f"  same model in loops  {t_loop:8.3f} s   {t_loop / t_re:6.1f}x the tokenizer")


if __name__ == "__main__":
    main()
