"""The package's layout holds its own rules (DEVELOPERS.md, "Layout"): no import circle
between modules, no module taking a private name from another.

Oracle: networkx's cycle detection (``nx.simple_cycles`` on the import graph, PyPI networkx)
over the imports that Python's own ``ast`` reads from every module of ``hazlint`` and
``rules``; an import inside a function body counts too (it is still a dependency, only a
later one). ``from __future__`` and ``TYPE_CHECKING`` blocks are not dependencies.
"""
from __future__ import annotations

import ast
import importlib
from pathlib import Path

import networkx as nx
import pytest

ROOT = Path(__file__).resolve().parent.parent
PACKAGES = {"hazlint": ROOT / "hazlint", "hazlint_rules": ROOT / "rules"}


def _modules():
    out = {}
    for pkg, folder in PACKAGES.items():
        for path in sorted(folder.rglob("*.py")):
            rel = path.relative_to(folder).with_suffix("")
            parts = [pkg, *rel.parts]
            if parts[-1] == "__init__":
                parts = parts[:-1]
            out[".".join(parts)] = path
    return out


MODULES = _modules()


def _is_type_checking(node) -> bool:
    test = node.test
    return (isinstance(test, ast.Name) and test.id == "TYPE_CHECKING") or (
        isinstance(test, ast.Attribute) and test.attr == "TYPE_CHECKING")


def _imports(name: str, path: Path):
    """(module imported, names taken from it) for every import in ``path``."""
    tree = ast.parse(path.read_text(encoding="utf-8"), str(path))
    package = name if path.name == "__init__.py" else name.rpartition(".")[0]
    skip = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.If) and _is_type_checking(node):
            skip.update(id(n) for n in ast.walk(node))
    for node in ast.walk(tree):
        if id(node) in skip:
            continue
        if isinstance(node, ast.Import):
            for a in node.names:
                yield a.name, ()
        elif isinstance(node, ast.ImportFrom):
            if node.module == "__future__":
                continue
            if node.level:
                base = package.split(".")
                base = base[:len(base) - node.level + 1]
                mod = ".".join(base + ([node.module] if node.module else []))
            else:
                mod = node.module
            names = tuple(a.name for a in node.names)
            # `from pkg import module` imports the module
            subs = [f"{mod}.{n}" for n in names if f"{mod}.{n}" in MODULES]
            if subs:
                for s in subs:
                    yield s, ()
                rest = tuple(n for n in names if f"{mod}.{n}" not in MODULES)
                if rest:
                    yield mod, rest
            else:
                yield mod, names


def _graph():
    g = nx.DiGraph()
    private = []
    for name, path in MODULES.items():
        g.add_node(name)
        for mod, names in _imports(name, path):
            if mod in MODULES and mod != name:
                # a package's __init__ importing its own submodules is its interface, not a
                # dependency of the submodule on the package
                if not (path.name == "__init__.py" and mod.startswith(name + ".")):
                    g.add_edge(name, mod)
                for n in names:
                    if n.startswith("_") and not n.startswith("__"):
                        private.append(f"{name} imports {n} from {mod}")
    return g, private


def test_every_module_imports():
    # every module imports (``__main__`` runs the command line when imported: left out)
    for name in MODULES:
        if not name.endswith(".__main__"):
            importlib.import_module(name)


def test_no_import_circle():
    g, _ = _graph()
    cycles = sorted(sorted(c) for c in nx.simple_cycles(g))
    assert cycles == [], "import circles: " + "; ".join(" -> ".join(c) for c in cycles[:10])


def test_no_private_name_crosses_a_module():
    _, private = _graph()
    assert private == [], "\n".join(private)


def test_the_walk_finds_a_circle_when_there_is_one(tmp_path):
    # the check itself can fail: two modules that import each other make a cycle in the graph
    a = tmp_path / "a.py"
    b = tmp_path / "b.py"
    a.write_text("from b import x\n")
    b.write_text("import a\nx = 1\n")
    g = nx.DiGraph()
    for name, path in (("a", a), ("b", b)):
        for mod, _ in _imports(name, path):
            g.add_edge(name, mod)
    assert sorted(map(sorted, nx.simple_cycles(g))) == [["a", "b"]]
