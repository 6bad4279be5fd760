"""The house: one import namespace, rooms by role, dependencies pointing one way, no cycles.

Reads the installed package's source with ``ast`` (nothing is executed), so the check holds for
what users get.  Rooms in order; a room may import only itself and the rooms before it.
"""
import ast
from pathlib import Path

import pytest

import fluxfront

ROOMS = ("models", "catalog", "design", "optimizer", "results", "cli")   # physics -> ... -> command line
SHARED = {"fluxfront", "fluxfront.errors", "fluxfront.files"}            # what every room may use


def _modules():
    root = Path(fluxfront.__file__).parent
    for room in ROOMS:
        for path in sorted((root / room).glob("*.py")):
            yield room, path


def _fluxfront_imports(tree, room):
    """(line, imported module, at module level?) for every import of our own code."""
    top = {id(n) for n in tree.body}
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            name = node.module or ""
            if node.level:                       # relative: within the room
                name = f"fluxfront.{room}.{name}".rstrip(".")
            if name.startswith("fluxfront"):
                yield node.lineno, name, id(node) in top
        elif isinstance(node, ast.Import):
            for alias in node.names:
                if alias.name.startswith("fluxfront"):
                    yield node.lineno, alias.name, id(node) in top


@pytest.mark.parametrize("room,path", list(_modules()), ids=lambda v: getattr(v, "name", v))
def test_each_room_imports_only_the_rooms_below_it(room, path):
    allowed = {f"fluxfront.{r}" for r in ROOMS[:ROOMS.index(room) + 1]}
    tree = ast.parse(path.read_text(encoding="utf-8"))
    for line, name, top_level in _fluxfront_imports(tree, room):
        target = ".".join(name.split(".")[:2])
        assert name in SHARED or target in allowed, f"{path.name}:{line} ({room}) imports {name}"
        assert top_level, f"{path.name}:{line}: a function-level import of our own code ({name})"


def test_models_import_nothing_of_ours():
    for room, path in _modules():
        if room == "models":
            tree = ast.parse(path.read_text(encoding="utf-8"))
            own = [n for _, n, _ in _fluxfront_imports(tree, room) if not n.startswith("fluxfront.models")]
            assert not own, f"{path.name} imports {own}"


def test_one_top_level_package():
    """Installing adds one package, fluxfront; every room lives inside it, none beside it."""
    import importlib.metadata as md

    assert md.distribution("fluxfront").read_text("top_level.txt").split() == ["fluxfront"]
    site = Path(fluxfront.__file__).parent.parent
    for room in ROOMS:
        assert (Path(fluxfront.__file__).parent / room / "__init__.py").is_file(), room
        beside = site / room
        assert not (beside.is_dir() and any((beside / name).is_file() for name in ("evaluator.py", "gap_field.py",
                                                                                      "loader.py", "islands.py",
                                                                                      "buildsheet.py", "commands.py")))
