"""The package's house plan, checked by reading every module's imports (top-level and lazy).

- Dependencies point one way, down the map in ``rheofit/__init__.py``:
  cli -> jobs -> report -> lots -> flow -> fitting -> ingest -> fluid -> models -> ground floor.
  Inside one sub-package any order is allowed, as long as there is no cycle.
- No import cycle between modules, counting imports inside functions too.
- No private name (``_name``) imported from another module.

# common practice, no source: layered packages with acyclic imports (the house style, STYLE.md)
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parent.parent / "rheofit"

#: the map, bottom first; a module's layer is that of the longest matching prefix
LAYERS = (
    ("rheofit.errors",),
    ("rheofit.version", "rheofit.units", "rheofit.output", "rheofit.progress", "rheofit.curve",
     "rheofit.markup", "rheofit.sample_data"),
    ("rheofit.models",),
    ("rheofit.fluid",),
    ("rheofit.ingest",),
    ("rheofit.fitting",),
    ("rheofit.flow",),
    ("rheofit.lots",),
    ("rheofit.report",),
    ("rheofit.jobs",),
    ("rheofit.cli",),
    ("rheofit",),
)


def _module_name(path: Path) -> str:
    parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


MODULES = {_module_name(p): p for p in sorted(PACKAGE.rglob("*.py"))}


def layer(module: str) -> int:
    best, found = -1, None
    for index, prefixes in enumerate(LAYERS):
        for prefix in prefixes:
            if (module == prefix or module.startswith(prefix + ".")) and len(prefix) > best:
                best, found = len(prefix), index
    assert found is not None, f"{module} is on no layer of the map"
    return found


def _package_of(module: str) -> str:
    return module if MODULES[module].name == "__init__.py" else module.rpartition(".")[0]


def imports(module: str) -> list[tuple[str, str | None, int]]:
    """(imported module, imported name or None, line) for every rheofit import in ``module``."""
    tree = ast.parse(MODULES[module].read_text(encoding="utf-8"))
    found = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            found += [(a.name, None, node.lineno) for a in node.names if a.name.startswith("rheofit")]
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                base = ".".join(_package_of(module).split(".")[: len(_package_of(module).split(".")) - node.level + 1]
                                + ([node.module] if node.module else []))
            if not base.startswith("rheofit"):
                continue
            for alias in node.names:
                sub = f"{base}.{alias.name}"
                found.append((sub, None, node.lineno) if sub in MODULES else (base, alias.name, node.lineno))
    return found


def edges() -> dict[str, set[str]]:
    graph = {m: set() for m in MODULES}
    for module in MODULES:
        for target, _, _ in imports(module):
            if target in MODULES and target != module:
                graph[module].add(target)
    return graph


def test_every_module_is_on_the_map():
    for module in MODULES:
        layer(module)


def test_no_import_points_up_the_map():
    upward = []
    for module in MODULES:
        for target, _, line in imports(module):
            if target in MODULES and layer(target) > layer(module):
                upward.append(f"{module}:{line} imports {target}")
    assert upward == []


def test_no_private_name_from_another_module():
    private = [f"{module}:{line} imports {name} from {target}"
               for module in MODULES for target, name, line in imports(module)
               if name is not None and name.startswith("_") and target != module]
    assert private == []


def _cycle(graph) -> list[str] | None:
    state, stack = {}, []

    def visit(node):
        state[node] = "open"
        stack.append(node)
        for nxt in sorted(graph[node]):
            if state.get(nxt) == "open":
                return stack[stack.index(nxt):] + [nxt]
            if nxt not in state and (found := visit(nxt)):
                return found
        state[node] = "done"
        stack.pop()
        return None

    for start in sorted(graph):
        if start not in state and (found := visit(start)):
            return found
    return None


def test_no_import_cycle():
    assert _cycle(edges()) is None


def test_the_checks_can_fail():
    """The cycle finder and the layer rule catch a planted fault (so the tests above can fail)."""
    assert _cycle({"a": {"b"}, "b": {"a"}}) == ["a", "b", "a"]
    assert layer("rheofit.cli.fit") > layer("rheofit.flow.engine") > layer("rheofit.models.catalogue")


@pytest.mark.parametrize("module", sorted(m for m in MODULES if m.startswith("rheofit.cli")))
def test_each_command_module_imports_alone(module):
    """Every CLI module imports on its own (no import that only works in one order)."""
    import subprocess
    import sys

    done = subprocess.run([sys.executable, "-c", f"import {module}"], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
