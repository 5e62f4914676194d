"""The house rules of heatstack's source, checked from the source itself.

No import circle between modules, no private name imported across modules, no module over 600 lines (every
line counted, docstrings too: a module is read whole) and no function over 80 lines of code (its docstring not
counted: documentation does not make a function's logic long). The
allow-lists are empty on purpose: a new exception is a design decision that must be argued for in review, not
slipped into a list.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[2] / "heatstack"
MAX_MODULE_LINES = 600
MAX_FUNCTION_LINES = 80
ALLOWED_LARGE_MODULES: frozenset[str] = frozenset()
ALLOWED_LONG_FUNCTIONS: frozenset[str] = frozenset()


def _modules() -> dict[str, Path]:
    modules = {}
    for path in PACKAGE.rglob("*.py"):
        parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
        name = ".".join(parts[:-1] if parts[-1] == "__init__" else parts)
        modules[name] = path
    return modules


MODULES = _modules()


def _target(module: str, node: ast.ImportFrom) -> str:
    is_package = MODULES[module].name == "__init__.py"
    base = module.split(".") if is_package else module.split(".")[:-1]
    if node.level:
        base = base[: len(base) - (node.level - 1)]
        return ".".join(base + ([node.module] if node.module else []))
    return node.module or ""


def _imports(module: str) -> list[tuple[str, str, int]]:
    """(imported module, imported name or '', line) for every import in ``module``, at any depth."""
    found = []
    for node in ast.walk(ast.parse(MODULES[module].read_text())):
        if isinstance(node, ast.ImportFrom):
            target = _target(module, node)
            for alias in node.names:
                if f"{target}.{alias.name}" in MODULES:
                    found.append((f"{target}.{alias.name}", "", node.lineno))
                elif target in MODULES:
                    found.append((target, alias.name, node.lineno))
        elif isinstance(node, ast.Import):
            found.extend((alias.name, "", node.lineno) for alias in node.names if alias.name in MODULES)
    return found


def _graph() -> dict[str, set[str]]:
    def parent_and_child(a: str, b: str) -> bool:
        return MODULES[a].name == "__init__.py" and b.startswith(a + ".")

    graph = {}
    for module in MODULES:
        targets = {t for t, _, _ in _imports(module) if t != module}
        graph[module] = {t for t in targets if not parent_and_child(module, t) and not parent_and_child(t, module)}
    return graph


def _cycles(graph: dict[str, set[str]]) -> list[list[str]]:
    """Strongly connected components with more than one module (Tarjan's algorithm, iterative)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    components = []
    for root in graph:
        if root in index:
            continue
        work = [(root, iter(sorted(graph[root])))]
        index[root] = low[root] = len(index)
        stack.append(root)
        on_stack.add(root)
        while work:
            node, children = work[-1]
            child = next(children, None)
            if child is not None:
                if child not in index:
                    index[child] = low[child] = len(index)
                    stack.append(child)
                    on_stack.add(child)
                    work.append((child, iter(sorted(graph.get(child, ())))))
                elif child in on_stack:
                    low[node] = min(low[node], index[child])
                continue
            work.pop()
            if work:
                low[work[-1][0]] = min(low[work[-1][0]], low[node])
            if low[node] == index[node]:
                component = []
                while True:
                    member = stack.pop()
                    on_stack.discard(member)
                    component.append(member)
                    if member == node:
                        break
                if len(component) > 1:
                    components.append(sorted(component))
    return components


def test_the_cycle_finder_finds_a_known_cycle() -> None:
    assert _cycles({"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": {"a"}}) == [["a", "b", "c"]]
    assert _cycles({"a": {"b"}, "b": set()}) == []


def test_no_import_circle_between_modules() -> None:
    assert _cycles(_graph()) == []


def test_no_private_name_imported_across_modules() -> None:
    offenders = [
        f"{MODULES[module].relative_to(PACKAGE.parent)}:{line} imports {name} from {target}"
        for module in MODULES
        for target, name, line in _imports(module)
        if name.startswith("_") and not name.startswith("__") and target != module
    ]
    assert offenders == []


def _module_lines(path: Path) -> int:
    """Every line of ``path``, as ``wc -l`` counts them."""
    return len(path.read_text().splitlines())


def test_no_module_over_600_lines() -> None:
    large = {
        str(path.relative_to(PACKAGE.parent)): n
        for path in MODULES.values()
        if (n := _module_lines(path)) > MAX_MODULE_LINES
    }
    assert {k: v for k, v in large.items() if k not in ALLOWED_LARGE_MODULES} == {}


def _function_lengths(path: Path):
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)):
            body = node.body
            if body and isinstance(body[0], ast.Expr) and isinstance(body[0].value, ast.Constant):
                body = body[1:]
            if body:
                yield node.name, node.lineno, body[-1].end_lineno - body[0].lineno + 1


@pytest.mark.parametrize("path", sorted(MODULES.values()), ids=lambda p: str(p.relative_to(PACKAGE.parent)))
def test_no_function_over_80_lines_of_code(path: Path) -> None:
    long = [
        f"{name} (line {line}): {n} lines"
        for name, line, n in _function_lengths(path)
        if n > MAX_FUNCTION_LINES and f"{path.name}:{name}" not in ALLOWED_LONG_FUNCTIONS
    ]
    assert long == []
