"""The package keeps the shape DEVELOPERS.md promises: small modules, short functions, no import cycle.

A module over 450 lines or a function over 80 must say why in one line: a comment starting
`# long:` on the line above the `def`, or, for a module, at the top level before its first code.
"""

from __future__ import annotations

import ast
from pathlib import Path

import notegen

PACKAGE = Path(notegen.__file__).resolve().parent
MAX_MODULE_LINES = 450
MAX_FUNCTION_LINES = 80


def _modules() -> list[Path]:
    return sorted(p for p in PACKAGE.rglob("*.py") if "_data" not in p.parts)


def _says_why(lines: list[str], index: int) -> bool:
    return index > 0 and lines[index - 1].strip().startswith("# long:")


def test_no_module_is_long_without_a_reason() -> None:
    long = []
    for path in _modules():
        lines = path.read_text(encoding="utf-8").splitlines()
        first_code = next((i for i, line in enumerate(lines) if line.startswith(("def ", "class ", "@"))), len(lines))
        if len(lines) > MAX_MODULE_LINES and not any(line.startswith("# long:") for line in lines[:first_code]):
            long.append(f"{path.relative_to(PACKAGE)}: {len(lines)} lines")
    assert long == []


def test_no_function_is_long_without_a_reason() -> None:
    long = []
    for path in _modules():
        text = path.read_text(encoding="utf-8")
        lines = text.splitlines()
        for node in ast.walk(ast.parse(text)):
            if isinstance(node, ast.FunctionDef | ast.AsyncFunctionDef):
                first = min([node.lineno, *(d.lineno for d in node.decorator_list)])
                length = (node.end_lineno or node.lineno) - node.lineno + 1
                if length > MAX_FUNCTION_LINES and not _says_why(lines, first - 1):
                    long.append(f"{path.relative_to(PACKAGE)}:{node.lineno} {node.name}: {length} lines")
    assert long == []


def _imports(path: Path) -> set[str]:
    """Every notegen module this file imports, at the top or inside a function; not those under TYPE_CHECKING.

    `from package import name` counts as importing `package.name` when that is a module, and the
    package itself otherwise; a package's own `__init__` being run first is implied by every import.
    """
    tree = ast.parse(path.read_text(encoding="utf-8"))
    skipped = {
        id(child)
        for node in ast.walk(tree)
        if isinstance(node, ast.If) and "TYPE_CHECKING" in ast.unparse(node.test)
        for child in ast.walk(node)
    }
    found: set[str] = set()
    for node in ast.walk(tree):
        if id(node) in skipped:
            continue
        if isinstance(node, ast.ImportFrom) and node.module and node.level == 0 and node.module.startswith("notegen"):
            for alias in node.names:
                submodule = f"{node.module}.{alias.name}"
                found.add(submodule if _is_module(submodule) else node.module)
        elif isinstance(node, ast.Import):
            found.update(alias.name for alias in node.names if alias.name.startswith("notegen"))
    return found


def _is_module(name: str) -> bool:
    relative = Path(*name.split(".")[1:])
    return (PACKAGE / relative).with_suffix(".py").is_file() or (PACKAGE / relative / "__init__.py").is_file()


def _module_name(path: Path) -> str:
    parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def test_no_import_cycle() -> None:
    """No module reaches itself through imports, lazy ones included (Tarjan's strongly connected components)."""
    graph = {_module_name(p): set() for p in _modules()}
    for path in _modules():
        graph[_module_name(path)] = {m for m in _imports(path) if m in graph and m != _module_name(path)}
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    cycles: list[list[str]] = []

    def visit(name: str) -> None:
        index[name] = low[name] = len(index)
        stack.append(name)
        on_stack.add(name)
        for other in sorted(graph[name]):
            if other not in index:
                visit(other)
                low[name] = min(low[name], low[other])
            elif other in on_stack:
                low[name] = min(low[name], index[other])
        if low[name] == index[name]:
            component = []
            while True:
                member = stack.pop()
                on_stack.discard(member)
                component.append(member)
                if member == name:
                    break
            if len(component) > 1:
                cycles.append(sorted(component))

    for name in sorted(graph):
        if name not in index:
            visit(name)
    assert cycles == []
