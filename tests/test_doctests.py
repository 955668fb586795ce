"""The Examples sections of the demo modules' docstrings run as written."""

import doctest

import pytest

import poreprobe.demo_channels
import poreprobe.peptide
import poreprobe.structure


@pytest.mark.parametrize(
    "module", [poreprobe.peptide, poreprobe.demo_channels, poreprobe.structure]
)
def test_docstring_examples(module):
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0
    assert result.failed == 0
