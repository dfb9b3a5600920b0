"""The architecture rules of ValueSift as a checker over a source tree (used by tests/test_architecture.py).

Rules (issue 16, items 2, 5 and 6):

* no statistics call inside ``app/figures`` or ``app/bundle`` (the app draws and words; the
  core computes every number): numpy/scipy/statsmodels reductions and estimators, ``.mean()``
  and friends on arrays or frames, ``.rolling(...)`` windows;
* no private name (``_name``) imported from another module of ``core``/``app``;
* no import circle between modules of ``core``/``app`` (module-level and function-level imports);
* no user-interface library (dash, flask, plotly) imported anywhere in ``core``.

:func:`check_tree` takes the root folder holding ``core/`` and ``app/`` so that a test can run it
on a deliberately bad fake tree.
"""

from __future__ import annotations

import ast
from dataclasses import dataclass
from pathlib import Path

__all__ = ["Violation", "check_tree", "module_graph", "find_cycles", "STAT_FUNCTIONS", "STAT_METHODS", "UI_LIBRARIES"]

#: numpy/scipy/statsmodels functions that compute a statistic (called as ``np.<name>``, ``stats.<name>``, ...).
STAT_FUNCTIONS = frozenset({
    "corrcoef", "cov", "lstsq", "polyfit", "std", "nanstd", "var", "nanvar", "mean", "nanmean", "average",
    "median", "nanmedian", "quantile", "nanquantile", "percentile", "nanpercentile", "sqrt", "linregress",
    "pearsonr", "spearmanr", "kendalltau", "ttest_1samp", "ttest_ind", "OLS", "WLS", "GLS", "ols",
    "bincount",
})
#: Methods of arrays, Series and DataFrames that compute a statistic.
STAT_METHODS = frozenset({"mean", "std", "var", "median", "quantile", "corr", "cov", "rolling", "expanding",
                          "ewm", "sem", "skew", "kurt"})
#: Folders where no statistic may be computed.
NO_STATS_FOLDERS = ("app/figures", "app/bundle")
#: Libraries the core must never import.
UI_LIBRARIES = frozenset({"dash", "flask", "plotly", "dash_ag_grid", "dash_bootstrap_components"})
#: Private names of other libraries the project uses, each with its reason written beside the import:
#: (file, library name).  dash._callback: Dash has no public way to reset its process-wide callback registry
#: between two apps in one process (it supports one app per process; the tests build several).
PENDING_EXTERNAL = frozenset({("app/server.py", "dash._callback")})
#: Top-level package of the installed names (``valuesift.core`` is the folder ``core``).
PACKAGE = "valuesift"


@dataclass(frozen=True)
class Violation:
    """One broken rule: which rule, where, and what was found."""

    rule: str
    path: str
    line: int
    detail: str

    def __str__(self) -> str:
        return f"{self.path}:{self.line}: {self.rule}: {self.detail}"


def _modules(root: Path) -> dict[str, Path]:
    """Dotted module name (``valuesift.core.x.y``) -> file, for every .py file of core/ and app/."""
    out: dict[str, Path] = {}
    for top in ("core", "app"):
        base = root / top
        if not base.is_dir():
            continue
        for f in sorted(base.rglob("*.py")):
            parts = list(f.relative_to(root).with_suffix("").parts)
            if parts[-1] == "__init__":
                parts = parts[:-1]
            out[".".join([PACKAGE, *parts])] = f
    return out


def _resolve(module: str, is_pkg: bool, node: ast.ImportFrom) -> str:
    """The absolute module named by a (possibly relative) ``from ... import``."""
    if node.level == 0:
        return node.module or ""
    base = module.split(".")
    if not is_pkg:
        base = base[:-1]
    if node.level > 1:
        base = base[: len(base) - (node.level - 1)]
    return ".".join(base + ([node.module] if node.module else []))


def _imports(module: str, path: Path, tree: ast.AST, known: dict[str, Path]) -> list[tuple[str, int, str | None]]:
    """(imported module, line, imported name or None) for every import of a module."""
    is_pkg = path.name == "__init__.py"
    out: list[tuple[str, int, str | None]] = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            for a in node.names:
                out.append((a.name, node.lineno, None))
        elif isinstance(node, ast.ImportFrom):
            target = _resolve(module, is_pkg, node)
            for a in node.names:
                sub = f"{target}.{a.name}"
                if sub in known:   # "from pkg import submodule"
                    out.append((sub, node.lineno, None))
                else:
                    out.append((target, node.lineno, a.name))
    return out


def _is_type_checking(node: ast.If) -> bool:
    t = node.test
    return (isinstance(t, ast.Name) and t.id == "TYPE_CHECKING") or (
        isinstance(t, ast.Attribute) and t.attr == "TYPE_CHECKING")


def _runtime_tree(tree: ast.Module) -> ast.Module:
    """The module without its ``if TYPE_CHECKING:`` blocks (annotations only; they run no code)."""
    body = [n for n in tree.body if not (isinstance(n, ast.If) and _is_type_checking(n))]
    return ast.Module(body=body, type_ignores=[])


def module_graph(root: Path) -> dict[str, set[str]]:
    """Import graph of the modules of core/ and app/ (edges to modules of the tree only).

    Importing ``a.b.c`` also runs ``a.b``'s ``__init__``; edges go to the module named, which is
    the dependency the code states.
    """
    known = _modules(root)
    graph: dict[str, set[str]] = {m: set() for m in known}
    for mod, path in known.items():
        tree = _runtime_tree(ast.parse(path.read_text(encoding="utf-8"), filename=str(path)))
        for target, _, _ in _imports(mod, path, tree, known):
            if target in known and target != mod:
                graph[mod].add(target)
    return graph


def find_cycles(graph: dict[str, set[str]]) -> list[list[str]]:
    """The strongly connected components with more than one module (Tarjan's algorithm)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on: set[str] = set()
    out: list[list[str]] = []
    counter = [0]

    def visit(v: str) -> None:
        index[v] = low[v] = counter[0]
        counter[0] += 1
        stack.append(v)
        on.add(v)
        for w in sorted(graph.get(v, ())):
            if w not in index:
                visit(w)
                low[v] = min(low[v], low[w])
            elif w in on:
                low[v] = min(low[v], index[w])
        if low[v] == index[v]:
            comp = []
            while True:
                w = stack.pop()
                on.discard(w)
                comp.append(w)
                if w == v:
                    break
            if len(comp) > 1:
                out.append(sorted(comp))

    for v in sorted(graph):
        if v not in index:
            visit(v)
    return out


def _stat_calls(tree: ast.AST) -> list[tuple[int, str]]:
    found = []
    for node in ast.walk(tree):
        if not isinstance(node, ast.Call):
            continue
        f = node.func
        if isinstance(f, ast.Attribute):
            owner = f.value
            owner_name = owner.id if isinstance(owner, ast.Name) else owner.attr if isinstance(owner, ast.Attribute) else ""
            if owner_name in ("np", "numpy", "stats", "scipy", "sm", "smf", "statsmodels", "linalg", "math") \
                    and f.attr in STAT_FUNCTIONS:
                found.append((node.lineno, f"{owner_name}.{f.attr}"))
            elif f.attr in STAT_METHODS and owner_name not in ("np", "numpy", "math", "re", "os", "str"):
                found.append((node.lineno, f".{f.attr}()"))
        elif isinstance(f, ast.Name) and f.id in STAT_FUNCTIONS and f.id not in ("mean",):
            found.append((node.lineno, f.id))
    return found


def _private_module_elsewhere(mod: str, path: Path, target: str) -> bool:
    """A module whose name starts with ``_`` imported from outside its own package."""
    parts = target.split(".")
    for i, p in enumerate(parts[2:], start=2):
        if p.startswith("_") and not p.startswith("__"):
            owner = ".".join(parts[:i])  # the package that holds the private module
            here = mod if path.name == "__init__.py" else mod.rsplit(".", 1)[0]
            return here != owner
    return False


def check_tree(root: Path | str) -> list[Violation]:
    """Every architecture violation in the tree under ``root`` (which holds ``core/`` and ``app/``)."""
    root = Path(root)
    known = _modules(root)
    out: list[Violation] = []
    for mod, path in known.items():
        rel = path.relative_to(root).as_posix()
        tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
        for target, line, name in _imports(mod, path, tree, known):
            top = target.split(".")[0]
            if rel.startswith("core/") and top in UI_LIBRARIES:
                out.append(Violation("UI import in core", rel, line, target))
            inside = target.startswith(PACKAGE + ".") and target != mod
            private = name is not None and name.startswith("_") and not name.startswith("__")
            if private and (inside or (rel, f"{target}.{name}") not in PENDING_EXTERNAL):
                out.append(Violation("private name imported across modules", rel, line, f"{name} from {target}"))
            if inside and _private_module_elsewhere(mod, path, target):
                out.append(Violation("private module imported from another package", rel, line, target))
        if rel.startswith(NO_STATS_FOLDERS):
            for line, what in _stat_calls(tree):
                out.append(Violation("statistic computed in the app", rel, line, what))
    for cyc in find_cycles(module_graph(root)):
        out.append(Violation("import circle", cyc[0].replace(".", "/"), 0, " -> ".join(cyc)))
    return out
