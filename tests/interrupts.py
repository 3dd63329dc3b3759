"""For tests whose child processes must see Ctrl-C (SIGINT)."""

import signal


def sigint_as_at_a_terminal() -> None:
    """`preexec_fn` of such a child: SIGINT's default action, which Python turns into
    KeyboardInterrupt. A shell without job control starts a background command (`pytest ... &`)
    with SIGINT ignored, every child inherits that, and Python then leaves it ignored: the
    child would run through a Ctrl-C it was sent."""
    signal.signal(signal.SIGINT, signal.SIG_DFL)
