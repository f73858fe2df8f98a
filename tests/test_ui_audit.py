"""Every screen of the tablet app, at three window sizes, passes the widget-tree checks of
fieldapp/ui/audit.py: no label cut mid-word, touch targets of at least 48 dp, and text contrast of
at least 4.5:1 (WCAG 2.x success criterion 1.4.3, relative luminance as WCAG 2 defines it)."""

from __future__ import annotations

import pytest

from tests.test_ui import idle, make_app, window  # noqa: F401  (fixtures)

SIZES = ((1280, 800), (800, 1280), (1920, 1200))


def test_contrast_formula_against_wcag_examples():
    from fieldapp.ui.audit import contrast

    # WCAG 2 definition: black on white is 21:1, a colour on itself 1:1; #767676 on white is the
    # well-known lightest grey passing 4.5:1 (4.54:1) - the last value recalled from memory.
    assert contrast((0, 0, 0), (1, 1, 1)) == pytest.approx(21.0)
    assert contrast((0.5, 0.5, 0.5), (0.5, 0.5, 0.5)) == pytest.approx(1.0)
    assert contrast((0x76 / 255,) * 3, (1, 1, 1)) == pytest.approx(4.54, abs=0.01)


def test_the_audit_finds_a_cut_label_a_small_target_and_low_contrast(window):  # noqa: F811
    from kivy.uix.boxlayout import BoxLayout
    from kivy.uix.button import Button
    from kivy.uix.label import Label

    from fieldapp.ui.audit import audit

    box = BoxLayout(size=(400, 400))
    box.add_widget(Label(text="Tamsin Draw Compressor Station", size_hint=(None, None), size=(90, 30),
                         text_size=(90, 30), shorten=True, shorten_from="center", color=(0, 0, 0, 1)))
    box.add_widget(Button(text="ok", size_hint=(None, None), size=(30, 30)))
    box.add_widget(Label(text="pale", color=(0.8, 0.8, 0.8, 1)))
    box.do_layout()
    checks = {f.check for f in audit(box)}
    assert checks == {"cut", "touch", "contrast"}


@pytest.mark.parametrize("size", SIZES, ids=lambda s: f"{s[0]}x{s[1]}")
def test_every_screen_passes_the_audit(make_app, window, size):  # noqa: F811
    from fieldapp.ui.audit import audit
    from fieldapp.ui.snapshot import pick_records

    window.size = size
    idle(3)
    app = make_app()
    pick_records(app)
    idle(3)
    assert tuple(app.manager.size) == size  # the screens are laid out at this size
    findings = []
    for name in ("start", "site", "survey", "survey_run", "leak", "repair", "due", "export"):
        app.show(name)
        idle(6)
        findings += [f"{name}: {f}" for f in audit(app.manager.get_screen(name))]
    window.size = (1280, 800)
    assert not findings, "\n".join(findings)
