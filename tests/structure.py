"""The import structure of a package tree, read with ``ast`` (nothing is imported).

Used by tests/test_structure.py on ``server/`` and, in the same tests, on small synthetic
packages that show each check failing. Every import counts: module level, inside
functions and under ``if TYPE_CHECKING`` alike, because a loop hidden in a function is
still a loop a reader has to untangle.
"""

from __future__ import annotations

import ast
import sys
from dataclasses import dataclass
from pathlib import Path


@dataclass(frozen=True)
class ImportEdge:
    source: str  # importing module, dotted
    target: str  # imported module (or package), dotted
    line: int


def module_name(path: Path, root: Path) -> str:
    parts = list(path.relative_to(root.parent).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join(parts)


def modules(root: Path) -> dict[str, Path]:
    """Every module of the package at ``root`` by dotted name (packages by their __init__)."""
    return {module_name(p, root): p for p in sorted(root.rglob("*.py"))}


def imports(root: Path) -> list[ImportEdge]:
    """Every import of every module under ``root``, resolved to absolute dotted names.

    ``from pkg import name`` points at ``pkg.name`` when that is a module, else at ``pkg``.
    Imports from outside the tree are kept with their top-level name (for the
    third-party rules)."""
    known = modules(root)
    edges = []
    for name, path in known.items():
        is_package = path.name == "__init__.py"
        package = name.split(".") if is_package else name.split(".")[:-1]
        for node in ast.walk(ast.parse(path.read_text(), filename=str(path))):
            if isinstance(node, ast.Import):
                edges += [ImportEdge(name, a.name, node.lineno) for a in node.names]
            elif isinstance(node, ast.ImportFrom):
                if node.level:
                    base = package[: len(package) - node.level + 1]
                    target = ".".join(base + ([node.module] if node.module else []))
                else:
                    target = node.module or ""
                for a in node.names:
                    candidate = f"{target}.{a.name}"
                    edges.append(ImportEdge(name, candidate if candidate in known else target, node.lineno))
    return edges


def internal_graph(root: Path) -> dict[str, set[str]]:
    """Module -> the modules of the same tree it imports (packages resolved to their __init__)."""
    known = modules(root)
    graph: dict[str, set[str]] = {m: set() for m in known}
    for e in imports(root):
        target = e.target
        while target and target not in known:  # ``import a.b.c`` of a name inside a module
            target = target.rpartition(".")[0]
        if target and target != e.source:
            graph[e.source].add(target)
    return graph


def cycles(graph: dict[str, set[str]]) -> list[list[str]]:
    """Strongly connected components with more than one module (Tarjan 1972), sorted."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on_stack: set[str] = set()
    found: list[list[str]] = []
    counter = [0]

    def visit(v: str) -> None:
        index[v] = low[v] = counter[0]
        counter[0] += 1
        stack.append(v)
        on_stack.add(v)
        for w in sorted(graph.get(v, ())):
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on_stack:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            component = []
            while True:
                w = stack.pop()
                on_stack.discard(w)
                component.append(w)
                if w == v:
                    break
            if len(component) > 1:
                found.append(sorted(component))

    limit = sys.getrecursionlimit()
    sys.setrecursionlimit(max(limit, 10_000))
    try:
        for v in sorted(graph):
            if v not in index:
                visit(v)
    finally:
        sys.setrecursionlimit(limit)
    return sorted(found)


def layer_of(module: str, layers: dict[str, int]) -> tuple[str, int] | None:
    """The longest prefix of ``module`` that names a layer, with its rank."""
    parts = module.split(".")
    for i in range(len(parts), 0, -1):
        prefix = ".".join(parts[:i])
        if prefix in layers:
            return prefix, layers[prefix]
    return None


def wrong_way_imports(root: Path, allowed: dict[str, set[str]]) -> list[str]:
    """Imports between layers that ``allowed`` (layer -> layers it may import) does not list.

    A module may always import inside its own layer. Layers are dotted prefixes; the
    longest prefix decides."""
    ranks = {name: 0 for name in allowed}
    problems = []
    for e in imports(root):
        src = layer_of(e.source, ranks)
        dst = layer_of(e.target, ranks)
        if src is None or dst is None or src[0] == dst[0]:
            continue
        if dst[0] not in allowed[src[0]]:
            problems.append(f"{e.source}:{e.line} imports {e.target} ({src[0]} may not import {dst[0]})")
    return problems


def topic_order_violations(
    root: Path, package: str, ranks: dict[str, int], shared: tuple[str, ...] = ()
) -> list[str]:
    """Inside ``package``, a module may import its own topic or a topic of lower rank only.

    ``ranks`` maps the package's subpackages and top-level modules (dotted, relative to
    ``package``) to a rank; equal ranks of different topics may not import each other.
    The names in ``shared`` count as one topic (kernels that may import each other)."""
    problems = []
    full = {f"{package}.{k}": v for k, v in ranks.items()}
    for e in imports(root):
        if not (e.source.startswith(package + ".") and e.target.startswith(package + ".")):
            continue
        src = layer_of(e.source, full)
        dst = layer_of(e.target, full)
        if src is None:
            problems.append(f"{e.source} is in no ranked topic of {package}")
            continue
        if dst is None:
            problems.append(f"{e.source}:{e.line} imports {e.target}, which is in no ranked topic")
            continue
        one_topic = src[0] == dst[0] or {src[0], dst[0]} <= {f"{package}.{k}" for k in shared}
        if not one_topic and dst[1] >= src[1]:
            problems.append(
                f"{e.source}:{e.line} imports {e.target} ({src[0]} rank {src[1]} may import only "
                f"lower ranks; {dst[0]} is rank {dst[1]})"
            )
    return problems


def foreign_imports(
    root: Path, packages: tuple[str, ...], allowed_top: set[str], allowed_internal: tuple[str, ...]
):
    """Imports by modules under ``packages`` of anything but the standard library, the
    ``allowed_top`` third-party names and the ``allowed_internal`` prefixes of the tree."""
    own = root.name
    problems = []
    for e in imports(root):
        if not e.source.startswith(packages):
            continue
        top = e.target.split(".")[0]
        if top == own:
            if not e.target.startswith(allowed_internal):
                problems.append(f"{e.source}:{e.line} imports {e.target}")
        elif top not in sys.stdlib_module_names and top not in allowed_top and top != "__future__":
            problems.append(f"{e.source}:{e.line} imports {e.target}")
    return problems
