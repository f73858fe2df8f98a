"""Leak: the tag (from the inventory or new on the spot), type and service, photos with a tap to mark
the leak, an optional screening value or measured rate, the estimate shown live with its basis, and
a hazard flag that shows the caution and defers to the site's emergency procedures."""

from __future__ import annotations

import hashlib
from pathlib import Path

from kivy.clock import Clock
from kivy.graphics import Color, Line
from kivy.properties import ListProperty
from kivy.uix.boxlayout import BoxLayout
from kivy.uix.image import Image

from fieldapp import catalog
from fieldapp.atomic import write_bytes
from fieldapp.core.enums import ComponentType, Service, SurveyMethod
from fieldapp.core.estimate import EstimateError, LeakInput, co2e, estimate
from fieldapp.core.fields import ValidationError
from fieldapp.evidence.ingest import library
from fieldapp.evidence.leak_save import PhotoIn, save_leak_with_media
from fieldapp.evidence.probe import probe
from fieldapp.store.estimates import compressor_component, site_segment, wellhead_component
from fieldapp.store.lookups import component_by_tag
from fieldapp.ui import theme
from fieldapp.ui.forms import Form, Spec
from fieldapp.ui.photo_viewer import PhotoViewer
from fieldapp.ui.screens.form_base import FormScreen
from fieldapp.ui.widgets import Banner, Para, QuietButton

UNITS = ("", "kg/h", "lb/h", "scf/h", "m3/h")


class MarkImage(Image):
    """A photo the technician taps to mark where the leak is; the mark is drawn over it."""

    marker = ListProperty([])  # [x, y] normalised from the top-left, or []

    def __init__(self, on_mark=None, **kwargs):
        super().__init__(fit_mode="contain", **kwargs)
        self.on_mark = on_mark
        self.bind(pos=self._draw, size=self._draw, marker=self._draw, texture=self._draw)

    def image_box(self) -> tuple[float, float, float, float]:
        w, h = self.norm_image_size
        return self.center_x - w / 2, self.center_y - h / 2, w, h

    def on_touch_down(self, touch):
        if not self.texture or not self.collide_point(*touch.pos):
            return super().on_touch_down(touch)
        x0, y0, w, h = self.image_box()
        nx, ny = (touch.x - x0) / w, 1 - (touch.y - y0) / h
        if 0 <= nx <= 1 and 0 <= ny <= 1:
            self.marker = [round(nx, 4), round(ny, 4)]
            if self.on_mark:
                self.on_mark(self.marker)
        return True

    def _draw(self, *_):
        self.canvas.after.clear()
        if not self.marker or not self.texture:
            return
        x0, y0, w, h = self.image_box()
        cx, cy = x0 + self.marker[0] * w, y0 + (1 - self.marker[1]) * h
        r = max(18, min(w, h) / 12)
        with self.canvas.after:
            Color(0, 0, 0, 1)
            Line(circle=(cx, cy, r), width=5)
            Color(1, 1, 1, 1)
            Line(circle=(cx, cy, r), width=2.5)
            Line(points=[cx - r * 1.7, cy, cx - r * 0.6, cy], width=2)
            Line(points=[cx + r * 0.6, cy, cx + r * 1.7, cy], width=2)


class LeakScreen(FormScreen):
    """Record a new leak in the current survey."""

    def draft_key(self) -> str:
        return f"leak:{self.app.survey_id}" if self.app.survey_id else ""

    def draft_payload(self) -> dict:
        return {**self.form.values(), "pending": self.pending}

    def refresh(self) -> None:
        survey = self.store.get("surveys", self.app.survey_id)
        self.site = self.store.get("sites", survey["site_id"])
        self.survey = survey
        self.pending: list[dict] = []
        self.title = f"New leak - {self.site['name']}"
        body = self.ids.body
        body.clear_widgets()
        self.hazard_banner = Banner(text="", fill=theme.DANGER, shown=False)
        body.add_widget(self.hazard_banner)
        sources = BoxLayout(size_hint_y=None, height=theme.TOUCH, spacing=theme.GAP)
        for source in self.app.sources:
            button = QuietButton(text=f"Photo: {source.name}")
            button.bind(on_release=lambda _b, s=source: s.take(self.got_photo))
            sources.add_widget(button)
        body.add_widget(sources)
        self.photo_note = Para(text="No photo yet. Take or import one, then tap the leak on it.", color=theme.INK)
        body.add_widget(self.photo_note)
        self.viewer = PhotoViewer()
        body.add_widget(self.viewer)
        self.form = Form([
            Spec("tag", "Component tag (existing or new)", "text", required=True),
            Spec("type", "Component type", "choice", tuple(t.value for t in ComponentType), True),
            Spec("service", "Service", "choice", tuple(s.value for s in Service), True),
            Spec("hazard", "Hazard: large, near ignition, or may carry H2S", "flag"),
            Spec("hazard_note", "Hazard note", "text"),
            Spec("location_note", "Where on the component", "text"),
            Spec("screening_ppm", "Screening value (ppm, Method 21)", "number"),
            Spec("measured_rate", "Measured rate", "number"),
            Spec("measured_unit", "Unit of the measured rate", "choice", UNITS),
            Spec("measured_instrument", "Measuring instrument", "text"),
        ], on_change=self.form_changed)
        self.tag_note = Para(text="", color=theme.MUTED)
        body.add_widget(self.tag_note)
        body.add_widget(self.form)
        self.estimate_label = Para(text="")
        body.add_widget(self.estimate_label)
        self.set_actions("Save leak", self.do_save)
        self.say("")
        draft = self.restore_draft()
        if draft:
            for item in draft.get("pending", []):
                if Path(item["path"]).exists():  # a photo file removed by hand is not shown as pending
                    self.pending.append(item)
                    self._show_pending(item, scroll=False)
        self.form_changed(save=False)

    # -- photos ---------------------------------------------------------------------------------
    def got_photo(self, data: bytes | None, name: str) -> None:
        if not data:
            return
        try:
            found = probe(data, name)
        except ValidationError as exc:
            self.say(str(exc), "error")
            return
        sha = hashlib.sha256(data).hexdigest()
        path = library(self.store).root / "pending" / f"{sha}-{name}"
        write_bytes(path, data)  # kept on disk so a killed app keeps the photo with the draft
        item = {"path": str(path), "name": name, "marker": [], "kind": found.media_kind}
        self.pending.append(item)
        self._show_pending(item)
        self.changed()

    def _show_pending(self, item: dict, scroll: bool = True) -> None:
        if item["kind"] == "photo":
            image = MarkImage(on_mark=lambda marker, it=item: self.marked(it, marker), source=item["path"])
            image.marker = item.get("marker") or []
            self.viewer.add(image)
        self._note()
        if scroll:  # the hint and the photo in view, so the leak can be tapped at once
            Clock.schedule_once(lambda *_: self.scroll_to_field(self.photo_note), 0.05)

    @property
    def photo(self):
        """The photo on show (a MarkImage), or None."""
        slides = self.viewer.slides
        return slides[self.viewer.index] if slides else None

    def _note(self) -> None:
        photos = [p for p in self.pending if p["kind"] == "photo"]
        clips = len(self.pending) - len(photos)
        unmarked = sum(1 for p in photos if not p.get("marker"))
        what = f"{len(photos)} photo(s)" + (f" and {clips} clip(s)" if clips else "") + " ready."
        self.photo_note.text = (f"[b]{what}[/b] " + (f"Tap the leak on each photo ({unmarked} not marked yet)."
                                                     if unmarked else "Leak marked on every photo; tap to move it."))

    def marked(self, item: dict, marker: list[float]) -> None:
        item["marker"] = list(marker)
        self._note()
        self.changed()

    # -- live feedback --------------------------------------------------------------------------
    def form_changed(self, save: bool = True) -> None:
        values = self.form.values()
        tag = (values.get("tag") or "").strip()
        known = component_by_tag(self.store, self.site["id"], tag) if tag else None
        if known:
            self.tag_note.text = f"{tag}: in the inventory ({known['type']}, {known['service']})"
            if self.form.values()["type"] != known["type"]:
                self.form.set_values({"type": known["type"], "service": known["service"]})
        else:
            self.tag_note.text = f"{tag}: new tag - it will be added to the inventory" if tag else ""
        hazard = values.get("hazard")
        self.hazard_banner.text = ("CAUTION - hazardous leak. Keep clear, follow the site's emergency procedures "
                                   f"and the permit. {self.site['emergency_note']}") if hazard else ""
        self.hazard_banner.shown = bool(hazard)
        self.estimate_label.text = self.live_estimate(values)
        if save:
            self.changed()

    def live_estimate(self, values: dict) -> str:
        """The estimate the record would get, with its basis, or why there is none yet."""
        try:
            book = catalog.factor_book()
            segment, missing = site_segment(self.site, book)
            component = {"component_type": values["type"], "equipment": values.get("equipment") or ""}
            on_compressor, on_wellhead = compressor_component(component)[0], wellhead_component(component)[0]
            leak = LeakInput(
                ComponentType(values["type"]), Service(values["service"]), self.site["methane_mole_fraction"],
                self.site["methane_weight_fraction"], SurveyMethod(self.survey["method"]),
                float(values["screening_ppm"]) if values.get("screening_ppm") else None, None,
                float(values["measured_rate"]) if values.get("measured_rate") else None,
                values.get("measured_unit") or "", segment=segment, compressor_component=on_compressor,
                wellhead_component=on_wellhead)
            if segment is None and leak.measured_rate is None:
                return f"[b]Estimate:[/b] none ({missing})"
            result = estimate(leak, book)
            h = co2e(result.methane_kg_per_h, book, "ar5")
        except (EstimateError, ValueError, KeyError, TypeError) as exc:
            return f"[b]Estimate:[/b] not yet ({exc})"
        return (f"[b]Estimate: {result.methane_kg_per_h:.3g} kg CH4/h[/b]  (CO2e {h[100]:.3g} kg/h 100-yr, "
                f"{h[20]:.3g} kg/h 20-yr)\nbasis: {result.basis.replace('_', ' ')} - {result.factor_row} - "
                "an engineering estimate")

    # -- save -----------------------------------------------------------------------------------
    def do_save(self) -> None:
        if missing := self.form.missing():
            self.refuse(missing)
            return
        values = self.form.values()
        tag = (values.pop("tag") or "").strip()
        leak_values = {k: v for k, v in values.items() if k not in ("type", "service") and v not in (None, "")}
        leak_values.update(survey_id=self.survey["id"],
                           detected_at=self.app.now_text(self.site["timezone"]))
        known = component_by_tag(self.store, self.site["id"], tag)
        new_component = None
        if known:
            leak_values["component_id"] = known["id"]
        else:
            new_component = {"tag": tag, "type": values.get("type"), "service": values.get("service")}
        photos = [PhotoIn(Path(p["path"]), p["name"], tuple(p["marker"]) if p.get("marker") else None)
                  for p in self.pending]
        self.save_draft()  # the draft on disk holds everything until the commit below
        try:
            leak = save_leak_with_media(self.store, leak_values, new_component, photos, marker_label=tag,
                                        actor=self.survey["operator"], draft=self.draft_key())
        except ValidationError as exc:
            self.refuse(exc.problems)
            return
        except OSError as exc:  # a pending photo file vanished or cannot be read
            self.say(f"Not saved: a photo could not be read ({exc}). Take it again.", "error")
            return
        self.drop_draft()
        self.app.leak_id = leak.id
        self.app.show("survey_run", remember=False)
        count = f" with {len(photos)} photo(s)/clip(s)" if photos else ""
        self.app.manager.get_screen("survey_run").say(f"Leak {tag} saved{count}.", "ok")
