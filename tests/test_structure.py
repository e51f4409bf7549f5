"""The shape of the import graph of ``synth/``, read with ``ast``: the structure rules, strict.

The project's rules (DEVELOPERS.md, "Structure rules"): no import inside a
function except a named optional heavy dependency (``HEAVY_OPTIONAL``), no
import of another module's underscore names, no import cycle, and records read
by their fields rather than guessed at with ``getattr`` / ``hasattr`` (a
getattr on something that is not a record is allowed only where
``GETATTR_ALLOWED`` names it, with why).  The code meets every rule; each test
fails on the first finding and lists them all.
"""

from __future__ import annotations

import ast
from dataclasses import dataclass, field
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parent.parent / "synth"

HEAVY_OPTIONAL = ("rich", "pyeda", "pysat")
"""Third-party libraries that may be imported inside the function that needs them
(slow to load, or needed only by one method)."""

GETATTR_ALLOWED = {
    ("synth.render", "stream"): "a text stream (the terminal or a test's buffer): only some have isatty",
    ("synth.yamlsrc", "yaml"): "the yaml module: its C loader exists only where libyaml was built in",
}
"""``getattr`` / ``hasattr`` on things that are not records, by (module, the object's
source text): a module or a stream may lack a name; a record never does."""


@dataclass
class Findings:
    function_imports: list[str] = field(default_factory=list)
    private_imports: list[str] = field(default_factory=list)
    allowed_getattr: set[tuple[str, str]] = field(default_factory=set)
    getattr_calls: list[str] = field(default_factory=list)
    edges: dict[str, set[str]] = field(default_factory=dict)


def module_name(path: Path) -> str:
    parts = list(path.relative_to(PACKAGE.parent).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def absolute(module: str, is_package: bool, level: int, target: str | None) -> str:
    """The absolute name of a relative import made in ``module``."""
    if level == 0:
        return target or ""
    base = module.split(".") if is_package else module.split(".")[:-1]
    base = base[: len(base) - (level - 1)]
    return ".".join(base + ([target] if target else []))


def owner(name: str, modules: set[str]) -> str | None:
    while name and name not in modules:
        name = name.rpartition(".")[0]
    return name or None


def scan() -> Findings:
    paths = {module_name(p): p for p in sorted(PACKAGE.rglob("*.py"))}
    modules = set(paths)
    found = Findings(edges={m: set() for m in modules})
    for module, path in paths.items():
        tree = ast.parse(path.read_text(encoding="utf-8"))
        is_package = path.name == "__init__.py"

        def visit(node: ast.AST, in_function: bool) -> None:
            for child in ast.iter_child_nodes(node):
                inner = in_function or isinstance(child, (ast.FunctionDef, ast.AsyncFunctionDef, ast.Lambda))
                where = f"{module}:{getattr(child, 'lineno', '?')}"
                if isinstance(child, (ast.Import, ast.ImportFrom)):
                    record_import(child, module, is_package, in_function, where, modules, found)
                elif (isinstance(child, ast.Call) and isinstance(child.func, ast.Name)
                      and child.func.id in ("getattr", "hasattr") and child.args):
                    key = (module, ast.unparse(child.args[0]))
                    if key in GETATTR_ALLOWED:
                        found.allowed_getattr.add(key)
                    else:
                        found.getattr_calls.append(where)
                visit(child, inner)

        visit(tree, False)
    return found


def record_import(node: ast.Import | ast.ImportFrom, module: str, is_package: bool, in_function: bool,
                  where: str, modules: set[str], found: Findings) -> None:
    if isinstance(node, ast.Import):
        targets = [(a.name, None) for a in node.names]
    else:
        base = absolute(module, is_package, node.level, node.module)
        targets = [(base, a.name) for a in node.names]
    for base, name in targets:
        top = base.split(".")[0]
        if in_function and top not in HEAVY_OPTIONAL:
            found.function_imports.append(f"{where} {base}{'.' + name if name else ''}")
        if top != PACKAGE.name:
            continue
        full = f"{base}.{name}" if name else base
        target = owner(full if full in modules else base, modules)
        if target is None or target == module:
            continue
        found.edges[module].add(target)
        if name and name.startswith("_") and not name.startswith("__") and full not in modules:
            found.private_imports.append(f"{where} {base}.{name}")


def modules_in_cycles(edges: dict[str, set[str]]) -> list[list[str]]:
    """Strongly connected groups of two or more modules (Tarjan's algorithm)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    groups: list[list[str]] = []

    def strong(v: str) -> None:
        index[v] = low[v] = len(index)
        stack.append(v)
        on_stack.add(v)
        for w in sorted(edges[v]):
            if w not in index:
                strong(w)
                low[v] = min(low[v], low[w])
            elif w in on_stack:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            group = []
            while True:
                w = stack.pop()
                on_stack.discard(w)
                group.append(w)
                if w == v:
                    break
            if len(group) > 1:
                groups.append(sorted(group))

    for v in sorted(edges):
        if v not in index:
            strong(v)
    return groups


@pytest.fixture(scope="module")
def findings() -> Findings:
    return scan()


def test_tarjan_finds_a_three_module_cycle_and_no_false_one():
    edges = {"a": {"b"}, "b": {"c"}, "c": {"a"}, "d": {"a"}, "e": set()}
    assert modules_in_cycles(edges) == [["a", "b", "c"]]
    assert modules_in_cycles({"a": {"b"}, "b": set()}) == []


def test_relative_imports_resolve_like_the_interpreter():
    # `from ..errors import X` in synth/commands/bin.py, `from . import x` in a package __init__
    assert absolute("synth.commands.bin", False, 2, "errors") == "synth.errors"
    assert absolute("synth.exports", True, 1, "svg") == "synth.exports.svg"


def test_no_function_level_imports(findings):
    assert findings.function_imports == [], \
        "imports inside functions (move them to the top; a cycle means the shared thing " \
        "belongs in the module that owns the idea):\n" + "\n".join(findings.function_imports)


def test_no_private_imports(findings):
    assert findings.private_imports == [], "\n".join(findings.private_imports)


def test_no_import_cycles(findings):
    assert modules_in_cycles(findings.edges) == []


def test_no_getattr_on_records(findings):
    assert findings.getattr_calls == [], \
        "getattr / hasattr (read the record's field; a non-record goes in GETATTR_ALLOWED " \
        "with why):\n" + "\n".join(findings.getattr_calls)


def test_every_allowed_getattr_is_still_there(findings):
    assert findings.allowed_getattr == set(GETATTR_ALLOWED), "drop the allow-list entries no longer used"
