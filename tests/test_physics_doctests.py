"""The examples in the docstrings of the physics, board and rider modules run and hold."""

from __future__ import annotations

import doctest
import importlib

import pytest

MODULES = (
    "sessions.physics.water",
    "sessions.physics.buoyancy",
    "sessions.physics.regimes",
    "sessions.physics.planing",
    "sessions.physics.waves",
    "sessions.boards",
    "sessions.riders",
)


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples(name):
    result = doctest.testmod(importlib.import_module(name), optionflags=doctest.ELLIPSIS, verbose=False)
    assert result.attempted > 0
    assert result.failed == 0
