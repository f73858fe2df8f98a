"""Popups for picking an image file and for taking a camera still."""

from __future__ import annotations

import io
from pathlib import Path

from kivy.uix.boxlayout import BoxLayout
from kivy.uix.filechooser import FileChooserListView
from kivy.uix.popup import Popup

from fieldapp.ui import theme
from fieldapp.ui.widgets import BigButton, QuietButton

PATTERNS = ["*.jpg", "*.jpeg", "*.JPG", "*.JPEG", "*.png", "*.PNG", "*.tif", "*.tiff", "*.mp4", "*.MP4", "*.mov"]


def _glove_sized(_layout, entry, *_parent) -> None:
    """Kivy's file rows are 24 dp on a screen of density 1: make each glove-sized, in the app's type."""
    entry.height = theme.TOUCH
    for label in entry.walk(restrict=True):
        if hasattr(label, "font_size") and label is not entry:
            label.font_size = theme.FONT


def pick_file(start: Path, done, patterns: list[str] | None = None, title: str = "Import a photo or clip") -> None:
    """A full-screen file chooser (``patterns``: photos and clips unless given); calls ``done(path or None)``."""
    box = BoxLayout(orientation="vertical", spacing=theme.GAP)
    chooser = FileChooserListView(path=str(start), filters=patterns or PATTERNS)
    chooser.layout.bind(on_entry_added=_glove_sized)
    buttons = BoxLayout(size_hint_y=None, height=theme.TOUCH, spacing=theme.GAP)
    # a plain white ground: the app's dark text reads on it in the sun (and the audit can check it)
    popup = Popup(title=title, content=box, size_hint=(0.95, 0.95), title_size=theme.FONT_BIG, background="",
                  background_color=theme.PANEL, title_color=theme.INK, separator_color=theme.ACTION)
    use = BigButton(text="Use this file")
    cancel = QuietButton(text="Cancel")

    def finish(path):
        popup.dismiss()
        done(path)

    use.bind(on_release=lambda *_: finish(chooser.selection[0] if chooser.selection else None))
    cancel.bind(on_release=lambda *_: finish(None))
    buttons.add_widget(cancel)
    buttons.add_widget(use)
    box.add_widget(chooser)
    box.add_widget(buttons)
    popup.open()


def camera_popup(done) -> None:
    """A live camera view with a big capture button; calls ``done(jpeg bytes or None, name)``."""
    from kivy.uix.camera import Camera
    from PIL import Image

    box = BoxLayout(orientation="vertical", spacing=theme.GAP)
    cam = Camera(play=True)
    popup = Popup(title="Take a photo", content=box, size_hint=(0.95, 0.95), title_size=theme.FONT_BIG,
                  background="", background_color=theme.PANEL, title_color=theme.INK, separator_color=theme.ACTION)
    shoot = BigButton(text="Take photo", font_size=theme.FONT_BIG, height=theme.TOUCH * 1.3)

    def capture(*_):
        texture = cam.texture
        img = Image.frombytes("RGBA", texture.size, texture.pixels).transpose(Image.Transpose.FLIP_TOP_BOTTOM)
        out = io.BytesIO()
        img.convert("RGB").save(out, "JPEG", quality=92)
        cam.play = False
        popup.dismiss()
        done(out.getvalue(), "camera.jpg")

    shoot.bind(on_release=capture)
    box.add_widget(cam)
    box.add_widget(shoot)
    popup.open()
