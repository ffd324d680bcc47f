"""The package's architecture, checked by reading its source (an AST walk).

Layers import one way only::

    cli -> validation -> documents / data -> analysis -> families -> core

and, in every module of ``src/lotwise``:

* no import cycle between modules (lazy imports inside functions count;
  imports under ``if TYPE_CHECKING:`` do not);
* no import from a higher layer;
* no import of another module's ``_private`` name;
* typer only under ``cli``; matplotlib only under ``documents`` and ``data``;
* no function longer than 100 lines.

Source: the project's own architecture rules (DEVELOPERS.md, "Layout");
the checks are exact (no tolerance). The allow-lists below must stay empty.
"""

from __future__ import annotations

import ast
import os
from pathlib import Path

import pytest

SRC = Path(__file__).resolve().parents[1] / "src" / "lotwise"

#: Layer rank of each top-level subpackage; a module may import only from its
#: own rank or below. ``lotwise/__init__.py`` (the public API) sits on top.
RANK = {"core": 0, "families": 1, "analysis": 2, "documents": 3, "data": 3,
        "validation": 4, "web": 5, "cli": 6, "api": 7, "__init__": 7, "__main__": 7}

ALLOW_CYCLES: set = set()
ALLOW_UPWARD: set = set()
ALLOW_PRIVATE: set = set()
ALLOW_LONG: set = set()


def _module_name(path: Path) -> str:
    rel = path.relative_to(SRC.parent).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join(parts)


def _is_type_checking(node) -> bool:
    test = node.test
    return (isinstance(test, ast.Name) and test.id == "TYPE_CHECKING") or (
        isinstance(test, ast.Attribute) and test.attr == "TYPE_CHECKING")


def _imports(tree: ast.AST, module: str, is_pkg: bool):
    """Yield ``(target_module, name_or_None, lineno)`` for every import,
    skipping ``if TYPE_CHECKING:`` blocks."""
    package = module if is_pkg else module.rsplit(".", 1)[0]

    def visit(node):
        for child in ast.iter_child_nodes(node):
            if isinstance(child, ast.If) and _is_type_checking(child):
                for sub in child.orelse:
                    yield from visit_one(sub)
                continue
            yield from visit_one(child)

    def visit_one(node):
        if isinstance(node, ast.Import):
            for a in node.names:
                yield a.name, None, node.lineno
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")
                base = base[: len(base) - (node.level - 1)] if node.level > 1 else base
                target = ".".join(base + ([node.module] if node.module else []))
            else:
                target = node.module or ""
            for a in node.names:
                yield target, a.name, node.lineno
        yield from visit(node)

    yield from visit(tree)


def _scan():
    modules = {}
    for path in sorted(SRC.rglob("*.py")):
        name = _module_name(path)
        tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
        modules[name] = (path, tree)
    return modules


MODULES = _scan()


def _resolve(target: str, name: str | None) -> str | None:
    """The lotwise module an import refers to (a submodule when ``name`` is one)."""
    if not target.startswith("lotwise"):
        return None
    if name and f"{target}.{name}" in MODULES:
        return f"{target}.{name}"
    return target if target in MODULES else None


def _layer(module: str) -> int:
    parts = module.split(".")
    if len(parts) == 1:
        return RANK["__init__"]
    return RANK[parts[1]]


def _graph():
    edges = {m: set() for m in MODULES}
    for mod, (path, tree) in MODULES.items():
        for target, name, _ in _imports(tree, mod, path.name == "__init__.py"):
            dep = _resolve(target, name)
            if dep and dep != mod:
                edges[mod].add(dep)
    return edges


def test_every_subpackage_has_a_rank():
    for mod in MODULES:
        parts = mod.split(".")
        if len(parts) > 1:
            assert parts[1] in RANK, f"{mod}: add its subpackage to RANK"


def test_no_upward_imports():
    bad = []
    for mod, deps in _graph().items():
        for dep in deps:
            # a package's __init__ importing its own submodules is not upward
            if dep.startswith(mod + "."):
                continue
            if _layer(dep) > _layer(mod) and (mod, dep) not in ALLOW_UPWARD:
                bad.append(f"{mod} -> {dep}")
    assert not bad, "imports from a higher layer:\n" + "\n".join(sorted(bad))


def test_no_cycles():
    edges = _graph()
    # parent packages' __init__ are not edges of interest for cycles when empty
    index, low, stack, on, sccs = {}, {}, [], set(), []
    counter = [0]

    def strong(v):
        index[v] = low[v] = counter[0]
        counter[0] += 1
        stack.append(v)
        on.add(v)
        for w in edges[v]:
            if w not in index:
                strong(w)
                low[v] = min(low[v], low[w])
            elif w in on:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            comp = []
            while True:
                w = stack.pop()
                on.discard(w)
                comp.append(w)
                if w == v:
                    break
            if len(comp) > 1:
                sccs.append(tuple(sorted(comp)))

    for v in edges:
        if v not in index:
            strong(v)
    cycles = [c for c in sccs if c not in ALLOW_CYCLES]
    assert not cycles, "import cycles:\n" + "\n".join(" <-> ".join(c) for c in cycles)


def test_no_private_imports_across_modules():
    bad = []
    for mod, (path, tree) in MODULES.items():
        for target, name, line in _imports(tree, mod, path.name == "__init__.py"):
            if not target.startswith("lotwise"):
                continue
            if name and name.startswith("_") and not name.startswith("__"):
                if _resolve(target, name) != mod and (mod, name) not in ALLOW_PRIVATE:
                    bad.append(f"{mod}:{line} imports {target}.{name}")
            leaf = target.rsplit(".", 1)[-1]
            if leaf.startswith("_") and leaf not in ("__init__", "__main__"):
                bad.append(f"{mod}:{line} imports private module {target}")
    assert not bad, "private names imported across modules:\n" + "\n".join(bad)


@pytest.mark.parametrize("package, allowed", [
    ("typer", ("cli",)),
    ("click", ("cli",)),
    ("matplotlib", ("documents", "data")),
])
def test_third_party_confined(package, allowed):
    bad = []
    for mod, (path, tree) in MODULES.items():
        parts = mod.split(".")
        where = parts[1] if len(parts) > 1 else "__init__"
        for target, _name, line in _imports(tree, mod, path.name == "__init__.py"):
            if target.split(".")[0] == package and where not in allowed:
                bad.append(f"{mod}:{line} imports {target}")
    assert not bad, f"{package} imported outside {allowed}:\n" + "\n".join(bad)


def test_no_function_over_100_lines():
    bad = []
    for mod, (_path, tree) in MODULES.items():
        for node in ast.walk(tree):
            if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef)):
                length = node.end_lineno - node.lineno + 1
                if length > 100 and (mod, node.name) not in ALLOW_LONG:
                    bad.append(f"{mod}.{node.name}: {length} lines")
    assert not bad, "functions over 100 lines:\n" + "\n".join(bad)


def test_the_checker_sees_a_violation():
    """The walk itself works: a made-up module importing upward is caught."""
    tree = ast.parse("def f():\n    from lotwise.cli import main\n")
    found = [(t, n) for t, n, _ in _imports(tree, "lotwise.core.fake", False)]
    assert ("lotwise.cli", "main") in found
    tree = ast.parse("from typing import TYPE_CHECKING\nif TYPE_CHECKING:\n"
                     "    from lotwise.cli import main\n")
    assert [t for t, _n, _ in _imports(tree, "lotwise.core.fake", False)] == ["typing"]


def test_cli_sets_one_blas_thread_unless_told(tmp_path):
    """The command line asks numpy's BLAS for one thread (its start-up is the
    only cost a pool brings to element-wise kernels), and keeps a count the user
    set (common practice, no source)."""
    import subprocess
    import sys

    code = ("import os, sys\n"
            "from lotwise.cli import main\n"
            "main(['--version'])\n"
            "import numpy\n"
            "print(os.environ.get('OPENBLAS_NUM_THREADS'), 'numpy' in sys.modules)\n")
    env = {k: v for k, v in os.environ.items()
           if k not in ("OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS")}
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         env=env, check=True).stdout.split()
    assert out[-2:] == ["1", "True"]
    env["OPENBLAS_NUM_THREADS"] = "2"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         env=env, check=True).stdout.split()
    assert out[-2:] == ["2", "True"]
