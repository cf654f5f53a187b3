"""Each area of `server/` imports only the areas below it (DEVELOPERS.md, "Layers").

The order is the project's own rule (issue 9); the test reads every import statement with `ast`
(Python's own parser), so an import added inside a function counts too.
"""
import ast
from pathlib import Path

import pytest

SERVER = Path(__file__).resolve().parent.parent / "server"

# Bottom to top. Modules on one layer may import each other (the cycle test keeps that one-way).
LAYERS = [
    {"compute"},
    {"db", "types", "errors", "config", "vocabulary", "migrate", "input_rules"},
    {"records"},
    {"deps", "forms", "web", "idempotency", "write_queue", "security", "bad_input", "openapi_errors",
     "csv_export", "request_bodies", "head", "navigation"},
    {"people"},
    {"fleet"},
    {"training"},
    {"logbook"},
    {"progress", "currency", "safety", "standardisation", "imports"},
    {"app", "cli", "demo", "models", "signed_records", "account"},
]
LEVEL = {name: level for level, names in enumerate(LAYERS) for name in names}
WEB_OR_DATABASE = ("fastapi", "starlette", "sqlalchemy", "jinja2", "alembic", "psycopg", "sqlite3", "httpx")


def area(module: str) -> str:
    """`server.logbook.routes` -> `logbook`; `server.web` -> `web`."""
    return module.split(".")[1]


def module_name(path: Path, root: Path = SERVER) -> str:
    parts = path.relative_to(root.parent).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def imports_of(path: Path, root: Path = SERVER) -> list[tuple[int, str]]:
    found = []
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            found += [(node.lineno, alias.name) for alias in node.names]
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = module_name(path, root).split(".")
                base = base[: len(base) - node.level + (path.name == "__init__.py")]
                found.append((node.lineno, ".".join(base + ([node.module] if node.module else []))))
            elif node.module:
                found.append((node.lineno, node.module))
    return found


def server_files(root: Path = SERVER) -> list[Path]:
    return sorted(p for p in root.rglob("*.py"))


def area_edges(root: Path = SERVER) -> dict[tuple[str, str], str]:
    """(importing area, imported area) -> one place it happens, for the message."""
    edges = {}
    for path in server_files(root):
        here = module_name(path, root)
        if here == "server":
            continue
        for line, target in imports_of(path, root):
            if target.startswith("server.") and area(target) != area(here):
                edges.setdefault((area(here), area(target)), f"{path.relative_to(root.parent)}:{line}")
    return edges


def upward_imports(root: Path = SERVER) -> list[str]:
    return [f"{where}: {source} imports {target}"
            for (source, target), where in sorted(area_edges(root).items()) if LEVEL[target] > LEVEL[source]]


def cycles(root: Path = SERVER) -> list[str]:
    graph: dict[str, set[str]] = {}
    for source, target in area_edges(root):
        graph.setdefault(source, set()).add(target)

    def reaches(start: str, goal: str, seen: set[str]) -> bool:
        for nxt in graph.get(start, ()):
            if nxt == goal or (nxt not in seen and reaches(nxt, goal, seen | {nxt})):
                return True
        return False

    return [a for a in sorted(graph) if reaches(a, a, {a})]


def test_every_area_has_a_layer():
    areas = {area(module_name(p)) for p in server_files() if module_name(p) != "server"}
    assert areas - LEVEL.keys() == set(), "place the new module in LAYERS"


def test_imports_point_down_the_layers():
    assert upward_imports() == []


def test_no_cycle_between_areas():
    assert cycles() == []


@pytest.mark.parametrize("path", sorted((SERVER / "compute").rglob("*.py")), ids=lambda p: p.name)
def test_compute_has_no_web_or_database_imports(path):
    bad = [f"line {line}: {name}" for line, name in imports_of(path)
           if name.split(".")[0] in WEB_OR_DATABASE or (name.startswith("server.") and area(name) != "compute")]
    assert bad == []


def test_the_checker_catches_an_upward_import_and_a_cycle(tmp_path):
    root = tmp_path / "server"
    (root / "records").mkdir(parents=True)
    (root / "logbook").mkdir()
    (root / "records" / "history.py").write_text("from server.logbook.models import Sortie\n")
    (root / "logbook" / "models.py").write_text("from ..records import audit\n")
    assert upward_imports(root) == ["server/records/history.py:1: records imports logbook"]
    assert cycles(root) == ["logbook", "records"]
