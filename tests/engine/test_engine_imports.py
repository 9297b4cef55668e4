"""The engine (and the synthetic simulators) import only the standard library, numpy and scipy."""

import ast
import sys

from tests.conftest import ROOT

ALLOWED_THIRD_PARTY = {"numpy", "scipy"}


def _imports(path):
    tree = ast.parse(path.read_text(), filename=str(path))
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for a in node.names:
                yield a.name.split(".")[0], 0
        elif isinstance(node, ast.ImportFrom):
            yield (node.module or "").split(".")[0], node.level


def test_engine_and_synthetic_import_only_numerics():
    offenders = []
    for pkg in ("engine", "synthetic"):
        for path in sorted((ROOT / "server" / pkg).rglob("*.py")):
            for name, level in _imports(path):
                if level:  # relative: must stay inside server.engine / server.synthetic
                    continue
                if name in sys.stdlib_module_names or name in ALLOWED_THIRD_PARTY or name == "__future__":
                    continue
                offenders.append(f"{path.relative_to(ROOT)} imports {name}")
    assert not offenders, offenders


def test_relative_imports_stay_in_numerics():
    for pkg in ("engine", "synthetic"):
        for path in sorted((ROOT / "server" / pkg).rglob("*.py")):
            for node in ast.walk(ast.parse(path.read_text())):
                if isinstance(node, ast.ImportFrom) and node.level >= 2:
                    target = (node.module or "").split(".")[0]
                    assert target in ("engine", "synthetic"), f"{path}: from {'.' * node.level}{node.module}"
