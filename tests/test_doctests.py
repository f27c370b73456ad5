"""The runnable examples in docstrings (algorithms are pure functions with the published method
and a small example beside them): every module of the hazlint package whose source holds an
example is run through the standard library's doctest, so a wrong example fails the suite."""
import doctest
import importlib
import pkgutil
from pathlib import Path

import pytest

import hazlint


def _modules_with_examples():
    out = []
    for info in pkgutil.walk_packages(hazlint.__path__, "hazlint."):
        spec = importlib.util.find_spec(info.name)
        origin = getattr(spec, "origin", None) or ""
        if origin.endswith(".py") and ">>> " in Path(origin).read_text(encoding="utf-8"):
            out.append(info.name)
    return sorted(out)


MODULES = _modules_with_examples()


def test_examples_are_found():
    # the walks and the delay model carry examples; the search must see them
    assert "hazlint.netlist.walks" in MODULES and "hazlint.delays.model" in MODULES


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples_run(name):
    result = doctest.testmod(importlib.import_module(name), optionflags=doctest.ELLIPSIS)
    assert result.failed == 0, f"{result.failed} of {result.attempted} examples failed in {name}"
