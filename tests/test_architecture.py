"""The import graph between symcirc's top-level packages and modules follows the data flow.

Every module is parsed with `ast` and every `import` / `from ... import` anywhere in it
(inside functions too, relative or absolute) counts. A unit may import units of earlier
layers only; within a layer, only the pairs listed in SAME_LAYER.
"""

from __future__ import annotations

import ast
import functools
from pathlib import Path

import networkx as nx

import symcirc

PACKAGE = Path(symcirc.__file__).parent

LAYERS: tuple[tuple[str, ...], ...] = (
    # the error type, the version, the words of the language, the one output writer, the
    # size limits and the Ctrl-C watchdog: read by every stage, they import no stage
    ("errors", "version", "vocabulary", "output", "limits", "watchdog"),
    ("language",),            # text → syntax tree
    ("model",),               # syntax tree → Circuit
    ("algebra",),             # exact polynomials and rational functions
    ("engine",),              # Circuit → exact rational functions
    ("results",),             # what a derivation returns
    ("quantities",),          # quantity names → handlers
    ("forms", "analysis", "check"),  # design forms, design analyses, claims
    ("pipeline",),            # read → check → derive → forms → claims, once for every entry
    ("report", "export"),     # documents and code
    ("api", "symcirc"),       # the Python API (`symcirc` is the package's __init__)
    ("commands",),            # one module per command
    ("cli",),                 # the command line
)
"""The allowed order, earliest first: a unit imports only from earlier layers."""

SAME_LAYER = {("symcirc", "api"), ("output", "errors"), ("limits", "errors"),
              ("analysis", "forms")}
"""Imports allowed within a layer: (importer, imported). Analyses of a response read its
design form (`analysis.frequency` → `forms`); forms never read analyses."""

LAYER_OF = {unit: index for index, layer in enumerate(LAYERS) for unit in layer}


def _unit(module: str) -> str:
    """The top-level unit of a dotted module name: `symcirc.model.circuit` → `model`."""
    parts = module.split(".")
    if len(parts) == 1:
        return "symcirc"
    return parts[1]


def _is_module(dotted: str, root: Path) -> bool:
    relative = Path(*dotted.split(".")[1:])
    return (root / relative).is_dir() or (root / relative).with_suffix(".py").is_file()


def _imports(path: Path, root: Path = PACKAGE) -> list[tuple[str, int]]:
    """(imported symcirc module, line) for every import statement in the file at `path`
    of the package at `root`."""
    parts = list(path.relative_to(root.parent).with_suffix("").parts)
    package = parts[:-1]  # the package a relative import starts from
    found: list[tuple[str, int]] = []
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"), str(path))):
        if isinstance(node, ast.Import):
            found += [(alias.name, node.lineno) for alias in node.names]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = ".".join(package[: len(package) - node.level + 1])
                module = f"{base}.{node.module}" if node.module else base
            else:
                module = node.module or ""
            for alias in node.names:  # `from . import syntax` names a module, `load` not
                candidate = f"{module}.{alias.name}"
                found.append((candidate if _is_module(candidate, root) else module,
                              node.lineno))
    return [(m, line) for m, line in found if m.split(".")[0] == "symcirc"]


@functools.cache
def _graph() -> tuple[nx.DiGraph, dict[tuple[str, str], list[str]]]:
    graph = nx.DiGraph()
    where: dict[tuple[str, str], list[str]] = {}
    for path in sorted(PACKAGE.rglob("*.py")):
        relative = path.relative_to(PACKAGE.parent).with_suffix("")
        importer = _unit(".".join(p for p in relative.parts if p != "__init__"))
        graph.add_node(importer)
        for module, line in _imports(path):
            imported = _unit(module)
            if imported != importer:
                graph.add_edge(importer, imported)
                where.setdefault((importer, imported), []).append(
                    f"{path.relative_to(PACKAGE.parent)}:{line}")
    return graph, where


def test_every_top_level_unit_has_a_layer():
    graph, _ = _graph()
    assert set(graph.nodes) <= set(LAYER_OF), set(graph.nodes) - set(LAYER_OF)


def test_imports_follow_the_data_flow():
    graph, where = _graph()
    wrong = [
        f"{importer} → {imported} ({', '.join(dict.fromkeys(where[importer, imported]))})"
        for importer, imported in graph.edges
        if LAYER_OF.get(imported, -1) > LAYER_OF.get(importer, -1)
        or (LAYER_OF.get(imported) == LAYER_OF.get(importer)
            and (importer, imported) not in SAME_LAYER)
    ]
    assert not wrong, "imports against the data flow:\n" + "\n".join(sorted(wrong))


def test_the_import_graph_has_no_cycle():
    graph, _ = _graph()
    assert nx.is_directed_acyclic_graph(graph), nx.find_cycle(graph)


def test_the_reader_sees_imports_inside_functions_relative_and_absolute(tmp_path):
    """The graph builder itself, on a package of three files."""
    root = tmp_path / "symcirc"
    (root / "model").mkdir(parents=True)
    (root / "quantities").mkdir()
    (root / "__init__.py").write_text("from .model import circuit\n")
    (root / "quantities" / "__init__.py").write_text("")
    inner = root / "model" / "circuit.py"
    inner.write_text("import os\nfrom . import kinds\n\n\ndef derive():\n"
                     "    from ..quantities import derive\n    from .. import load\n"
                     "    import symcirc.quantities.basic\n")
    assert _imports(inner, root) == [
        ("symcirc.model", 2), ("symcirc.quantities", 6), ("symcirc", 7),
        ("symcirc.quantities.basic", 8)]
    assert _imports(root / "__init__.py", root) == [("symcirc.model.circuit", 1)]


def test_test_folders_mirror_the_packages():
    """tests/<package>/ holds the tests of symcirc/<package>/; the corpora and benchmarks
    keep their own folders."""
    tests = Path(__file__).resolve().parent
    folders = {p.name for p in tests.iterdir() if p.is_dir() and not p.name.startswith(("_", "."))}
    packages = {p.name for p in PACKAGE.iterdir() if (p / "__init__.py").is_file()}
    assert folders - {"valid", "invalid", "perf"} <= packages
