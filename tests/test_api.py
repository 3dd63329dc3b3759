"""The public API: every name `fem.__all__` promises resolves, `import quaver` is the same
package, `import fem` stays light (the CLI's start-up), and the names keep their meaning
whatever is imported first."""

import subprocess
import sys

import pytest

import fem


@pytest.mark.parametrize("name", [n for n in fem.__all__ if n != "__version__"])
def test_every_public_name_resolves_and_is_documented(name):
    obj = getattr(fem, name)
    assert obj.__doc__ and obj.__doc__.strip(), f"fem.{name} has no docstring"


def test_import_quaver_is_fem():
    import quaver

    assert quaver.solve is fem.solve and quaver.read_deck is fem.read_deck
    assert quaver.__version__ == fem.__version__ and quaver.__all__ == fem.__all__
    with pytest.raises(AttributeError):
        quaver.no_such_name


def test_solve_stays_the_function_after_its_module_is_imported():
    # the module is fem.solver, so importing it cannot replace the function fem.solve
    import fem.solver

    assert callable(fem.solve) and fem.solve is fem.solver.solve


def test_import_fem_is_light():
    code = ("import sys, fem; heavy = [m for m in ('numpy', 'scipy', 'lark', 'pyvista', 'matplotlib') "
            "if m in sys.modules]; print(heavy)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    assert out.strip() == "[]"


def test_unknown_attribute_is_refused_in_words():
    with pytest.raises(AttributeError, match="module 'fem' has no attribute 'solv'"):
        fem.solv
