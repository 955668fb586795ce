"""The package layout: small modules, and every public name reachable from the root."""

from __future__ import annotations

import importlib
from pathlib import Path

import pytest

import poreprobe

PACKAGE = Path(poreprobe.__file__).parent
#: Contributor rule (DEVELOPERS.md): no module over 700 lines.
MAX_LINES = 700


def test_no_module_is_over_the_line_limit():
    sizes = {
        str(path.relative_to(PACKAGE)): len(path.read_text(encoding="utf-8").splitlines())
        for path in PACKAGE.rglob("*.py")
    }
    assert len(sizes) > 50
    assert {name: n for name, n in sizes.items() if n > MAX_LINES} == {}


@pytest.mark.parametrize("name", [n for n in poreprobe.__all__ if n != "__version__"])
def test_public_name_comes_from_the_module_the_table_names(name):
    module = importlib.import_module(poreprobe._EXPORTS[name])
    value = getattr(module, name)
    assert getattr(poreprobe, name) is value
    if isinstance(value, type) or callable(value):
        assert value.__module__ == module.__name__  # defined there, not passed through
