"""service/physics stays pure: numpy, scipy and the standard library only."""

import ast
import pathlib
import sys

import pytest

PHYSICS = pathlib.Path(__file__).resolve().parents[2] / "service" / "physics"
ALLOWED_THIRD_PARTY = {"numpy", "scipy"}


@pytest.mark.parametrize("path", sorted(PHYSICS.glob("*.py")), ids=lambda p: p.name)
def test_physics_imports_only_numpy_scipy_stdlib(path):
    tree = ast.parse(path.read_text())
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            names = [alias.name for alias in node.names]
        elif isinstance(node, ast.ImportFrom):
            if node.level:  # relative import inside service.physics
                continue
            names = [node.module or ""]
        else:
            continue
        for name in names:
            top = name.split(".")[0]
            assert top in ALLOWED_THIRD_PARTY or top in sys.stdlib_module_names, (
                f"{path.name} imports {name}"
            )
