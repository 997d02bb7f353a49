"""The examples in the public docstrings run, imported under the installed name ``beamtone``."""

from __future__ import annotations

import doctest
import importlib
import pkgutil

import pytest

import beamtone.calc
import beamtone.render

MODULES = sorted(
    f"{package.__name__}.{info.name}"
    for package in (beamtone.calc, beamtone.render)
    for info in pkgutil.iter_modules(package.__path__)
)


@pytest.mark.parametrize("name", MODULES)
def test_docstring_examples_run(name: str) -> None:
    module = importlib.import_module(name)
    failures, _ = doctest.testmod(module, optionflags=doctest.NORMALIZE_WHITESPACE)
    assert failures == 0
