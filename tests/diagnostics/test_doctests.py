"""The examples in the diagnostics' docstrings run and give what they show."""

from __future__ import annotations

import doctest
import importlib

import pytest

MODULES = [
    "frameshift._kernels.integrals",
    "frameshift._kernels.spectra",
    "frameshift._kernels.tracks",
    "frameshift._kernels.vorticity",
    "frameshift.diagnostics.angular_momentum",
    "frameshift.diagnostics.command",
    "frameshift.diagnostics.rotary",
    "frameshift.diagnostics.tracks",
    "frameshift.diagnostics.vorticity",
]


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    result = doctest.testmod(importlib.import_module(name), optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0
    assert result.failed == 0
