"""The package's own shape: imports between modules follow the contributor guide."""

from __future__ import annotations

import ast
from pathlib import Path

import frameshift

PACKAGE = Path(frameshift.__file__).resolve().parent


def _modules():
    for path in sorted(PACKAGE.rglob("*.py")):
        if "data_demo" in path.relative_to(PACKAGE).parts:
            continue  # a link to the demo data folder and its scripts, not the package
        yield path, ast.parse(path.read_text(), filename=str(path))


def test_no_private_name_is_imported_across_modules():
    # a name with a leading underscore is private to its module (DEVELOPERS.md, Conventions)
    found = []
    for path, tree in _modules():
        for node in ast.walk(tree):
            if isinstance(node, ast.ImportFrom) and (node.module or "").startswith("frameshift"):
                found += [
                    f"{path.relative_to(PACKAGE)}: from {node.module} import {alias.name}"
                    for alias in node.names
                    if alias.name.startswith("_") and not alias.name.startswith("__")
                ]
    assert found == []


def test_modules_below_the_face_never_import_it_for_the_version():
    found = []
    for path, tree in _modules():
        if path.name == "__init__.py" and path.parent == PACKAGE:
            continue
        for node in ast.walk(tree):
            if isinstance(node, ast.ImportFrom) and node.module == "frameshift":
                found += [
                    f"{path.relative_to(PACKAGE)}: {alias.name}"
                    for alias in node.names
                    if alias.name == "__version__"
                ]
    assert found == []


def test_every_public_name_is_listed_and_exists():
    assert sorted(set(frameshift.__all__)) == sorted(frameshift.__all__)
    missing = [name for name in frameshift.__all__ if not hasattr(frameshift, name)]
    assert missing == []
