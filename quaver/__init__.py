"""`import quaver` is `import fem`: the distribution is named quaver, the package fem."""

import fem as _fem
from fem import __all__, __version__  # noqa: F401


def __getattr__(name: str):
    return getattr(_fem, name)


def __dir__():
    return dir(_fem)
