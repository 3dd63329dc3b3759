"""A drawing script run in a child process (an offscreen OpenGL context of its own, as the
pictures' processes have), for the tests that look at rendered pixels."""

import json
import subprocess
import sys
from pathlib import Path

import pytest

from fem.output.render import can_render

ROOT = Path(__file__).parents[1]


def drawn(code: str, *args, timeout: float = 300) -> dict:
    """Run the script `code` with `args` in a child process and return the JSON object it prints
    last; the test is skipped where no OpenGL context can be made (`render.can_render`)."""
    ok, why = can_render()
    if not ok:
        pytest.skip(why)
    r = subprocess.run([sys.executable, "-c", code, *map(str, args)], capture_output=True, text=True,
                       timeout=timeout, cwd=ROOT)
    assert r.returncode == 0, r.stderr[-2000:]
    return json.loads(r.stdout.strip().splitlines()[-1])
