"""All the photos of a leak, one at a time and large: swipe or the Previous / Next buttons, with a
count ("Photo 2 of 3") so nobody misses the ones after the first."""

from __future__ import annotations

from kivy.properties import NumericProperty
from kivy.uix.boxlayout import BoxLayout
from kivy.uix.carousel import Carousel
from kivy.uix.label import Label

from fieldapp.ui import theme
from fieldapp.ui.widgets import QuietButton


class PhotoViewer(BoxLayout):
    """A carousel of image widgets with a count and glove-sized buttons; as tall as its width allows."""

    index = NumericProperty(0)

    def __init__(self, **kwargs):
        super().__init__(orientation="vertical", size_hint_y=None, spacing=theme.GAP // 2, **kwargs)
        self.count = Label(text="", bold=True, size_hint_y=None, height=theme.TOUCH_MIN, halign="left",
                           valign="middle", color=theme.INK)
        self.count.bind(size=lambda w, _s: setattr(w, "text_size", w.size))
        self.carousel = Carousel(direction="right", loop=False, size_hint_y=None, scroll_distance=theme.TOUCH_MIN)
        self.carousel.bind(index=self._moved)
        self.buttons = BoxLayout(size_hint_y=None, height=theme.TOUCH, spacing=theme.GAP)
        self.back = QuietButton(text="< Previous photo")
        self.next = QuietButton(text="Next photo >")
        self.back.bind(on_release=lambda *_: self.go(-1))
        self.next.bind(on_release=lambda *_: self.go(1))
        self.buttons.add_widget(self.back)
        self.buttons.add_widget(self.next)
        for w in (self.count, self.carousel, self.buttons):
            self.add_widget(w)
        self.bind(width=self._resize)
        self._resize()

    def _resize(self, *_):
        # 4:3 photos at the full width, but never taller than about two thirds of a portrait screen
        from kivy.core.window import Window

        cap = max(theme.TOUCH * 4, Window.height * 0.55)  # the count and buttons stay in view with it
        self.carousel.height = min(self.width * 0.75, cap) if self.slides else 0
        self.height = (self.count.height + self.carousel.height + self.buttons.height + theme.GAP
                       if self.slides else 0)
        self.opacity = 1 if self.slides else 0  # nothing to show: takes no room
        self.buttons.opacity = 1 if len(self.slides) > 1 else 0
        self.buttons.height = theme.TOUCH if len(self.slides) > 1 else 0
        self.buttons.disabled = len(self.slides) <= 1

    @property
    def slides(self) -> list:
        return self.carousel.slides

    def go(self, step: int) -> None:
        """Show the previous (-1) or next (+1) photo at once."""
        self.carousel.index = max(0, min(len(self.slides) - 1, (self.carousel.index or 0) + step))

    def add(self, widget, show: bool = True) -> None:
        """Add one image widget (shown at once when ``show``)."""
        self.carousel.add_widget(widget)
        if show:
            self.carousel.index = len(self.slides) - 1
        self._resize()
        self._moved()

    def clear(self) -> None:
        """Remove every photo."""
        self.carousel.clear_widgets()
        self._resize()
        self._moved()

    def _moved(self, *_):
        n = len(self.slides)
        self.index = self.carousel.index or 0
        self.count.text = f"Photo {self.index + 1} of {n} - swipe or use the buttons" if n > 1 else (
            "Photo 1 of 1" if n else "No photo yet")
        self.back.disabled = self.index <= 0 or n <= 1
        self.next.disabled = self.index >= n - 1 or n <= 1
