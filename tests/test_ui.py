"""The tablet app driven through its real widget tree by taps, offscreen (see tests/conftest.py)."""

from __future__ import annotations

import io
import shutil

import pytest
from PIL import Image

from tests.conftest import Wall

kivy_window = pytest.importorskip("kivy.core.window")


@pytest.fixture(scope="module")
def window():
    from kivy.core.window import Window

    assert Window is not None, "no OpenGL window: install libgl1 libegl1 (tests/setup.sh does)"
    return Window


def photo_bytes() -> bytes:
    img = Image.new("RGB", (1200, 900), (30, 20, 80))
    img.paste((250, 160, 20), (500, 400, 700, 600))
    out = io.BytesIO()
    img.save(out, "JPEG")
    return out.getvalue()


@pytest.fixture
def make_app(window, demo_store, tmp_path):
    from kivy.base import EventLoop

    from fieldapp.ui.app import PlumebookApp
    from fieldapp.ui.camera import FakeSource

    path = demo_store.path
    demo_store.close()
    apps = []

    def make():
        app = PlumebookApp(path, sources=[FakeSource(photo_bytes(), "IR_0042.jpg")], animate=False)
        app._run_prepare()
        app.store.wall = Wall()
        apps.append(app)
        for _ in range(3):
            EventLoop.idle()
        return app

    yield make
    for app in apps:
        app.stop()
        for child in list(window.children):
            window.remove_widget(child)


def idle(n=4):
    from kivy.base import EventLoop

    for _ in range(n):
        EventLoop.idle()


def tap(widget, fx=0.5, fy=0.5):
    """Touch a widget at a point given as fractions of its size (window coordinates)."""
    from kivy.tests.common import UnitTestTouch
    from kivy.uix.scrollview import ScrollView

    parent = widget.parent
    for _ in range(40):  # the Window is its own parent: walk a bounded number of levels
        if parent is None or isinstance(parent, ScrollView):
            break
        parent = parent.parent
    else:
        parent = None
    if parent is not None:  # bring it into view first, as a finger would, once the layout has settled
        idle(2)
        parent.scroll_to(widget, padding=10, animate=False)
    idle(2)
    x, y = widget.to_window(widget.x + widget.width * fx, widget.y + widget.height * fy)
    touch = UnitTestTouch(x, y)
    touch.touch_down()
    touch.touch_up()
    idle(3)


def button(screen, text):
    from kivy.uix.button import Button

    found = [w for w in screen.walk() if isinstance(w, Button) and w.text == text]
    assert found, f"no button {text!r} on {screen.name}"
    return found[0]


def type_into(form, name, text):
    form.widget(name).text = text


def site_id(app, name):
    return app.store.rows("SELECT id FROM sites WHERE name = ?", (name,))[0]["id"]


def fill_survey(form):
    for name, value in {"operator": "Tap Tester", "qualification": "OGI level 2", "camera_make": "Make",
                        "camera_model": "Model", "camera_serial": "S-1", "ambient_temp_c": "12",
                        "wind_speed_m_s": "2", "wind_max_m_s": "3.5", "areas": "north; south"}.items():
        type_into(form, name, value)
    form.widget("camera_check").text = "passed"
    form.widget("sky").text = "clear"


def test_start_screen_lists_sites_overdue_first(make_app):
    app = make_app()
    rows = app.manager.get_screen("start").ids.sites.data
    assert len(rows) == 4 and "OVERDUE" in rows[0]["text"]


def test_survey_refused_for_a_missing_required_field(make_app):
    app = make_app()
    app.site_id = site_id(app, "Orrel Mesa Pad 2")
    app.show("survey")
    screen = app.manager.get_screen("survey")
    fill_survey(screen.form)
    type_into(screen.form, "ambient_temp_c", "")
    before = len(app.store.rows("SELECT id FROM surveys"))
    tap(button(screen, "Start survey"))
    assert app.manager.current == "survey"
    assert "required" in screen.form.rows_by_name["ambient_temp_c"].problem
    assert len(app.store.rows("SELECT id FROM surveys")) == before


def test_whole_day_by_taps(make_app):
    from fieldapp.store.due import due_list
    from tests.test_due import TODAY

    app = make_app()
    start = app.manager.get_screen("start")
    pad = site_id(app, "Orrel Mesa Pad 2")
    start.pick(pad)
    assert app.manager.current == "site"
    tap(button(app.manager.get_screen("site"), "Start a survey here"))
    survey_screen = app.manager.get_screen("survey")
    fill_survey(survey_screen.form)
    tap(button(survey_screen, "Start survey"))
    assert app.manager.current == "survey_run"
    survey = app.store.get("surveys", app.survey_id)
    assert (survey["operator"], survey["camera_check"], survey["wind_max_m_s"]) == ("Tap Tester", "passed", 3.5)
    assert survey["started_at"].endswith("-07:00")  # the site's clock: America/Denver in December (MST)

    run = app.manager.get_screen("survey_run")
    tap(button(run, "Add a leak"))
    leak_screen = app.manager.get_screen("leak")
    type_into(leak_screen.form, "tag", "OM2-NEW-1")
    leak_screen.form.widget("type").text = "connector"
    type_into(leak_screen.form, "location_note", "union on the dump line")
    tap(button(leak_screen, "Photo: fake camera"))
    assert leak_screen.pending and leak_screen.photo.texture is not None
    idle(3)
    tap(leak_screen.photo, 0.5, 0.5)
    assert leak_screen.photo.marker and abs(leak_screen.photo.marker[0] - 0.5) < 0.05
    assert "Estimate:" in leak_screen.estimate_label.text and "leaker factor" in leak_screen.estimate_label.text
    tap(button(leak_screen, "Save leak"))
    assert app.manager.current == "survey_run"
    leak = app.store.rows("SELECT l.id FROM leaks l JOIN components c ON c.id = l.component_id "
                          "WHERE c.tag = 'OM2-NEW-1'")[0]
    media = app.store.rows("SELECT m.id, k.x, k.y, k.label FROM media m JOIN markers k ON k.media_id = m.id "
                           "WHERE m.leak_id = ?", (leak["id"],))
    assert len(media) == 1 and media[0]["label"] == "OM2-NEW-1" and abs(media[0]["x"] - 0.5) < 0.05
    from fieldapp.evidence.ingest import library

    assert not list((library(app.store).root / "pending").glob("*"))  # handed to the library, not left behind

    due_before = {(i.leak_id, i.kind) for i in due_list(app.store, TODAY)[0]}
    assert (leak["id"], "first_attempt") in due_before
    app.leak_id = leak["id"]
    app.show("repair")
    repair = app.manager.get_screen("repair")
    repair.form.widget("kind").text = "first_attempt"
    type_into(repair.form, "actor", "Tap Tester")
    tap(button(repair, "Save"))
    repair.form.widget("kind").text = "repaired"
    type_into(repair.form, "actor", "Tap Tester")
    tap(button(repair, "Save"))
    kinds = [r["kind"] for r in app.store.rows("SELECT kind FROM actions WHERE leak_id = ? ORDER BY seq",
                                               (leak["id"],))]
    assert kinds == ["first_attempt", "repaired"]
    due_after = {(i.leak_id, i.kind) for i in due_list(app.store, TODAY)[0]}
    assert (leak["id"], "first_attempt") not in due_after and (leak["id"], "resurvey") in due_after
    app.show("due")
    rows = app.manager.get_screen("due").ids.due_items.data
    assert any("resurvey OM2-NEW-1" in r["text"] for r in rows)


def test_draft_survives_a_rebuilt_app(make_app, window):
    app = make_app()
    app.site_id = site_id(app, "Orrel Mesa Pad 5")
    app.show("survey")
    form = app.manager.get_screen("survey").form
    type_into(form, "operator", "Half Done")
    type_into(form, "ambient_temp_c", "-3.5")
    idle(2)
    app.flush_drafts()  # what on_pause / on_stop do; a killed app keeps what the 0.4 s timer saved
    app.stop()
    for child in list(window.children):
        window.remove_widget(child)
    again = make_app()
    again.site_id = site_id(again, "Orrel Mesa Pad 5")
    again.show("survey")
    values = again.manager.get_screen("survey").form.values()
    assert (values["operator"], values["ambient_temp_c"]) == ("Half Done", "-3.5")


def test_snapshot_command_writes_a_png(tmp_path, demo_store):
    import subprocess
    import sys

    db = tmp_path / "copy.db"
    demo_store.close()
    shutil.copy(demo_store.path, db)
    media = demo_store.path.parent / f"{demo_store.path.stem}-media"
    shutil.copytree(media, tmp_path / "copy-media")
    out = tmp_path / "repair.png"
    result = subprocess.run([sys.executable, "-m", "fieldapp", "--db", str(db), "app", "--screen", "repair",
                             "--screenshot", str(out), "--size", "800x1280"], capture_output=True, text=True)
    assert result.returncode == 0, result.stderr[-2000:]
    assert Image.open(out).size == (800, 1280)
    assert str(out) in result.stdout  # says where the file went
    # quiet: Kivy's log at warning level, and no camera or clipboard on this box is not critical
    assert "CRITICAL" not in result.stderr and "Traceback" not in result.stderr, result.stderr[-2000:]
    assert len(result.stderr.splitlines()) <= 3, result.stderr[-2000:]


def in_view(screen, widget) -> bool:
    """True when the whole widget lies inside the visible part of the screen's form scroll view."""
    scroller = screen.ids.scroller
    sx, sy = scroller.to_window(scroller.x, scroller.y)
    wx, wy = widget.to_window(widget.x, widget.y)
    return wy >= sy - 1 and wy + widget.height <= sy + scroller.height + 1


def test_refused_save_scrolls_to_and_marks_the_first_problem_field(make_app):
    app = make_app()
    app.leak_id = app.store.rows("SELECT l.id FROM leaks l JOIN components c ON c.id = l.component_id "
                                 "WHERE c.tag = 'TD-0051'")[0]["id"]
    app.show("repair")
    repair = app.manager.get_screen("repair")
    repair.ids.scroller.scroll_y = 0  # scrolled to the bottom, as after looking at the photos
    idle(3)
    who = repair.form.rows_by_name["actor"]
    assert not in_view(repair, who)
    before = len(app.store.rows("SELECT id FROM actions"))
    tap(button(repair, "Save"))
    idle(3)
    assert who.problem == "is required" and "Who" in repair.ids.banner.text
    assert in_view(repair, who)  # scrolled to it
    assert len(app.store.rows("SELECT id FROM actions")) == before
    names = [s.name for s in repair.form.specs]
    assert names[:3] == ["kind", "done_on", "actor"]  # required fields first


def test_hazard_and_due_soon_words_on_the_due_screen(make_app):
    app = make_app()
    app.show("due")
    rows = app.manager.get_screen("due").ids.due_items.data
    td51 = [r["text"] for r in rows if "TD-0051" in r["text"]]
    assert td51 and all("HAZARD" in t for t in td51)  # the demo's H2S leak (demo_site scenario)
    repeat = [r["text"] for r in rows if "REPEAT LEAKER" in r["text"]]
    assert repeat and all("[b]" in t for t in td51 + repeat)  # both flags in the same strong style
    assert any("OVERDUE[/b][/color] since" in r["text"] for r in rows)
    assert any("DUE SOON" in r["text"] for r in rows)
    import re
    from datetime import date

    app.show("start")
    start = app.manager.get_screen("start").ids.sites.data
    today = app.today()
    for r in start:  # a window that closed reads as overdue since a date, never "by" a past date
        for by in re.findall(r"by (\d{4}-\d\d-\d\d)", r["text"]):
            assert date.fromisoformat(by) >= today, r["text"]
    # An OGI survey counts for the quarterly AVO inspection of OOOOb ("AVO, or any other detection method",
    # 40 CFR 60.5397b(g)(1)(iii)(A) [text]), so the demo's overdue window is Brackwater's semiannual OGI.
    assert any(re.search(r"survey .*OVERDUE.* since \d{4}-\d\d-\d\d \(\d+ days\)", r["text"]) for r in start)
    assert any(r["urgency"] == "due_soon" and "DUE SOON" in r["text"] for r in start)


def test_three_photos_with_a_count_saved_together(make_app):
    from kivy.uix.image import Image as KivyImage

    app = make_app()
    app.site_id = site_id(app, "Orrel Mesa Pad 2")
    app.survey_id = app.store.rows("SELECT id FROM surveys WHERE site_id = ? ORDER BY started_at DESC",
                                   (app.site_id,))[0]["id"]
    app.show("leak")
    leak_screen = app.manager.get_screen("leak")
    type_into(leak_screen.form, "tag", "OM2-THREE")
    for _ in range(3):
        tap(button(leak_screen, "Photo: fake camera"))
    assert len(leak_screen.viewer.slides) == 3 and "Photo 3 of 3" in leak_screen.viewer.count.text
    tap(leak_screen.photo, 0.5, 0.5)
    assert leak_screen.pending[2]["marker"]
    tap(button(leak_screen, "< Previous photo"))
    assert "Photo 2 of 3" in leak_screen.viewer.count.text
    tap(button(leak_screen, "Save leak"))
    assert app.manager.current == "survey_run"
    leak = app.store.rows("SELECT l.id FROM leaks l JOIN components c ON c.id = l.component_id "
                          "WHERE c.tag = 'OM2-THREE'")[0]["id"]
    assert len(app.store.rows("SELECT id FROM media WHERE leak_id = ?", (leak,))) == 3
    app.leak_id = leak
    app.show("repair")
    viewer = app.manager.get_screen("repair").viewer
    assert len(viewer.slides) == 3 and all(isinstance(s, KivyImage) for s in viewer.slides)
    assert "Photo 1 of 3" in viewer.count.text
    assert viewer.carousel.height >= 0.7 * viewer.width * 0.75  # large: most of the width


def test_unit_preference_changes_what_is_shown_and_stored(make_app):
    from fieldapp.store.prefs import unit_system

    app = make_app()
    app.site_id = site_id(app, "Orrel Mesa Pad 2")
    app.show("survey")
    screen = app.manager.get_screen("survey")
    assert screen.form.rows_by_name["ambient_temp_c"].label == "Ambient temperature (°C)"
    screen.units_choice.text = "°F and mph"  # what picking it from the list does
    idle(2)
    assert unit_system(app.store).key == "us"
    assert screen.form.rows_by_name["ambient_temp_c"].label == "Ambient temperature (°F)"
    assert screen.form.rows_by_name["wind_max_m_s"].label == "Maximum wind (mph)"
    fill_survey(screen.form)
    type_into(screen.form, "ambient_temp_c", "41")
    type_into(screen.form, "wind_speed_m_s", "5")
    type_into(screen.form, "wind_max_m_s", "10")
    tap(button(screen, "Start survey"))
    assert app.manager.current == "survey_run"
    survey = app.store.get("surveys", app.survey_id)
    # 41 °F = 5 °C; 10 mph = 4.4704 m/s (NIST SP 811 B.8/B.9, exact definitions)
    assert survey["ambient_temp_c"] == pytest.approx(5.0) and survey["wind_max_m_s"] == pytest.approx(4.4704)
    assert (survey["ambient_temp_entered"], survey["temp_unit"]) == (41.0, "°F")
    assert (survey["wind_max_entered"], survey["wind_unit"]) == (10.0, "mph")
    run = app.manager.get_screen("survey_run")
    assert any("41.0 °F" in getattr(w, "text", "") for w in run.walk())  # shown in the crew's units
    app.show("survey")  # a new form opens in °F again: the preference is the store's
    assert app.manager.get_screen("survey").form.rows_by_name["ambient_temp_c"].label.endswith("(°F)")


def test_receive_from_office_applies_an_office_bundle(make_app, tmp_path, window):
    from fieldapp.store import ops
    from fieldapp.store.base import Store
    from sync.bundle import acked_seq, make_device_bundle, make_office_bundle
    from sync.merge import merge

    app = make_app()
    office = Store(tmp_path / "office" / "office.db", actor="office", wall=Wall())
    from sync.trust import enrol_each_other

    enrol_each_other(office, app.store)  # bundles are signed: the tablet and its office know each other
    merge(office, make_device_bundle(app.store, tmp_path / "day.zip").path)
    pad = office.rows("SELECT id FROM sites WHERE name = 'Orrel Mesa Pad 2'")[0]["id"]
    ops.add_component(office, {"site_id": pad, "tag": "OM2-OFFICE-1", "type": "flange", "service": "gas"})
    app.show("export")
    screen = app.manager.get_screen("export")
    incoming = screen.inbox() / "from-office.zip"
    make_office_bundle(office, incoming, app.store.device_id)
    office.close()
    assert acked_seq(app.store) == 0
    tap(button(screen, "Receive from office"))
    from kivy.uix.filechooser import FileChooserListView

    on_top = [w for child in window.children for w in child.walk()]  # popups are children of the window
    chooser = [w for w in on_top if isinstance(w, FileChooserListView)]
    assert chooser and chooser[0].path == str(screen.inbox())
    from fieldapp.ui.audit import audit

    popup_findings = [str(f) for child in window.children if child is not app.root for f in audit(child)]
    assert not popup_findings, popup_findings  # the picker is glove-sized and legible too
    chooser[0].selection = [str(incoming)]  # what tapping the file's row does
    popup_use = [w for w in on_top if getattr(w, "text", None) == "Use this file"][0]
    tap(popup_use)
    assert "Received:" in screen.out_label.text and "1 new change" in screen.out_label.text
    assert app.store.rows("SELECT id FROM components WHERE tag = 'OM2-OFFICE-1'")
    assert acked_seq(app.store) > 0  # the office's acknowledgement
    texts = " ".join(getattr(w, "text", "") for w in screen.walk())
    assert str(screen.folder()) in texts and "tablet " in texts  # destinations and a short device name


def test_a_crash_during_a_leak_save_keeps_the_draft_with_every_photo(make_app, window, monkeypatch):
    import fieldapp.evidence.leak_save as leak_save

    app = make_app()
    app.site_id = site_id(app, "Orrel Mesa Pad 2")
    survey = app.store.rows("SELECT id FROM surveys WHERE site_id = ? ORDER BY started_at DESC",
                            (app.site_id,))[0]["id"]
    app.survey_id = survey
    app.show("leak")
    leak_screen = app.manager.get_screen("leak")
    type_into(leak_screen.form, "tag", "OM2-CRASH")
    for _ in range(3):
        tap(button(leak_screen, "Photo: fake camera"))

    def crash(*_args, **_kw):  # the process dies between the leak row and its media rows
        raise SystemExit("killed")

    monkeypatch.setattr(leak_save, "record_media", crash)
    with pytest.raises(SystemExit):
        leak_screen.do_save()
    monkeypatch.undo()
    assert not app.store.rows("SELECT l.id FROM leaks l JOIN components c ON c.id = l.component_id "
                              "WHERE c.tag = 'OM2-CRASH'")  # rolled back: no leak without its photos
    app.stop()
    for child in list(window.children):
        window.remove_widget(child)
    again = make_app()
    again.site_id, again.survey_id = site_id(again, "Orrel Mesa Pad 2"), survey
    again.show("leak")
    restored = again.manager.get_screen("leak")
    assert restored.form.values()["tag"] == "OM2-CRASH"
    assert len(restored.viewer.slides) == 3 and "of 3" in restored.viewer.count.text
    tap(button(restored, "Save leak"))
    leak = again.store.rows("SELECT l.id FROM leaks l JOIN components c ON c.id = l.component_id "
                            "WHERE c.tag = 'OM2-CRASH'")[0]["id"]
    assert len(again.store.rows("SELECT id FROM media WHERE leak_id = ?", (leak,))) == 3
