"""Every public function and class of the engine has a numpydoc docstring that describes each of
its parameters (issue 10.3; docs/style.md). Bookkeeping, not physics: common practice, no source.

"Public" is what a module lists in ``__all__``; every engine module has one. A docstring's
Parameters section (numpydoc: the heading, a line of dashes, then one ``name : type`` line per
parameter, several names sharing a line when separated by commas) must name every parameter of
the signature and nothing else, so a renamed parameter cannot leave its old name behind. A
dataclass may describe its fields under Attributes instead. Parsed with the standard library.
"""

import dataclasses
import importlib
import inspect
import pkgutil
import re

import pytest

import somaward

MODULES = ["somaward"] + sorted(f"somaward.{m.name}" for m in pkgutil.iter_modules(somaward.__path__)
                                if m.name != "__main__")
_HEADING = re.compile(r"^(\w[\w ]*)\n-{3,}$", re.M)
_NAMES = re.compile(r"^(\*{0,2}\w+(?:\s*,\s*\*{0,2}\w+)*)\s*(?::|$)")


def sections(doc):
    """{heading: body} of a numpydoc docstring (cleaned of its indentation)."""
    text = inspect.cleandoc(doc)
    marks = list(_HEADING.finditer(text))
    return {m.group(1): text[m.end():marks[i + 1].start() if i + 1 < len(marks) else len(text)]
            for i, m in enumerate(marks)}


def described(body):
    """Names on the unindented lines of a Parameters (or Attributes) section, stars dropped."""
    names = set()
    for line in body.splitlines():
        if line and not line[0].isspace():
            m = _NAMES.match(line)
            if m:
                names.update(n.strip().lstrip("*") for n in m.group(1).split(","))
    return names


def public_objects():
    """(qualified name, object) of every function and class in an engine module's ``__all__``,
    each once, under the module that defines it."""
    seen, out = set(), []
    for name in MODULES:
        module = importlib.import_module(name)
        for attr in getattr(module, "__all__", []):
            obj = getattr(module, attr)
            if (inspect.isfunction(obj) or inspect.isclass(obj)) and id(obj) not in seen:
                seen.add(id(obj))
                out.append((f"{obj.__module__}.{obj.__qualname__}", obj))
    return out


PUBLIC = public_objects()


def parameters(obj):
    sig = inspect.signature(obj)
    return [p.name for p in sig.parameters.values() if p.name not in ("self", "cls")]


@pytest.mark.parametrize("name", MODULES)
def test_every_module_states_its_public_face(name):
    module = importlib.import_module(name)
    assert isinstance(getattr(module, "__all__", None), list), f"{name} has no __all__"
    assert module.__doc__ and module.__doc__.strip(), f"{name} has no module docstring"


def test_the_list_is_not_empty():
    """The listing itself works: the entry point and a formula are found."""
    names = {n for n, _ in PUBLIC}
    assert {"somaward.report.solve", "somaward.membrane.space_constant_um", "somaward.tree.Tree"} <= names
    assert len(PUBLIC) > 60


@pytest.mark.parametrize("name, obj", PUBLIC, ids=[n for n, _ in PUBLIC])
def test_public_docstring_describes_every_parameter(name, obj):
    doc = obj.__doc__
    assert doc and doc.strip(), f"{name}: no docstring"
    if inspect.isclass(obj) and doc == type.__doc__:
        pytest.fail(f"{name}: no docstring")
    params = parameters(obj)
    found = sections(doc)
    body = found.get("Parameters")
    if body is None and inspect.isclass(obj) and dataclasses.is_dataclass(obj):
        body = found.get("Attributes")
    if not params:
        return
    assert body is not None, f"{name}: no Parameters section for {params}"
    names = described(body)
    missing = [p for p in params if p not in names]
    extra = sorted(names - set(params))
    assert not missing, f"{name}: Parameters does not describe {missing}"
    assert not extra, f"{name}: Parameters describes {extra}, which the signature does not have"


def test_the_parser_reads_numpydoc():
    """The section parser on a docstring written here (so the test itself can fail)."""
    doc = """Summary.

    Parameters
    ----------
    a, b : float
        Two.
    c_um : float, default 1.0
        One, in µm.
    *rest
        Anything.

    Returns
    -------
    x : float
    """
    assert described(sections(doc)["Parameters"]) == {"a", "b", "c_um", "rest"}
    assert "Returns" in sections(doc)
