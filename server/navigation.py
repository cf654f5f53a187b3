"""The main navigation: which pages each role gets, and which one the current address belongs to.

Beside the templates (below people in the layering), so it takes any person-like object with `has_role`.
"""
from dataclasses import dataclass


@dataclass(frozen=True)
class NavItem:
    label: str
    route: str  # the route's name, for url_for
    roles: tuple[str, ...]  # empty: everyone
    prefixes: tuple[str, ...]  # addresses that belong to this page


NAV = (
    NavItem("Sorties", "sortie_list", (), ("/sorties", "/attempts")),
    NavItem("Start a sortie", "sortie_new", ("instructor", "chief_pilot"), ("/sorties/new",)),
    NavItem("Progress", "progress_index", (), ("/progress", "/people/", "/enrolments")),
    NavItem("Programs", "program_list", (), ("/programs",)),
    NavItem("Readiness", "readiness_board", ("chief_pilot", "admin"), ("/currency",)),
    NavItem("Safety digest", "safety_digest", ("chief_pilot",), ("/safety",)),
    NavItem("Standardisation", "standardisation", ("chief_pilot", "admin"), ("/standardisation",)),
    NavItem("Setup", "setup_home", ("chief_pilot", "admin"), ("/setup",)),
)


def _matches(prefix: str, path: str) -> bool:
    return path == prefix or path.startswith(prefix.rstrip("/") + "/") or (prefix.endswith("/") and path.startswith(prefix))


def main_nav(person, path: str) -> list[dict]:
    """The person's links, the one whose address is the longest match with `path` marked current."""
    items = [item for item in NAV if not item.roles or person.has_role(*item.roles)]
    best, best_length = None, -1
    for item in items:
        for prefix in item.prefixes:
            if _matches(prefix, path) and len(prefix) > best_length:
                best, best_length = item, len(prefix)
    return [{"label": item.label, "route": item.route, "current": item is best} for item in items]
