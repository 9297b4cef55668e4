"""The shape of ``server/``: no import cycles, layers imported one way only, the engine and
the synthetic simulators on numerics alone, engine topics in a fixed order, and small
folders. Each check is shown failing on a small synthetic package first (tests of the test).
"""

from __future__ import annotations

import textwrap
from pathlib import Path

import pytest

from tests.conftest import ROOT
from tests.structure import (
    cycles,
    foreign_imports,
    internal_graph,
    modules,
    topic_order_violations,
    wrong_way_imports,
)

SERVER = ROOT / "server"

BELOW_WEB = {"server.services", "server.db", "server.engine", "server.settings"}
#: Which layer may import which (DEVELOPERS.md, "Layer rules"). A layer always imports itself.
LAYERS = {
    "server.settings": set(),
    "server.engine": set(),
    "server.synthetic": {"server.engine"},
    "server.db": {"server.settings"},
    "server.services": {"server.db", "server.engine", "server.synthetic", "server.settings"},
    # web: the cross-cutting modules at its top, then schemas and charts, then pages and
    # the API side by side (neither imports the other: what both need lives at the top).
    "server.web": {"server.web.schemas", *BELOW_WEB},
    "server.web.schemas": BELOW_WEB,
    "server.web.charts": {"server.web", *BELOW_WEB},
    "server.web.pages": {"server.web", "server.web.schemas", "server.web.charts", *BELOW_WEB},
    "server.web.api": {"server.web", "server.web.schemas", *BELOW_WEB},
    "server.app": {"server.web", "server.web.pages", "server.web.api", "server.web.schemas", *BELOW_WEB},
    "server.cli": {"server.app", "server.services", "server.db", "server.engine", "server.settings"},
}

#: Engine topics by rank: a topic imports itself or lower ranks only, so the topics form a
#: ladder a reader can climb (kernels, then PVT, ...). Kernels are shared by every topic.
ENGINE_TOPICS = {
    **dict.fromkeys(
        ("errors", "units", "stats", "outliers", "modelfit", "thresholds", "plan", "accel", "bounded_lm"), 0
    ),
    "pvt": 1,
    "volumetrics": 1,
    "inputs": 2,
    "prepare": 3,
    "tank": 4,
    "aquifer": 5,
    "compartments": 5,
    "diagnosis": 6,
    "headline": 7,
    "forecast": 8,
    "analysis": 9,
    "warm": 10,  # compiles the kernels of aquifer and compartments (python -m server.engine.warm)
}
KERNELS = ("errors", "units", "stats", "outliers", "modelfit", "thresholds", "plan", "accel", "bounded_lm")

#: The synthetic forward models are the estimators' independent oracles: they may use the
#: fluid properties and units, never an estimator.
SYNTHETIC_MAY_USE = ("server.synthetic", "server.engine.pvt", "server.engine.units", "server.engine.errors")

MAX_MODULES_PER_FOLDER = 15


def _package(tmp_path: Path, files: dict[str, str]) -> Path:
    root = tmp_path / "pkg"
    for name, text in files.items():
        path = root / name
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(textwrap.dedent(text))
    return root


# -- tests of the checks, on synthetic packages ------------------------------------------


def test_cycle_check_finds_a_loop_through_a_function_level_import(tmp_path):
    root = _package(
        tmp_path,
        {
            "__init__.py": "",
            "a.py": "from .b import x\n",
            "b.py": "def f():\n    from .c import y\n",
            "c.py": "from typing import TYPE_CHECKING\nif TYPE_CHECKING:\n    from pkg.a import z\n",
            "d.py": "from . import a\n",
        },
    )
    assert cycles(internal_graph(root)) == [["pkg.a", "pkg.b", "pkg.c"]]


def test_cycle_check_passes_a_tree_without_loops(tmp_path):
    root = _package(tmp_path, {"__init__.py": "", "a.py": "from .b import x\n", "b.py": "import os\n"})
    assert cycles(internal_graph(root)) == []


def test_layer_check_finds_a_wrong_way_import(tmp_path):
    root = _package(
        tmp_path,
        {
            "__init__.py": "",
            "engine/__init__.py": "",
            "engine/core.py": "from ..web import page\n",
            "web/__init__.py": "",
            "web/page.py": "from ..engine.core import x\n",
        },
    )
    problems = wrong_way_imports(root, {"pkg.engine": set(), "pkg.web": {"pkg.engine"}})
    assert problems == ["pkg.engine.core:1 imports pkg.web.page (pkg.engine may not import pkg.web)"]


def test_numerics_check_finds_a_web_import_in_the_engine(tmp_path):
    root = _package(
        tmp_path,
        {
            "__init__.py": "",
            "engine/__init__.py": "",
            "engine/ok.py": "import math\nimport numpy as np\nfrom scipy import optimize\n",
            "engine/bad.py": "import sqlalchemy\nfrom fastapi import APIRouter\n",
        },
    )
    problems = foreign_imports(root, ("pkg.engine",), {"numpy", "scipy"}, ("pkg.engine",))
    assert problems == ["pkg.engine.bad:1 imports sqlalchemy", "pkg.engine.bad:2 imports fastapi"]


def test_topic_order_check_finds_an_upward_import(tmp_path):
    root = _package(
        tmp_path,
        {
            "__init__.py": "",
            "low/__init__.py": "",
            "low/a.py": "from ..high.b import x\n",
            "high/__init__.py": "",
            "high/b.py": "from ..low.a import y\n",
        },
    )
    problems = topic_order_violations(root, "pkg", {"low": 0, "high": 1})
    assert len(problems) == 1 and problems[0].startswith("pkg.low.a:1 imports pkg.high.b")


def test_topic_order_check_lets_kernels_share_a_rank(tmp_path):
    root = _package(
        tmp_path,
        {"__init__.py": "", "errors.py": "", "units.py": "from .errors import E\n", "pvt.py": ""},
    )
    ranks = {"errors": 0, "units": 0, "pvt": 0}
    assert topic_order_violations(root, "pkg", ranks, shared=("errors", "units")) == []
    assert topic_order_violations(root, "pkg", ranks) != []


# -- the checks on server/ -----------------------------------------------------------------


def test_no_import_cycles_in_server():
    assert cycles(internal_graph(SERVER)) == []


def test_layers_are_imported_one_way():
    assert wrong_way_imports(SERVER, LAYERS) == []


@pytest.mark.parametrize(
    ("package", "allowed_internal"),
    [("server.engine", ("server.engine",)), ("server.synthetic", SYNTHETIC_MAY_USE)],
)
def test_engine_and_synthetic_import_only_numerics(package, allowed_internal):
    # numba: the engine's optional compiled kernels (server/engine/accel.py, issue 17)
    assert foreign_imports(SERVER, (package,), {"numpy", "scipy", "numba"}, allowed_internal) == []


def test_engine_topics_import_down_the_ladder():
    assert topic_order_violations(SERVER, "server.engine", ENGINE_TOPICS, shared=KERNELS) == []


def test_every_engine_module_belongs_to_a_ranked_topic():
    for name in modules(SERVER):
        if name.startswith("server.engine."):
            assert name.split(".")[2] in ENGINE_TOPICS, f"{name}: add its topic to ENGINE_TOPICS"


def test_folders_stay_small_and_packages_say_what_they_hold():
    for folder in [SERVER, *(p for p in SERVER.rglob("*") if p.is_dir() and p.name != "__pycache__")]:
        py = [p for p in folder.glob("*.py") if p.name != "__init__.py"]
        assert len(py) <= MAX_MODULES_PER_FOLDER, f"{folder.relative_to(ROOT)} holds {len(py)} modules"
        init = folder / "__init__.py"
        if py and folder != SERVER:
            assert init.exists(), f"{folder.relative_to(ROOT)} is not a package"
            text = init.read_text().strip()
            assert text.startswith('"""') and len(text) > 10, f"{init.relative_to(ROOT)} needs a docstring"
