"""The package's layers, read from its imports: an import may point only to its own layer or one below.

This replaces a hand-kept table (which drifted from the code). The order, lowest first:

    foundation (elimscan/*.py) -> config -> chem -> results -> analysis -> engines -> drivers -> pipeline
    -> output -> batch -> cli (elimscan/cli/, elimscan/__main__.py)

Imports inside functions count too: they are how a layer reaches down lazily, never up. The package face
(``elimscan/__init__.py``) sits above every layer: it names the public API and loads each name lazily by its
module path (``tests/test_public_api.py`` checks every name resolves), so no module of a layer imports it
except for ``__version__``.
"""

from __future__ import annotations

import ast
from pathlib import Path

import elimscan

PACKAGE = Path(elimscan.__file__).resolve().parent
ORDER = ("foundation", "config", "chem", "results", "analysis", "engines", "drivers", "pipeline", "output", "batch", "cli")
TOP_MODULES = {"cli", "__main__"}


def layer_of(module: str) -> str:
    """Return the layer of a dotted module name inside elimscan."""
    parts = module.split(".")
    if len(parts) == 1:
        return "foundation"
    if parts[1] in TOP_MODULES:
        return "cli"
    if (PACKAGE / parts[1]).is_dir():
        return parts[1]
    return "foundation"


def module_name(path: Path) -> str:
    """Return the dotted module name of a file of the package."""
    parts = path.relative_to(PACKAGE.parent).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def imports_of(path: Path) -> list[tuple[str, int]]:
    """Return (imported elimscan module, line) for every import statement of a file, at any depth."""
    found = []
    for node in ast.walk(ast.parse(path.read_text(), str(path))):
        if isinstance(node, ast.ImportFrom) and node.level == 0 and (node.module or "").startswith("elimscan"):
            found.append((node.module, node.lineno))
        elif isinstance(node, ast.Import):
            found += [(a.name, node.lineno) for a in node.names if a.name.startswith("elimscan")]
    return found


def test_every_subpackage_has_a_place_in_the_layer_order():
    subpackages = {p.name for p in PACKAGE.iterdir() if (p / "__init__.py").exists()}
    assert subpackages <= set(ORDER), f"place {sorted(subpackages - set(ORDER))} in ORDER of this test"
    assert all((PACKAGE / name / "__init__.py").read_text().strip() for name in subpackages)


def test_no_import_points_up_the_layer_order():
    wrong = []
    for path in sorted(PACKAGE.rglob("*.py")):
        me = module_name(path)
        for target, line in imports_of(path):
            if target != "elimscan" and ORDER.index(layer_of(target)) > ORDER.index(layer_of(me)):
                wrong.append(f"{path.relative_to(PACKAGE.parent)}:{line}: {me} ({layer_of(me)}) imports "
                             f"{target} ({layer_of(target)})")
    assert not wrong, "\n".join(wrong)


def test_relative_imports_are_not_used():
    # absolute imports only, so that this test sees every arrow
    relative = [f"{p.relative_to(PACKAGE.parent)}:{n.lineno}" for p in PACKAGE.rglob("*.py")
                for n in ast.walk(ast.parse(p.read_text())) if isinstance(n, ast.ImportFrom) and n.level]
    assert not relative


def test_the_check_sees_an_arrow_that_points_up(tmp_path):
    # the checker itself: a chemistry module that imports the batch layer is caught
    bad = PACKAGE / "chem" / "structures.py"
    assert layer_of(module_name(bad)) == "chem" and layer_of("elimscan.batch.driver") == "batch"
    probe = tmp_path / "probe.py"
    probe.write_text("def f():\n    from elimscan.batch.driver import run_batch\n")
    assert imports_of(probe) == [("elimscan.batch.driver", 2)]
    assert ORDER.index(layer_of("elimscan.batch.driver")) > ORDER.index(layer_of(module_name(bad)))
