"""The package's imports run one way: deck -> model/cases -> elements/assembly -> analysis ->
solve -> output -> cli. Walks every module's import statements (function-level ones too, since
a lazy import is still a dependency) and refuses an import against that direction."""

import ast
from pathlib import Path

import fem

ROOT = Path(fem.__file__).parent

# layer -> the modules in it (a name ending in '*' covers a package and everything under it)
LAYERS = {
    "base": ["fem.vibration", "fem.errors", "fem.notes", "fem.limits", "fem.geometry", "fem.timefn", "fem.spectrum",
             "fem.excitation", "fem.harmonic_forms", "fem.sections*", "fem.model", "fem.cases", "fem.rules",
             "fem.damping", "fem.progress", "fem.display", "fem.threads"],
    "deck": ["fem.deck*", "fem.grammar*"],
    "elements": ["fem.elements*", "fem.assembly"],
    "analysis": ["fem.analysis*"],
    "solve": ["fem.solver", "fem.results", "fem.checks", "fem.case_selection"],
    "output": ["fem.output*"],
    "cli": ["fem", "fem.cli", "fem.__main__", "fem.study*"],
}
# what each layer may import besides itself: the data types below everything, then each stage
# the ones before it; only the top (the API and the CLI) reads decks
MAY_IMPORT = {
    "base": set(),
    "deck": {"base"},
    "elements": {"base"},
    "analysis": {"base", "elements"},
    "solve": {"base", "elements", "analysis"},
    "output": {"base", "elements", "analysis", "solve"},
    "cli": set(LAYERS),
}


def _layer(module: str) -> str | None:
    for layer, names in LAYERS.items():
        for n in names:
            if module == n or (n.endswith("*") and (module == n[:-1] or module.startswith(n[:-1] + "."))):
                return layer
    return None


def _modules():
    for path in sorted(ROOT.rglob("*.py")):
        parts = list(path.relative_to(ROOT.parent).with_suffix("").parts)
        package = parts[:-1] if parts[-1] != "__init__" else parts
        if parts[-1] == "__init__":
            parts = parts[:-1]
        yield ".".join(parts), package, path


def _imports(package: list[str], path: Path):
    """(imported module, line) of every fem import in the file; `from fem import x` counts as
    fem.x when x is a module."""
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            yield from ((a.name, node.lineno) for a in node.names if a.name.split(".")[0] == "fem")
        elif isinstance(node, ast.ImportFrom):
            base = package[:len(package) - node.level + 1] if node.level else []
            target = ".".join(base + ([node.module] if node.module else []))
            if target.split(".")[0] != "fem":
                continue
            for a in node.names:
                sub = f"{target}.{a.name}"
                is_module = (ROOT.parent / Path(*sub.split("."))).with_suffix(".py").exists() or \
                    (ROOT.parent / Path(*sub.split("."))).is_dir()
                yield (sub if is_module else target), node.lineno


def test_every_module_has_a_layer():
    missing = [m for m, _, _ in _modules() if _layer(m) is None]
    assert not missing, f"place these modules in a layer of tests/test_layers.py: {missing}"


def test_imports_run_one_way():
    wrong = []
    for module, package, path in _modules():
        mine = _layer(module)
        for target, line in _imports(package, path):
            theirs = _layer(target)
            if theirs is not None and theirs != mine and theirs not in MAY_IMPORT[mine]:
                wrong.append(f"{path.relative_to(ROOT.parent)}:{line}: {module} ({mine}) imports {target} ({theirs})")
    assert not wrong, "imports against the layer order:\n" + "\n".join(wrong)


def test_the_walk_sees_lazy_and_relative_imports():
    # a check on the checker: a function-level relative import must be found
    found = dict(_imports(["fem", "deck"], ROOT / "deck" / "reader.py"))
    assert "fem.errors" in found


# "no file of the package over about 500 lines"
MAX_LINES = 500


def test_no_module_is_too_long():
    long = {str(p.relative_to(ROOT.parent)): n for _, _, p in _modules()
            if (n := len(p.read_text(encoding="utf-8").splitlines())) > MAX_LINES}
    assert not long, f"split these modules by job (over {MAX_LINES} lines): {long}"
