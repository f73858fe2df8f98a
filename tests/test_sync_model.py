"""Tag collisions between devices, their resolution, and a model-based test of the whole exchange.

The model (hypothesis stateful): an office and three tablets do random valid work — create
components (often the same tag at the same site on two devices), edit the same fields, bulk
imports, leaks with repairs, resolving collisions — and exchange bundles in random order, with
dropped hand-overs, repeats of old bundles and delays. No merge may raise; after a full exchange
every store holds the same sites and components, the same journal of them and the same tag
collisions, and the office holds every entry every tablet wrote.
"""

from __future__ import annotations

import itertools
import json
import tempfile
import time
from datetime import timedelta
from pathlib import Path

import pytest
from hypothesis import HealthCheck, settings
from hypothesis import strategies as st
from hypothesis.stateful import RuleBasedStateMachine, invariant, precondition, rule

from fieldapp.cli import main
from fieldapp.core.fields import ValidationError
from fieldapp.store import ops
from fieldapp.store.base import Store
from fieldapp.store.history import history
from fieldapp.store.importer import import_components
from fieldapp.store.resolve import join, retag
from sync.bundle import make_device_bundle, make_office_bundle
from sync.merge import merge, merge_many, tag_collisions
from sync.trust import enrol_each_other
from tests.conftest import DEMO_NOW, SITE, Wall

VALVE = {"type": "valve", "service": "gas"}


def survey_values(site_id, wall):
    return {"site_id": site_id, "method": "ogi", "started_at": (DEMO_NOW - timedelta(hours=1)).isoformat(),
            "operator": "P", "qualification": "q",
            "camera_make": "m", "camera_model": "x", "camera_check": "passed", "ambient_temp_c": 1, "sky": "clear",
            "wind_max_m_s": 2}


@pytest.fixture
def pair(tmp_path):
    office = Store(tmp_path / "office" / "o.db", actor="office", wall=Wall())
    tablet = Store(tmp_path / "tablet" / "t.db", actor="crew", wall=Wall(DEMO_NOW + timedelta(seconds=1)))
    enrol_each_other(office, tablet)
    site = ops.add_site(office, SITE)
    merge(tablet, make_office_bundle(office, tmp_path / "o0.zip", tablet.device_id).path)
    return office, tablet, site


def test_same_tag_on_two_devices_is_a_visible_collision_not_a_crash(pair, tmp_path, capsys):
    office, tablet, site = pair
    at_office = ops.add_component(office, {"site_id": site.id, "tag": "TD-9001", **VALVE})
    on_tablet = ops.add_component(tablet, {"site_id": site.id, "tag": "TD-9001", **VALVE, "area": "north"})
    survey, _ = ops.start_survey(tablet, survey_values(site.id, tablet.wall))
    leak = ops.add_leak(tablet, {"survey_id": survey.id, "component_id": on_tablet.id,
                                 "detected_at": "2026-12-01T10:00:00-07:00"})
    result = merge(office, make_device_bundle(tablet, tmp_path / "t1.zip").path)
    assert result.collisions == 1
    both = sorted([at_office.id, on_tablet.id])
    assert [c["component_ids"] for c in tag_collisions(office)] == [both]
    merge(tablet, make_office_bundle(office, tmp_path / "o1.zip", tablet.device_id).path)
    assert [c["component_ids"] for c in tag_collisions(tablet)] == [both]
    # nothing else is blocked: the tablet keeps working and its next bundle merges
    ops.edit(tablet, "components", on_tablet.id, {"equipment": "separator"})
    ops.add_component(tablet, {"site_id": site.id, "tag": "TD-9002", **VALVE})
    merge(office, make_device_bundle(tablet, tmp_path / "t2.zip").path)
    office.close()
    db = str(tmp_path / "office" / "o.db")
    assert main(["--db", db, "conflicts"]) == 0
    assert "TD-9001" in capsys.readouterr().out
    from sync.report_model import period_report, survey_report
    office = Store(db)
    flagged = [c for c in survey_report(office, survey.id).cautions if c.startswith("DUPLICATE TAG TD-9001")]
    assert len(flagged) == 1 and "2 components" in flagged[0]
    assert any("TD-9001" in c for c in period_report(office, DEMO_NOW.date(), DEMO_NOW.date()).cautions)
    office.close()
    # the shared tag names neither: the refusal lists both, each with the device that made it
    assert main(["--db", db, "resolve", "join", "TD-9001", on_tablet.id]) == 2
    refused = capsys.readouterr().err
    assert "keep: 'TD-9001' matches 2 components" in refused and at_office.id in refused and on_tablet.id in refused
    assert refused.count("made on") == 2
    # the office joins the two: the leak follows the kept component, the join travels to the tablet
    assert main(["--db", db, "resolve", "join", at_office.id, on_tablet.id]) == 0
    office = Store(db)
    assert office.get("leaks", leak.id)["component_id"] == at_office.id
    assert tag_collisions(office) == []
    # the command stamped the join with the real clock: the tablet receives it no earlier than that
    tablet.wall.t = max(tablet.wall.t, time.time())
    merge(tablet, make_office_bundle(office, tmp_path / "o2.zip", tablet.device_id).path)
    assert tag_collisions(tablet) == []
    assert [e["op"] for e in history(office, on_tablet.id)][-1] == "delete"


def test_retag_resolves_a_collision_and_local_writes_still_refuse_a_used_tag(pair, tmp_path):
    office, tablet, site = pair
    ops.add_component(office, {"site_id": site.id, "tag": "TD-1", **VALVE})
    mine = ops.add_component(tablet, {"site_id": site.id, "tag": "TD-1", **VALVE})
    merge(office, make_device_bundle(tablet, tmp_path / "t.zip").path)
    with pytest.raises(ValidationError, match="already used"):
        ops.add_component(office, {"site_id": site.id, "tag": "TD-1", **VALVE})
    retag(tablet, mine.id, "TD-1B")
    merge(office, make_device_bundle(tablet, tmp_path / "t2.zip").path)
    assert tag_collisions(office) == []
    with pytest.raises(ValidationError, match="already used"):
        retag(office, mine.id, "TD-1")


def decoded(row):
    """A journal row with its old and new values as data (key order is not kept through a bundle)."""
    return (*row[:-2], *(json.loads(v) if v else None for v in row[-2:]))


class Clock:
    """One shared time for every device, each with its own small offset (tablet clocks are never exact)."""

    def __init__(self):
        self.t = DEMO_NOW.timestamp()

    def wall(self, offset):
        return lambda: self.t + offset


class Exchange(RuleBasedStateMachine):
    """An office and three tablets working on one site and exchanging bundles."""

    def __init__(self):
        super().__init__()
        self.folder = Path(tempfile.mkdtemp(prefix="plumebook-model-"))
        self.clock = Clock()
        self.office = Store(self.folder / "office" / "o.db", actor="office", wall=self.clock.wall(0))
        self.tablets = [Store(self.folder / f"t{i}" / "t.db", actor=f"crew{i}", wall=self.clock.wall(60 * i - 60))
                        for i in range(3)]
        self.site = ops.add_site(self.office, SITE)
        self.created: set[str] = set()
        for tag in ("S-1", "S-2"):  # shared by every store from the start
            self.created.add(ops.add_component(self.office, {"site_id": self.site.id, "tag": tag, **VALVE}).id)
        self.made: list[tuple[int, Path]] = []
        self.count = itertools.count()
        self.surveys: dict[int, str] = {}
        for tablet in self.tablets:
            enrol_each_other(self.office, tablet)
            self._receive(tablet)

    def stores(self):
        return [self.office, *self.tablets]

    def _path(self, name):
        return self.folder / f"{name}-{next(self.count)}.zip"

    def _receive(self, tablet):
        merge(tablet, make_office_bundle(self.office, self._path("office"), tablet.device_id).path)

    @rule(who=st.integers(0, 3), tag=st.sampled_from(["A", "B"]))
    def create(self, who, tag):
        try:
            self.created.add(ops.add_component(self.stores()[who], {"site_id": self.site.id, "tag": tag, **VALVE}).id)
        except ValidationError:
            pass  # the tag is in use in that store: a local write refuses it

    @rule(who=st.integers(0, 3), field=st.sampled_from(["area", "equipment"]), value=st.sampled_from(["n", "s", "e"]),
          pick=st.integers(0, 3))
    def edit(self, who, field, value, pick):
        """Edits land mostly on the oldest components, which most stores share: the same field edited twice."""
        store = self.stores()[who]
        ids = [r["id"] for r in store.rows("SELECT id FROM components WHERE deleted = 0 ORDER BY id")]
        if ids:
            ops.edit(store, "components", ids[pick % len(ids)], {field: value})

    @rule(who=st.integers(0, 3))
    def bulk_import(self, who):
        store = self.stores()[who]
        n = next(self.count)
        csv = self.folder / f"import{n}.csv"
        csv.write_text(f"tag,type,service\nI{n}-{who}a,valve,gas\nI{n}-{who}b,flange,gas\n")
        import_components(store, csv, self.site.id)

    @rule(who=st.integers(0, 2), pick=st.integers(0, 50))
    def leak_and_repair(self, who, pick):
        tablet = self.tablets[who]
        ids = [r["id"] for r in tablet.rows("SELECT id FROM components WHERE deleted = 0 ORDER BY id")]
        if not ids:
            return
        if who not in self.surveys:
            self.surveys[who] = ops.start_survey(tablet, survey_values(self.site.id, tablet.wall))[0].id
        leak = ops.add_leak(tablet, {"survey_id": self.surveys[who], "component_id": ids[pick % len(ids)],
                                     "detected_at": "2026-12-01T10:00:00-07:00", "screening_ppm": 800})
        ops.add_action(tablet, {"leak_id": leak.id, "kind": "first_attempt", "done_on": "2026-12-01",
                                "actor": "crew"})

    @rule(who=st.integers(0, 3))
    def resolve(self, who):
        store = self.stores()[who]
        found = tag_collisions(store)
        if found:
            keep, drop = found[0]["component_ids"][:2]
            if who % 2:
                join(store, keep, drop)
            else:
                retag(store, drop, f"{found[0]['tag']}-{next(self.count)}")

    @rule(seconds=st.integers(0, 7200))
    def delay(self, seconds):
        self.clock.t += seconds

    @rule(who=st.integers(0, 2), drop=st.booleans())
    def send(self, who, drop):
        path = make_device_bundle(self.tablets[who], self._path(f"t{who}")).path
        self.made.append((who, path))
        if not drop:
            merge(self.office, path)

    @rule(who=st.integers(0, 2))
    def receive(self, who):
        self._receive(self.tablets[who])

    @precondition(lambda self: self.made)
    @rule(pick=st.integers(0, 100))
    def repeat_an_old_bundle(self, pick):
        _who, path = self.made[pick % len(self.made)]
        merge(self.office, path)  # held, or older than what was merged since: never an error

    @invariant()
    def no_tablet_is_wedged(self):
        for tablet in self.tablets:  # what the office holds of each tablet has no gap
            count, top = self.office.conn.execute("SELECT COUNT(*), COALESCE(MAX(seq), 0) FROM journal "
                                                  "WHERE device_id = ?", (tablet.device_id,)).fetchone()
            assert count == top

    def teardown(self):
        try:
            self.full_exchange_agrees()
        finally:
            for s in self.stores():
                s.close()

    def full_exchange_agrees(self):
        for _round in range(2):
            merge_many(self.office, [make_device_bundle(t, self._path("final")).path for t in self.tablets])
            for tablet in self.tablets:
                self._receive(tablet)
        views = [self.view(s) for s in self.stores()]
        assert all(v == views[0] for v in views[1:])
        office_ids = {r[0] for r in self.office.conn.execute("SELECT id FROM components")}
        assert self.created <= office_ids
        for tablet in self.tablets:
            sql = "SELECT * FROM journal WHERE device_id = ? ORDER BY seq"
            mine = [decoded(r) for r in tablet.conn.execute(sql, (tablet.device_id,))]
            assert [decoded(r) for r in self.office.conn.execute(sql, (tablet.device_id,))] == mine

    @staticmethod
    def view(store):
        tables = {t: store.conn.execute(f"SELECT * FROM {t} ORDER BY id").fetchall() for t in ("sites", "components")}
        journal = [decoded(r) for r in store.conn.execute(
            "SELECT device_id, seq, hlc, tbl, row_id, op, old, new FROM journal WHERE tbl IN ('sites', 'components') "
            "ORDER BY device_id, seq")]
        field_conflicts = store.conn.execute("SELECT * FROM conflicts ORDER BY row_id, field, loser_device, "
                                             "loser_seq").fetchall()
        return tables, journal, tag_collisions(store), field_conflicts


Exchange.TestCase.settings = settings(max_examples=12, stateful_step_count=25, deadline=None,
                                      suppress_health_check=[HealthCheck.too_slow])
test_exchange_model = Exchange.TestCase
