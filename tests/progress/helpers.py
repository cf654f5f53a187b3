"""Builders for progress tests: sorties of chosen attempts, and a small HTML reader."""
from datetime import UTC, datetime, timedelta
from html.parser import HTMLParser

from server.logbook import service as logbook
from server.logbook.schemas import AttemptFields, SortieCreate
from server.people.models import Person

# An attempt inside every default tolerance on the test type at the test field (common practice figures).
GOOD = {"maneuver": "straight_in", "termination": "touchdown", "descent_kias": 65, "nr_low_pct": 95,
        "nr_high_pct": 104, "flare_height_ft": 90, "touchdown_speed_kt": 3, "point_error_ft": 20,
        "heading_error_deg": 2}
# A little fast and late: touchdown beyond the 8 kt maximum, flare below the band.
POOR = GOOD | {"touchdown_speed_kt": 10, "flare_height_ft": 64}

START = datetime(2026, 9, 1, 10, 0, tzinfo=UTC)


def recently() -> datetime:
    """A week ago: pages judge decay from today."""
    return datetime.now(UTC) - timedelta(days=7)


def fly(session, world, attempts: list[dict], *, day: int = 0, sign: bool = True, instructor=None, pilot=None,
        start: datetime = START):
    """One sortie on start + day days with the given attempts, signed unless told otherwise."""
    actor = session.get(Person, (instructor or world.instructor).id)
    sortie = logbook.create_sortie(session, actor=actor, data=SortieCreate(
        flown_at=start + timedelta(days=day), aircraft_id=world.aircraft.id, pilot_id=(pilot or world.student).id,
        site_id=world.site.id, oat_c=15, altimeter_hpa=1013.25))
    for fields in attempts:
        logbook.add_attempt(session, actor=actor, sortie=sortie, data=AttemptFields(**fields))
    session.flush()
    session.refresh(sortie)
    if sign:
        logbook.record_instructor_signature(session, actor=actor, sortie=sortie)
    session.commit()
    return sortie


class Element:
    def __init__(self, tag, attrs, parent=None):
        self.tag, self.attrs, self.parent = tag, dict(attrs), parent
        self.content: list = []  # text and child elements in document order

    @property
    def children(self) -> list["Element"]:
        return [c for c in self.content if isinstance(c, Element)]

    @property
    def classes(self) -> set[str]:
        return set((self.attrs.get("class") or "").split())

    def text(self) -> str:
        return " ".join("".join(c if isinstance(c, str) else f"{c.text()} " if c.tag in BLOCK else c.text()
                                for c in self.content).split())

    def iter(self):
        yield self
        for child in self.children:
            yield from child.iter()

    def find_all(self, tag=None, cls=None, **attrs):
        return [e for e in self.iter() if (tag is None or e.tag == tag) and (cls is None or cls in e.classes)
                and all(e.attrs.get(k.rstrip("_")) == v for k, v in attrs.items())]

    def find(self, tag=None, cls=None, **attrs):
        found = self.find_all(tag, cls, **attrs)
        assert found, f"no <{tag} class={cls} {attrs}> on the page"
        return found[0]


BLOCK = {"p", "li", "tr", "td", "th", "div", "section", "h1", "h2", "h3", "ul", "ol", "br", "figcaption"}
VOID = {"area", "base", "br", "col", "embed", "hr", "img", "input", "link", "meta", "source", "track", "wbr"}


class _Reader(HTMLParser):
    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.root = Element("root", {})
        self.current = self.root

    def handle_starttag(self, tag, attrs):
        element = Element(tag, attrs, self.current)
        self.current.content.append(element)
        if tag not in VOID:
            self.current = element

    def handle_startendtag(self, tag, attrs):
        self.current.content.append(Element(tag, attrs, self.current))

    def handle_endtag(self, tag):
        node = self.current
        while node is not None and node.tag != tag:
            node = node.parent
        if node is not None and node.parent is not None:
            self.current = node.parent

    def handle_data(self, data):
        self.current.content.append(data)


def parse(html: str) -> Element:
    reader = _Reader()
    reader.feed(html)
    return reader.root
