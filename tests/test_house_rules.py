"""The code keeps the house rules of DEVELOPERS.md ("Layers and house rules"): imports follow the
layer order and form no cycle, modules stay small, no module-level mutable state, no access to
another module's private attributes. Checked on the source text (``ast``), not by importing."""

from __future__ import annotations

import ast
from pathlib import Path

import networkx as nx

ROOT = Path(__file__).resolve().parents[1]
PACKAGE = ROOT / "garnav"
MAX_LINES = 600

# Low to high (DEVELOPERS.md): a module may import from its own package and from lower layers only.
LAYERS = [
    {"errors", "polyline", "cautions"},
    {"atomic", "textio", "npzcache"},
    {"mechanics.profile", "uncertainty.model", "zones.model", "poses.model"},  # spec sub-tables (model and spec read them)
    {"model"},
    {"garnav"},  # the package's own __init__ (re-exports the model)
    {"spec"},
    {"plan", "patterns"},
    {"drape"},
    {"export", "mechanics", "flatten", "zones"},
    {"uncertainty", "poses"},  # poses: every pose's drape, zones and mechanics for one route
    {"telemetry"},
    {"preview", "link", "recording"},  # link: the robot protocol, transports and the simulated robot; recording: MCAP
    {"fleet", "page"},
    {"sweep", "station"},  # a sweep split among robots is checked with the fleet's checker; the station plans with the fleet
    {"study"},  # many cases at once over the planner, mechanics and uncertainty
    {"demo"},
    {"cli", "__main__", "testing"},
]
LAYER = {name: k for k, names in enumerate(LAYERS) for name in names}

# Known exceptions, each with where it goes away. A stale entry fails the test too.
PRIVATE_ACCESS_ALLOWED: set[tuple[str, str]] = set()

MODULE_STATE_ALLOWED: set[str] = set()

MUTATING_METHODS = {"append", "extend", "insert", "add", "update", "setdefault", "pop", "popitem",
                    "clear", "remove", "discard"}


def _modules() -> dict[str, Path]:
    out = {}
    for path in sorted(PACKAGE.rglob("*.py")):
        parts = list(path.relative_to(ROOT).with_suffix("").parts)
        if parts[-1] == "__init__":
            parts = parts[:-1]
        out[".".join(parts)] = path
    return out


def _package_of(module: str) -> str:
    """The layer unit of a module: its package, or the module itself where it has its own layer."""
    parts = module.split(".")
    if len(parts) > 2 and ".".join(parts[1:3]) in LAYER:
        return ".".join(parts[1:3])
    return parts[1] if len(parts) > 1 else "garnav"


def _layer_of(module: str) -> int:
    return LAYER[_package_of(module)]


def _runtime_nodes(tree: ast.Module, top_level_only: bool):
    """Nodes that run on import (``top_level_only``: not inside functions) or at all; the bodies
    of ``if TYPE_CHECKING:`` blocks are skipped (they never import)."""
    skip: set[int] = set()
    for n in ast.walk(tree):
        if isinstance(n, ast.If) and "TYPE_CHECKING" in ast.unparse(n.test):
            for b in n.body:
                skip.update(id(x) for x in ast.walk(b))

    def walk(node):
        for child in ast.iter_child_nodes(node):
            if id(child) in skip or (top_level_only and isinstance(child, (ast.FunctionDef, ast.AsyncFunctionDef))):
                continue
            yield child
            yield from walk(child)

    return walk(tree)


def _imports(tree: ast.Module, top_level_only: bool) -> set[str]:
    """garnav modules this module imports; ``from package import submodule`` counts the submodule."""
    modules = MODULES
    out: set[str] = set()
    for node in _runtime_nodes(tree, top_level_only):
        if isinstance(node, ast.ImportFrom) and node.module and node.module.split(".")[0] == "garnav":
            subs = [f"{node.module}.{a.name}" for a in node.names if f"{node.module}.{a.name}" in modules]
            out.update(subs if len(subs) == len(node.names) else [node.module, *subs])
        elif isinstance(node, ast.Import):
            out.update(a.name for a in node.names if a.name.split(".")[0] == "garnav")
    return out


MODULES = _modules()
TREES = {name: ast.parse(path.read_text(encoding="utf-8")) for name, path in MODULES.items()}


def _trees():
    return TREES


def test_every_package_has_a_layer():
    assert {_package_of(m) for m in MODULES} <= set(LAYER)


def test_imports_point_down_the_layers():
    wrong = []
    for name, tree in _trees().items():
        for target in _imports(tree, top_level_only=False):  # lazy imports inside functions too
            if _package_of(target) != _package_of(name) and _layer_of(target) > _layer_of(name):
                wrong.append(f"{name} imports {target}")
    assert wrong == []


def test_no_import_cycles():
    graph = nx.DiGraph()
    modules = MODULES
    for name, tree in _trees().items():
        graph.add_node(name)
        for target in _imports(tree, top_level_only=True):
            # `from garnav.x import y` may name a submodule y: count the module that is loaded
            graph.add_edge(name, target if target in modules else target.rsplit(".", 1)[0])
    cycles = [c for c in nx.simple_cycles(graph) if len(c) > 1]
    assert cycles == []


def test_no_module_over_the_size_limit():
    paths = [*PACKAGE.rglob("*.py"), *(ROOT / "benchmarks").glob("*.py"), *(ROOT / "tests").glob("*.py"),
             *(ROOT / "examples").glob("*.py")]
    big = {str(p.relative_to(ROOT)): n for p in paths if (n := len(p.read_text(encoding="utf-8").splitlines())) > MAX_LINES}
    assert big == {}


def _module_state_problems(tree: ast.Module) -> list[str]:
    """Module-level containers that something mutates, module-level memoising decorators,
    and ``global`` statements."""
    names = set()
    for node in tree.body:
        targets = node.targets if isinstance(node, ast.Assign) else [node.target] if isinstance(node, ast.AnnAssign) else []
        value = getattr(node, "value", None)
        mutable = isinstance(value, (ast.Dict, ast.List, ast.Set)) or (
            isinstance(value, ast.Call) and isinstance(value.func, ast.Name)
            and value.func.id in {"dict", "list", "set", "defaultdict", "OrderedDict", "WeakValueDictionary",
                                  "WeakKeyDictionary"}
        )
        if mutable:
            names.update(t.id for t in targets if isinstance(t, ast.Name))
    out = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Global):
            out.append(f"global {', '.join(node.names)}")
        elif isinstance(node, (ast.Subscript, ast.Attribute)) and isinstance(node.ctx, (ast.Store, ast.Del)):
            base = node.value
            if isinstance(base, ast.Name) and base.id in names:
                out.append(f"writes into module-level {base.id}")
        elif isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute):
            base = node.func.value
            if isinstance(base, ast.Name) and base.id in names and node.func.attr in MUTATING_METHODS:
                out.append(f"{base.id}.{node.func.attr}()")
    for node in tree.body:
        if isinstance(node, (ast.FunctionDef, ast.ClassDef)):
            for dec in node.decorator_list:
                target = dec.func if isinstance(dec, ast.Call) else dec
                label = target.attr if isinstance(target, ast.Attribute) else getattr(target, "id", "")
                if label in {"lru_cache", "cache"}:
                    out.append(f"@{label} on {node.name} (a module-level cache)")
    return out


def test_no_module_level_mutable_state():
    found = {}
    for name, tree in _trees().items():
        problems = _module_state_problems(tree)
        if problems:
            found[name] = problems
    assert {k: v for k, v in found.items() if k not in MODULE_STATE_ALLOWED} == {}
    assert MODULE_STATE_ALLOWED - set(found) == set(), "an allowed exception is gone: remove it from the list"


def _private_names_defined(tree: ast.Module) -> set[str]:
    """Private names this module defines itself: functions, classes, attributes set on self."""
    out = set()
    for node in ast.walk(tree):
        if isinstance(node, (ast.FunctionDef, ast.AsyncFunctionDef, ast.ClassDef)) and node.name.startswith("_"):
            out.add(node.name)
        elif isinstance(node, ast.Attribute) and isinstance(node.ctx, ast.Store) and node.attr.startswith("_"):
            out.add(node.attr)
        elif isinstance(node, ast.AnnAssign) and isinstance(node.target, ast.Name) and node.target.id.startswith("_"):
            out.add(node.target.id)  # dataclass fields
    return out


def test_no_access_to_another_modules_private_attributes():
    found = set()
    for name, path in MODULES.items():
        tree = TREES[name]
        own = _private_names_defined(tree)
        for node in ast.walk(tree):
            if not isinstance(node, ast.Attribute):
                continue
            attr = node.attr
            if not attr.startswith("_") or attr.startswith("__") or attr in own:
                continue
            if isinstance(node.value, ast.Name) and node.value.id in {"self", "cls"}:
                continue
            found.add((str(path.relative_to(ROOT)), attr))
    assert found - PRIVATE_ACCESS_ALLOWED == set()
    assert PRIVATE_ACCESS_ALLOWED - found == set(), "an allowed exception is gone: remove it from the list"
