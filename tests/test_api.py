"""The public API: every name in __all__ imports, errors speak the built-ins."""

from __future__ import annotations

import pickle

import pytest

import symfilt
from symfilt import errors


@pytest.mark.parametrize("name", symfilt.__all__)
def test_all_names_exist(name):
    assert getattr(symfilt, name) is not None


@pytest.mark.parametrize("cls, builtin", [
    (errors.ValueParseError, ValueError),
    (errors.CircuitFileError, ValueError),
    (errors.CircuitError, ValueError),
    (errors.SingularCircuitError, ArithmeticError),
    (errors.SizeLimitError, OverflowError),
    (errors.ClaimError, ValueError),
    (errors.OutputError, OSError),
    (errors.UsageError, ValueError),
])
def test_error_classes_speak_builtins(cls, builtin):
    err = cls("where", "what", "fix")
    assert isinstance(err, symfilt.SymfiltError) and isinstance(err, builtin)
    assert str(err) == "where: what, fix"
    assert (err.where, err.what, err.fix) == ("where", "what", "fix")
    assert str(pickle.loads(pickle.dumps(err))) == "where: what, fix"


def test_public_functions_have_examples():
    """Every public function and class documents itself with a runnable example."""
    import inspect

    for name in symfilt.__all__:
        obj = getattr(symfilt, name)
        if inspect.ismodule(obj) or (inspect.isclass(obj) and issubclass(obj, Exception)):
            continue
        doc = inspect.getdoc(obj) or ""
        assert "Examples" in doc or ">>>" in doc, f"{name} has no example"
