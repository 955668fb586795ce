"""The Examples sections of the demo, structure and writer modules' docstrings run as written."""

import doctest

import pytest

import poreprobe.demo.channels
import poreprobe.demo.peptide
import poreprobe.io.structure
import poreprobe.io.writer


@pytest.mark.parametrize(
    "module",
    [poreprobe.demo.peptide, poreprobe.demo.channels, poreprobe.io.structure, poreprobe.io.writer],
)
def test_docstring_examples(module):
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0
    assert result.failed == 0
