"""Every public name documents itself in numpydoc.

The exported API is checked through inspect (a docstring, a Parameters section where it takes 2+); every public
module, function, class and method of the package is checked from its source with ast (below).
"""

from __future__ import annotations

import ast
import inspect
import re
from pathlib import Path

import pytest

import heatstack

EXPORTED = [name for name in heatstack.__all__ if name != "__version__"]


def _own_doc(obj) -> str:
    """The docstring written for ``obj`` (not the one dataclasses make up, nor one inherited)."""
    if inspect.isclass(obj):
        doc = vars(obj).get("__doc__") or ""
        if doc.startswith(f"{obj.__name__}("):  # made up by @dataclass from the signature
            return ""
        return doc
    return obj.__doc__ or ""


def _parameter_count(function) -> int:
    try:
        signature = inspect.signature(function)
    except (TypeError, ValueError):
        return 0
    return sum(
        1
        for p in signature.parameters.values()
        if p.name not in ("self", "cls") and p.kind not in (p.VAR_POSITIONAL, p.VAR_KEYWORD)
    )


def _callables_to_check():
    """(label, documented object, callable) for every exported function, class and public method."""
    for name in EXPORTED:
        obj = getattr(heatstack, name)
        if inspect.isclass(obj):
            if not issubclass(obj, BaseException):
                yield name, obj, obj  # the constructor is documented in the class docstring
            for attribute, member in vars(obj).items():
                if attribute.startswith("_"):
                    continue
                function = member.__func__ if isinstance(member, classmethod | staticmethod) else member
                if inspect.isfunction(function):
                    yield f"{name}.{attribute}", function, function
        elif callable(obj):
            yield name, obj, obj


@pytest.mark.parametrize("name", EXPORTED)
def test_every_exported_name_has_a_docstring(name):
    obj = getattr(heatstack, name)
    assert _own_doc(obj).strip(), f"heatstack.{name} has no docstring"


def test_every_public_callable_with_two_or_more_parameters_has_a_parameters_section():
    lacking = [
        label
        for label, documented, function in _callables_to_check()
        if _parameter_count(function) >= 2 and "Parameters\n" not in inspect.cleandoc(_own_doc(documented))
    ]
    assert lacking == []


# ---------------------------------------------------------------------------------------------------------------
# Every public definition in the package, read from the source with ast.
#
# Public: a module whose path has no part starting with "_" (a package's __init__ counts as the package), and in
# it every function and class whose name does not start with "_", and every such method (and nested class) of a
# public class. Rules checked for each, with no allow-list:
#   - a docstring with a summary line (modules too);
#   - a Parameters section naming every parameter (self/cls aside) when there is one; for a class, the
#     parameters of its own __init__ (in the class or __init__ docstring), and for a dataclass or NamedTuple
#     record its fields, in Attributes or Parameters;
#   - a Returns section when the body has a ``return value`` statement (Yields for a generator); a property is
#     documented as an attribute, so its summary says what it returns and no Returns section is asked for.
# ---------------------------------------------------------------------------------------------------------------

PACKAGE_DIR = Path(__file__).resolve().parents[2] / "heatstack"  # this checkout's source, as test_house_structure
ALLOWED_GAPS: frozenset[str] = frozenset()

_SECTION_UNDERLINE = re.compile(r"^-{3,}$")


def _sections(doc: str) -> dict[str, list[str]]:
    """The numpydoc sections of ``doc``: header -> the lines under its underline, up to the next header."""
    lines = inspect.cleandoc(doc).splitlines()
    sections: dict[str, list[str]] = {}
    current: list[str] | None = None
    for index, line in enumerate(lines):
        if index + 1 < len(lines) and _SECTION_UNDERLINE.match(lines[index + 1].strip()) and line.strip():
            current = sections.setdefault(line.strip(), [])
            continue
        if _SECTION_UNDERLINE.match(line.strip()):
            continue
        if current is not None:
            current.append(line)
    return sections


def _documented_names(lines: list[str]) -> set[str]:
    """Names a Parameters/Attributes section lists: its unindented lines, ``a, b : float`` style."""
    names: set[str] = set()
    for line in lines:
        if not line.strip() or line[:1].isspace():
            continue
        for name in line.split(" : ")[0].split(","):
            names.add(name.strip().lstrip("*"))
    return names


def _is_public_module(path: Path) -> bool:
    parts = path.relative_to(PACKAGE_DIR).parts
    return not any(part.startswith("_") and part != "__init__.py" for part in parts)


def _decorator_names(node: ast.FunctionDef | ast.AsyncFunctionDef | ast.ClassDef) -> set[str]:
    names = set()
    for decorator in node.decorator_list:
        target = decorator.func if isinstance(decorator, ast.Call) else decorator
        if isinstance(target, ast.Attribute):
            names.add(target.attr)
            if isinstance(target.value, ast.Name):
                names.add(f"{target.value.id}.{target.attr}")
        elif isinstance(target, ast.Name):
            names.add(target.id)
    return names


def _own_statements(function: ast.FunctionDef | ast.AsyncFunctionDef):
    """Every node of ``function``'s body, not descending into nested functions, lambdas or classes."""
    stack = list(function.body)
    while stack:
        node = stack.pop()
        yield node
        for child in ast.iter_child_nodes(node):
            if not isinstance(child, ast.FunctionDef | ast.AsyncFunctionDef | ast.Lambda | ast.ClassDef):
                stack.append(child)


def _returns_value(function: ast.FunctionDef | ast.AsyncFunctionDef) -> bool:
    return any(
        isinstance(node, ast.Return)
        and node.value is not None
        and not (isinstance(node.value, ast.Constant) and node.value.value is None)
        for node in _own_statements(function)
    )


def _is_generator(function: ast.FunctionDef | ast.AsyncFunctionDef) -> bool:
    return any(isinstance(node, ast.Yield | ast.YieldFrom) for node in _own_statements(function))


def _parameters(function: ast.FunctionDef | ast.AsyncFunctionDef, is_method: bool) -> list[str]:
    arguments = function.args
    names = [a.arg for a in arguments.posonlyargs + arguments.args]
    if is_method and "staticmethod" not in _decorator_names(function) and names:
        names = names[1:]  # self or cls
    names += [a.arg for a in arguments.kwonlyargs]
    names += [a.arg for a in (arguments.vararg, arguments.kwarg) if a is not None]
    return names


def _missing_names(doc: str, names: list[str], headers: tuple[str, ...]) -> list[str]:
    sections = _sections(doc)
    listed: set[str] = set()
    for header in headers:
        listed |= _documented_names(sections.get(header, []))
    return [name for name in names if name not in listed]


def _function_problems(label: str, function, is_method: bool) -> list[str]:
    doc = ast.get_docstring(function) or ""
    if not doc.strip() or not doc.strip().splitlines()[0].strip():
        return [f"{label}: no docstring (or no summary line)"]
    problems = []
    decorators = _decorator_names(function)
    missing = _missing_names(doc, _parameters(function, is_method), ("Parameters", "Other Parameters"))
    if missing:
        problems.append(f"{label}: Parameters section does not list {', '.join(missing)}")
    if "property" not in decorators and "cached_property" not in decorators:
        sections = _sections(doc)
        if _is_generator(function):
            if "Yields" not in sections:
                problems.append(f"{label}: a generator without a Yields section")
        elif _returns_value(function) and "Returns" not in sections:
            problems.append(f"{label}: returns a value but has no Returns section")
    return problems


def _record_fields(node: ast.ClassDef) -> list[str] | None:
    """The fields of a dataclass or NamedTuple record, None for any other class."""
    bases = {b.id if isinstance(b, ast.Name) else getattr(b, "attr", "") for b in node.bases}
    if "dataclass" not in _decorator_names(node) and "NamedTuple" not in bases:
        return None
    fields = []
    for statement in node.body:
        if (
            isinstance(statement, ast.AnnAssign)
            and isinstance(statement.target, ast.Name)
            and not statement.target.id.startswith("_")
        ):
            if "ClassVar" not in ast.unparse(statement.annotation) and "InitVar" not in ast.unparse(
                statement.annotation
            ):
                fields.append(statement.target.id)
    return fields


def _class_problems(label: str, node: ast.ClassDef) -> list[str]:
    doc = ast.get_docstring(node) or ""
    if not doc.strip() or not doc.strip().splitlines()[0].strip():
        problems = [f"{label}: no docstring (or no summary line)"]
    else:
        problems = []
        fields = _record_fields(node)
        if fields is not None:
            missing = _missing_names(doc, fields, ("Attributes", "Parameters"))
            if missing:
                problems.append(f"{label}: Attributes section does not list the fields {', '.join(missing)}")
        for statement in node.body:
            if isinstance(statement, ast.FunctionDef) and statement.name == "__init__":
                init_doc = ast.get_docstring(statement) or ""
                names = _parameters(statement, is_method=True)
                missing = _missing_names(doc, names, ("Parameters", "Other Parameters"))
                missing_in_init = _missing_names(init_doc, names, ("Parameters", "Other Parameters"))
                if missing and missing_in_init:
                    problems.append(f"{label}: Parameters section does not list {', '.join(missing)}")
    for statement in node.body:
        if isinstance(statement, ast.FunctionDef | ast.AsyncFunctionDef) and not statement.name.startswith("_"):
            if "setter" in _decorator_names(statement) or "overload" in _decorator_names(statement):
                continue
            problems += _function_problems(f"{label}.{statement.name}", statement, is_method=True)
        elif isinstance(statement, ast.ClassDef) and not statement.name.startswith("_"):
            problems += _class_problems(f"{label}.{statement.name}", statement)
    return problems


def docstring_problems(source: str, module_label: str) -> list[str]:
    """Every missing docstring or section among the public definitions of one module's source."""
    tree = ast.parse(source)
    problems = []
    if not (ast.get_docstring(tree) or "").strip():
        problems.append(f"{module_label}: no module docstring")
    for node in tree.body:
        if node_name := getattr(node, "name", ""):
            if node_name.startswith("_"):
                continue
            label = f"{module_label}.{node_name}"
            if isinstance(node, ast.ClassDef):
                problems += _class_problems(label, node)
            elif isinstance(node, ast.FunctionDef | ast.AsyncFunctionDef):
                if "overload" not in _decorator_names(node):
                    problems += _function_problems(label, node, is_method=False)
    return problems


PUBLIC_MODULES = sorted(path for path in PACKAGE_DIR.rglob("*.py") if _is_public_module(path))


def _module_label(path: Path) -> str:
    parts = path.relative_to(PACKAGE_DIR.parent).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def test_the_walk_finds_the_package_modules():
    labels = {_module_label(path) for path in PUBLIC_MODULES}
    assert {"heatstack", "heatstack.model", "heatstack.numerics.solver"} <= labels


@pytest.mark.parametrize("path", PUBLIC_MODULES, ids=_module_label)
def test_every_public_definition_has_a_complete_numpydoc_docstring(path):
    problems = [p for p in docstring_problems(path.read_text(), _module_label(path)) if p not in ALLOWED_GAPS]
    assert problems == []


def test_the_check_catches_an_undocumented_function_and_missing_sections():
    source = '''"""A module."""

def undocumented(a):
    return a

def lacks_parameters(temperature, time):
    """Summary.

    Returns
    -------
    float
        Something [K].
    """
    return temperature

def lacks_returns(temperature):
    """Summary.

    Parameters
    ----------
    temperature : float
        Temperature [K].
    """
    return temperature

class Record:
    """A record without its fields."""

    value: float

    def method(self, speed):
        """Summary without Parameters."""

def _private(x):
    return x
'''
    source = source.replace("class Record", "@dataclass(frozen=True)\nclass Record")
    problems = docstring_problems(source, "m")
    assert problems == [
        "m.undocumented: no docstring (or no summary line)",
        "m.lacks_parameters: Parameters section does not list temperature, time",
        "m.lacks_returns: returns a value but has no Returns section",
        "m.Record: Attributes section does not list the fields value",
        "m.Record.method: Parameters section does not list speed",
    ]


def test_a_complete_docstring_passes_the_check():
    source = '''"""A module."""

def complete(temperature, *values, scale=1.0):
    """Scaled temperature.

    Parameters
    ----------
    temperature : float
        Temperature [K].
    *values : float
        Extra values [K].
    scale : float, optional
        Factor [-].

    Returns
    -------
    float
        Scaled temperature [K].
    """
    return temperature * scale
'''
    assert docstring_problems(source, "m") == []
