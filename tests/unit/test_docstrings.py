"""Every exported name documents itself (numpydoc): a docstring, and a Parameters section where it takes 2+."""

from __future__ import annotations

import inspect

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
