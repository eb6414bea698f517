"""The package's architecture, checked over the source (``ast``), not by convention.

Layers, lowest first (DEVELOPERS.md, "Layout"): ``errors``/``version`` -> ``model`` ->
``engine`` -> ``analysis`` -> ``design`` | ``claims`` -> ``export`` -> ``cli`` -> the
package's ``__init__``. A module may import its own layer and the layers below it,
never one above; ``design`` and ``claims`` are side by side and do not import each
other. No module imports another module's private (underscore) name. Modules stay
under 600 lines and functions under 60 lines of code (the docstring not counted).
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parent.parent / "symfilt"

#: Layer of each top-level module or subpackage of symfilt.
RANK = {
    "errors": 0, "version": 0,
    "model": 1,
    "engine": 2,
    "analysis": 3,
    "design": 4, "claims": 4,
    "export": 5,
    "cli": 6,
    "": 7,  # symfilt/__init__.py: the public names
}

MAX_MODULE_LINES = 600
MAX_FUNCTION_LINES = 60


def _modules() -> list[Path]:
    return sorted(PACKAGE.rglob("*.py"))


def _room(path: Path) -> str:
    """The layer a source file belongs to: its subpackage, or its module at the top."""
    rel = path.relative_to(PACKAGE)
    if len(rel.parts) > 1:
        return rel.parts[0]
    return "" if rel.stem == "__init__" else rel.stem


def _imported(path: Path) -> list[tuple[int, str, list[str]]]:
    """(line, absolute module, names) of every symfilt import in a file, relative ones resolved."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    here = ["symfilt", *path.relative_to(PACKAGE).with_suffix("").parts]
    if here[-1] == "__init__":
        here = here[:-1]
    package = here if path.name == "__init__.py" else here[:-1]
    out = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for alias in node.names:
                if alias.name.split(".")[0] == "symfilt":
                    out.append((node.lineno, alias.name, []))
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package[: len(package) - node.level + 1]
                module = ".".join(base + ([node.module] if node.module else []))
            else:
                module = node.module or ""
            if module.split(".")[0] == "symfilt":
                out.append((node.lineno, module, [a.name for a in node.names]))
    return out


def _target_room(module: str, names: list[str]) -> list[str]:
    parts = module.split(".")[1:]
    if parts:
        return [parts[0]]
    # "from symfilt import x": x is a subpackage, a top-level module or a public name
    return [n if n in RANK else "" for n in names]


def test_the_rooms_are_the_ones_documented():
    rooms = {_room(p) for p in _modules()}
    assert rooms <= set(RANK), f"undocumented layer(s): {sorted(rooms - set(RANK))}"
    for sub in ("model", "engine", "analysis", "design", "claims", "export"):
        assert (PACKAGE / sub / "__init__.py").is_file()


def _against_layers(room: str, imported: list[tuple[int, str, list[str]]]) -> list[str]:
    """The imports of a module in ``room`` that reach a higher layer or a side-by-side one."""
    bad = []
    for line, module, names in imported:
        for target in _target_room(module, names):
            if target == room:
                continue
            if RANK[target] > RANK[room] or (RANK[target] == RANK[room]):
                bad.append(f"line {line}: {module} ({target or 'symfilt'}) from {room or 'symfilt'}")
    return bad


@pytest.mark.parametrize("path", _modules(), ids=lambda p: str(p.relative_to(PACKAGE)))
def test_no_module_imports_a_higher_layer(path):
    bad = _against_layers(_room(path), _imported(path))
    assert not bad, "imports against the layers: " + "; ".join(bad)


@pytest.mark.parametrize("path", _modules(), ids=lambda p: str(p.relative_to(PACKAGE)))
def test_no_module_imports_a_private_name(path):
    bad = [f"line {line}: {name} from {module}" for line, module, names in _imported(path)
           for name in names if name.startswith("_") and not name.startswith("__")]
    assert not bad, "private names imported: " + "; ".join(bad)


def _private_attributes(tree: ast.Module) -> list[str]:
    """``module._name`` reads where ``module`` was bound by importing a symfilt module."""
    modules = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom) and (node.module or "").split(".")[0] == "symfilt":
            for a in node.names:
                full = f"{node.module}.{a.name}"
                if (PACKAGE.parent / (full.replace(".", "/") + ".py")).is_file() \
                        or (PACKAGE.parent / full.replace(".", "/")).is_dir():
                    modules.add(a.asname or a.name)
        elif isinstance(node, ast.Import):
            modules.update(a.asname for a in node.names if a.asname and a.name.split(".")[0] == "symfilt")
    return [f"line {n.lineno}: {n.value.id}.{n.attr}" for n in ast.walk(tree)
            if isinstance(n, ast.Attribute) and isinstance(n.value, ast.Name) and n.value.id in modules
            and n.attr.startswith("_") and not n.attr.startswith("__")]


@pytest.mark.parametrize("path", _modules(), ids=lambda p: str(p.relative_to(PACKAGE)))
def test_no_module_reads_a_private_name_of_another(path):
    bad = _private_attributes(ast.parse(path.read_text(encoding="utf-8")))
    assert not bad, "private names read through a module: " + "; ".join(bad)


def test_the_private_read_check_sees_one():
    tree = ast.parse("from symfilt.export import latex\nx = latex._LABELS\ny = latex.LABELS\n")
    assert _private_attributes(tree) == ["line 2: latex._LABELS"]


@pytest.mark.parametrize("path", _modules(), ids=lambda p: str(p.relative_to(PACKAGE)))
def test_modules_stay_small(path):
    lines = len(path.read_text(encoding="utf-8").splitlines())
    assert lines <= MAX_MODULE_LINES, f"{lines} lines: split the module by job"


def _code_lines(fn: ast.FunctionDef | ast.AsyncFunctionDef) -> int:
    body = fn.body
    if body and isinstance(body[0], ast.Expr) and isinstance(getattr(body[0], "value", None), ast.Constant) \
            and isinstance(body[0].value.value, str):
        first = body[1].lineno if len(body) > 1 else fn.end_lineno + 1
        docstring = first - body[0].lineno
    else:
        docstring = 0
    return fn.end_lineno - fn.lineno + 1 - docstring


@pytest.mark.parametrize("path", _modules(), ids=lambda p: str(p.relative_to(PACKAGE)))
def test_functions_stay_short(path):
    tree = ast.parse(path.read_text(encoding="utf-8"))
    long = [f"{n.name} ({_code_lines(n)} lines, line {n.lineno})" for n in ast.walk(tree)
            if isinstance(n, (ast.FunctionDef, ast.AsyncFunctionDef)) and _code_lines(n) > MAX_FUNCTION_LINES]
    assert not long, "split into named steps: " + ", ".join(long)


def test_the_checker_sees_a_violation(tmp_path):
    # The contract test must be able to fail: an engine module importing the analysis layer.
    fake = PACKAGE / "engine" / "mna.py"
    found = [t for _l, m, n in _imported(fake) for t in _target_room(m, n)]
    assert "model" in found  # the real module imports the model, so resolution works
    src = tmp_path / "x.py"
    src.write_text("from symfilt.analysis.stage import analyse\n", encoding="utf-8")
    tree = ast.parse(src.read_text())
    node = next(n for n in ast.walk(tree) if isinstance(n, ast.ImportFrom))
    assert _target_room(node.module, [a.name for a in node.names]) == ["analysis"]
    found = _against_layers("engine", [(node.lineno, node.module, [a.name for a in node.names])])
    assert found == ["line 1: symfilt.analysis.stage (analysis) from engine"]
    # design and claims sit side by side: neither may import the other
    assert _against_layers("design", [(3, "symfilt.claims.judge", ["equivalent"])])
    assert not _against_layers("analysis", [(2, "symfilt.engine.mna", ["build_system"])])
