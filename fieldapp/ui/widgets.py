"""Shared widgets: big buttons, top bar, labelled fields with their problem shown in place, list rows."""

from __future__ import annotations

from pathlib import Path

from kivy.lang import Builder
from kivy.properties import BooleanProperty, ColorProperty, ListProperty, ObjectProperty, StringProperty
from kivy.uix.boxlayout import BoxLayout
from kivy.uix.button import Button
from kivy.uix.label import Label
from kivy.uix.recycleview import RecycleView
from kivy.uix.spinner import Spinner

from fieldapp.ui import theme

Builder.load_file(str(Path(__file__).with_name("widgets.kv")))


class BigButton(Button):
    """The main action of a screen: full-width, glove-sized."""


class QuietButton(Button):
    """A secondary action."""


class Panel(BoxLayout):
    """A white panel with a thin border."""

    fill = ColorProperty(theme.PANEL)


class Banner(Label):
    """A coloured message strip (caution, warning, saved); takes no room while hidden or empty."""

    fill = ColorProperty(theme.DANGER)
    shown = BooleanProperty(True)


class Para(Label):
    """A paragraph that wraps to the width it is given and is as tall as its text."""


class TopBar(BoxLayout):
    """Title, back, and the two places a technician jumps to most: the due list and the sites."""

    title = StringProperty("")
    can_go_back = BooleanProperty(True)
    show_sites = BooleanProperty(True)  # False on the sites list itself


class FieldRow(BoxLayout):
    """A label, an input widget and the field's problem, if any, shown right under it."""

    label = StringProperty("")
    problem = StringProperty("")
    required = BooleanProperty(False)
    name = StringProperty("")
    widget = ObjectProperty(None, allownone=True)

    def set_widget(self, widget) -> None:
        """Place the input widget."""
        self.widget = widget
        self.ids.holder.clear_widgets()
        self.ids.holder.add_widget(widget)


class Choice(Spinner):
    """A pick-list that looks like one: a bordered box with a drawn down-arrow and "tap to choose" when empty."""

    EMPTY = "- tap to choose -"
    option_cls = "ChoiceOption"


class ListRow(Button):
    """One row of a RecycleView list; ``key`` says what it stands for, ``stripe`` colours its left edge."""

    key = StringProperty("")
    stripe = ColorProperty(theme.LINE)
    urgency = StringProperty("")
    on_pick = ObjectProperty(None, allownone=True)

    def on_release(self):
        if self.on_pick:
            self.on_pick(self.key)


class RowList(RecycleView):
    """A recycled list: only the visible rows are widgets, whatever the number of records."""

    rows = ListProperty([])

    def on_rows(self, *_):
        self.data = self.rows
