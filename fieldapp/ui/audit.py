"""Checks over a rendered widget tree, for people in gloves and in bright sun:

- no label's text is cut mid-word (a wrapped word split across lines, lines dropped, text running out
  of its box, or an ellipsis inside a word; shortening at a word boundary is allowed);
- every touch target is at least 48 dp on its short side;
- text contrast against its background is at least 4.5:1 (WCAG 2.x, relative luminance, criterion 1.4.3).

Backgrounds are those this app paints (buttons, banners, bars, panels, list rows, problem fields);
disabled and hidden widgets are skipped (WCAG exempts inactive controls).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from kivy.metrics import dp
from kivy.uix.button import Button
from kivy.uix.label import Label
from kivy.uix.modalview import ModalView
from kivy.uix.textinput import TextInput
from kivy.uix.treeview import TreeViewNode

from fieldapp.ui import theme

MIN_TOUCH_DP = 48
MIN_CONTRAST = 4.5
MARKUP = re.compile(r"\[/?(?:b|i|u|s|sub|sup|size|color|font|font_context|font_family|font_features|text_language|"
                    r"anchor|ref)(?:=[^\]]*)?\]")
COLOUR = re.compile(r"\[color=#?([0-9a-fA-F]{6})\]")
ELLIPSIS = ("...", "…")


@dataclass(frozen=True)
class Finding:
    """One failed check: what, on which widget, and why."""

    check: str
    widget: str
    detail: str

    def __str__(self) -> str:
        return f"{self.check}: {self.widget}: {self.detail}"


def luminance(rgb) -> float:
    """WCAG 2 relative luminance of an sRGB colour given as 0..1 floats."""
    def channel(c: float) -> float:
        return c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4
    r, g, b = (channel(float(c)) for c in rgb[:3])
    return 0.2126 * r + 0.7152 * g + 0.0722 * b


def contrast(fg, bg) -> float:
    """WCAG 2 contrast ratio of two colours (1 to 21)."""
    a, b = sorted((luminance(fg), luminance(bg)), reverse=True)
    return (a + 0.05) / (b + 0.05)


def blend(fg, bg):
    """A colour with alpha drawn over an opaque one."""
    alpha = fg[3] if len(fg) > 3 else 1.0
    return tuple(alpha * f + (1 - alpha) * b for f, b in zip(fg[:3], bg[:3], strict=True))


def shown(widget) -> bool:
    """Visible: on screen, not transparent, with a size, and not disabled."""
    w = widget
    while w is not None and w is not w.parent:
        if getattr(w, "opacity", 1) == 0:
            return False
        w = w.parent
    return widget.width > 1 and widget.height > 1 and not widget.disabled


def background(widget):
    """The colour this app paints behind a widget's text."""
    from fieldapp.ui.widgets import Banner, FieldRow, ListRow, Panel, TopBar

    w = widget
    while w is not None and w is not w.parent:
        if isinstance(w, TextInput):
            return tuple(w.background_color[:3])
        if isinstance(w, Button) and w.background_normal == "":
            return blend(w.background_color, theme.BG)
        if isinstance(w, Banner):
            return tuple(w.fill[:3])
        if isinstance(w, TopBar):
            return tuple(theme.INK[:3])
        if isinstance(w, ListRow):
            return tuple(theme.PANEL[:3])
        if isinstance(w, FieldRow) and w.problem:
            return (1, 0.9, 0.88)
        if isinstance(w, Panel):
            return tuple(w.fill[:3])
        if isinstance(w, ModalView) and w.background == "":
            return tuple(w.background_color[:3])
        w = w.parent
    return tuple(theme.BG[:3])


def words(text: str) -> list[str]:
    return MARKUP.sub("", text).replace("&bl;", "[").replace("&br;", "]").replace("&amp;", "&").split()


def rendered_words(label: Label) -> list[str] | None:
    core = getattr(label, "_label", None)
    lines = getattr(core, "_cached_lines", None)
    if lines is None:
        return None
    out = []
    for line in lines:
        out.extend("".join(w.text for w in line.words).split())
    return out


def cut_problem(label: Label) -> str:
    """Why a label's text reads cut, or '' when it shows whole (or shortened at a word boundary)."""
    if not label.text.strip():
        return ""
    label.texture_update()
    want, got = words(label.text), rendered_words(label)
    if got is not None and got != want:
        shortened = got and got[-1].endswith(ELLIPSIS)
        whole = [g.rstrip(".…") for g in got]
        at_boundary = (label.shorten and label.split_str == " " and shortened
                       and all(w in want for w in whole if w))
        if not at_boundary:
            return f"shows {' '.join(got)[:80]!r} of {' '.join(want)[:80]!r}"
    tw, th = label.texture_size
    if tw > label.width + dp(2) and not label.text_size[0]:
        return f"text is {tw:.0f} px wide in a {label.width:.0f} px box"
    if th > label.height + dp(2) and label.text_size[1] is None:
        return f"text is {th:.0f} px tall in a {label.height:.0f} px box"
    return ""


def text_colours(label: Label) -> list[tuple]:
    colours = [tuple(label.color)]
    if label.markup:
        for hex_colour in COLOUR.findall(label.text):
            colours.append(tuple(int(hex_colour[i:i + 2], 16) / 255 for i in (0, 2, 4)) + (1.0,))
    return colours


def audit(root) -> list[Finding]:
    """Every finding in a widget tree (a screen, or the window's children for popups)."""
    findings = []
    for w in root.walk(restrict=True):
        if not shown(w):
            continue
        name = f"{type(w).__name__}({(getattr(w, 'text', '') or getattr(w, 'hint_text', ''))[:40]!r})"
        touchable = isinstance(w, Button | TextInput | TreeViewNode)  # TreeViewNode: file picker rows
        if touchable and min(w.width, w.height) < dp(MIN_TOUCH_DP) - 0.5:
            findings.append(Finding("touch", name, f"{w.width:.0f}x{w.height:.0f} px, under {MIN_TOUCH_DP} dp"))
        if isinstance(w, Label) and w.text.strip():
            if problem := cut_problem(w):
                findings.append(Finding("cut", name, problem))
            bg = background(w)
            for fg in text_colours(w):
                ratio = contrast(blend(fg, bg), bg)
                if ratio < MIN_CONTRAST:
                    findings.append(Finding("contrast", name, f"{ratio:.2f}:1 for {tuple(round(c, 2) for c in fg)}"
                                                             f" on {tuple(round(c, 2) for c in bg)}"))
        if isinstance(w, TextInput):
            bg = tuple(w.background_color[:3])
            pairs = [("text", w.foreground_color)] + ([("hint", w.hint_text_color)] if w.hint_text and not w.text
                                                       else [])
            for what, fg in pairs:
                ratio = contrast(blend(fg, bg), bg)
                if ratio < MIN_CONTRAST:
                    findings.append(Finding("contrast", name, f"{what} {ratio:.2f}:1"))
    return findings
