"""The numpydoc contract: every public function, method and class documents itself.

For every public module under ``symfilt/`` and every public name defined in it (not
imported into it), the docstring has a ``Parameters`` section naming every parameter of
the signature (``self`` and ``cls`` apart; ``*args`` and ``**kwargs`` as written) and an
``Examples`` section (which the doctest run executes). A parameter line is
``name : type`` or ``name1, name2 : type`` at the section's indent (numpydoc).

The click commands of ``symfilt/cli.py`` are ``click.Command`` objects, not functions,
so the walk passes them by: their options are documented by ``symfilt COMMAND --help``,
which click builds from the docstring and the option help texts.
"""

from __future__ import annotations

import importlib
import inspect
import pkgutil

import pytest

import symfilt

SKIPPED_PARAMETERS = {"self", "cls"}


# --- the small numpydoc reader ------------------------------------------------------------

def _is_underline(line: str) -> bool:
    text = line.strip()
    return len(text) >= 3 and set(text) == {"-"}


def section_lines(doc: str, title: str) -> list[str] | None:
    """The lines of section ``title`` of a cleaned docstring, or None if it has none."""
    lines = doc.splitlines()
    for i in range(len(lines) - 1):
        if lines[i].strip() == title and _is_underline(lines[i + 1]):
            indent = len(lines[i]) - len(lines[i].lstrip())
            body = []
            for j in range(i + 2, len(lines)):
                line = lines[j]
                here = len(line) - len(line.lstrip())
                if line.strip() and here < indent:
                    break
                if here == indent and j + 1 < len(lines) and _is_underline(lines[j + 1]):
                    break  # the next section's title
                body.append(line)
            return body
    return None


def documented_parameters(doc: str) -> set[str] | None:
    """Names documented in the ``Parameters`` section (None if there is no such section).

    A parameter line sits at the section's indent: ``name : type``, ``name1, name2 : type``
    or a bare ``name``; the lines indented below it describe it.
    """
    body = section_lines(doc, "Parameters")
    if body is None:
        return None
    indents = [len(line) - len(line.lstrip()) for line in body if line.strip()]
    if not indents:
        return set()
    indent = min(indents)
    names = set()
    for line in body:
        if line.strip() and len(line) - len(line.lstrip()) == indent:
            head = line.strip().split(" : ")[0].rstrip(":").strip()
            names.update(name.strip() for name in head.split(",") if name.strip())
    return names


def signature_parameters(obj) -> list[str] | None:
    """Parameter names as a docstring writes them (``*args``, ``**kwargs``), self/cls apart."""
    try:
        sig = inspect.signature(obj)
    except (TypeError, ValueError):
        return None
    names = []
    for p in sig.parameters.values():
        if p.name in SKIPPED_PARAMETERS:
            continue
        prefix = {p.VAR_POSITIONAL: "*", p.VAR_KEYWORD: "**"}.get(p.kind, "")
        names.append(prefix + p.name)
    return names


def docstring_gaps(qualname: str, obj) -> list[str]:
    """What the docstring of ``obj`` lacks under the contract (empty if nothing)."""
    doc = inspect.getdoc(obj) or ""
    gaps = []
    if section_lines(doc, "Examples") is None:
        gaps.append(f"{qualname}: no Examples section")
    params = signature_parameters(obj) or []
    if params:
        documented = documented_parameters(doc)
        if documented is None:
            gaps.append(f"{qualname}: no Parameters section (for {', '.join(params)})")
        else:
            missing = [p for p in params if p not in documented and p.lstrip("*") not in documented]
            if missing:
                gaps.append(f"{qualname}: Parameters does not document {', '.join(missing)}")
    return gaps


# --- what is public -----------------------------------------------------------------------

def public_modules() -> list[str]:
    """symfilt and every module under it whose dotted name has no part starting with ``_``."""
    found = ["symfilt"]
    for info in pkgutil.walk_packages(symfilt.__path__, "symfilt."):
        if not any(part.startswith("_") for part in info.name.split(".")):
            found.append(info.name)
    return sorted(found)


def _methods(cls) -> list[tuple[str, object]]:
    out = []
    for name, member in vars(cls).items():
        if name.startswith("_"):
            continue
        if isinstance(member, (staticmethod, classmethod)):
            member = member.__func__
        if inspect.isfunction(member) and member.__qualname__ == f"{cls.__qualname__}.{name}":
            out.append((f"{cls.__name__}.{name}", getattr(cls, name)))
    return out


def public_objects(module_name: str) -> list[tuple[str, object]]:
    """(name, object) of the public functions, classes and methods defined in a module."""
    module = importlib.import_module(module_name)
    out = []
    for name, obj in vars(module).items():
        if name.startswith("_") or getattr(obj, "__module__", None) != module_name:
            continue
        if inspect.isfunction(obj):
            out.append((name, obj))
        elif inspect.isclass(obj):
            out.append((name, obj))
            out.extend(_methods(obj))
    return out


# --- the contract -------------------------------------------------------------------------

@pytest.mark.parametrize("module_name", public_modules())
def test_public_docstrings_follow_numpydoc(module_name):
    gaps = [gap for name, obj in public_objects(module_name) for gap in docstring_gaps(name, obj)]
    assert not gaps, f"{len(gaps)} docstring gaps in {module_name}:\n" + "\n".join(gaps)


def test_the_walk_finds_the_public_names():
    names = dict(public_objects("symfilt.model.circuit"))
    assert {"Circuit", "Circuit.build", "Circuit.with_probes"} <= set(names)
    assert {"Part", "Part.resistor", "part_symbol"} <= set(dict(public_objects("symfilt.model.part")))
    assert not any(name.startswith("_") or "._" in name for name in names)
    # imported names belong to the module that defines them
    assert "Circuit" not in dict(public_objects("symfilt"))
    assert "symfilt.model.circuit" in public_modules() and "symfilt.engine.polybridge" in public_modules()


def test_the_reader_finds_documented_and_missing_parameters():
    def sample(a, b, *args, c=1, **kwargs):
        """One line.

        Parameters
        ----------
        a, b : int
            Two numbers,
            described over two lines : with a colon.
        *args : int
        c
            A bare name.

        Returns
        -------
        int

        Examples
        --------
        >>> 1
        1
        """

    doc = inspect.getdoc(sample)
    assert documented_parameters(doc) == {"a", "b", "*args", "c"}
    assert signature_parameters(sample) == ["a", "b", "*args", "c", "**kwargs"]
    assert docstring_gaps("sample", sample) == ["sample: Parameters does not document **kwargs"]
    assert section_lines(doc, "Returns") == ["int", ""]


def test_the_reader_reports_missing_sections():
    def bare(x):
        """No sections at all."""

    def method_like(self):
        """Nothing to document but an example.

        Examples
        --------
        >>> 2
        2
        """

    assert docstring_gaps("bare", bare) == ["bare: no Examples section", "bare: no Parameters section (for x)"]
    assert docstring_gaps("method_like", method_like) == []
