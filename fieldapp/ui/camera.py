"""Where photos come from: the device camera when there is one, image files otherwise, a fake in tests."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

Done = Callable[[bytes | None, str], None]


class PhotoSource:
    """Gives the bytes of one photo to a callback (None when cancelled)."""

    name = "photo source"

    def available(self) -> bool:
        """True when this source can be used on this device."""
        return True

    def take(self, done: Done) -> None:
        """Ask for one photo; calls ``done(data, name)``."""
        raise NotImplementedError


class FileSource(PhotoSource):
    """Picks an image file (an OGI camera's exported still, or a tablet photo) with Kivy's file chooser."""

    name = "import file"

    def __init__(self, start: Path | None = None):
        self.start = start or Path.home()

    def take(self, done: Done) -> None:
        from fieldapp.ui.file_picker import pick_file

        pick_file(self.start, lambda path: done(Path(path).read_bytes(), Path(path).name) if path else done(None, ""))


class KivyCameraSource(PhotoSource):
    """The device camera through Kivy's camera provider, when one exists."""

    name = "camera"

    def available(self) -> bool:
        try:
            from kivy.core.camera import Camera as CoreCamera
        except Exception:  # noqa: BLE001 - any provider failure means no camera
            return False
        return CoreCamera is not None

    def take(self, done: Done) -> None:
        from fieldapp.ui.file_picker import camera_popup

        camera_popup(done)


class FakeSource(PhotoSource):
    """Returns prepared bytes at once (tests and screenshots)."""

    name = "fake camera"

    def __init__(self, data: bytes, filename: str = "fake.jpg"):
        self.data, self.filename = data, filename

    def take(self, done: Done) -> None:
        done(self.data, self.filename)


def default_sources(start: Path | None = None) -> list[PhotoSource]:
    """The camera first when the device has one, then file import."""
    camera = KivyCameraSource()
    return [camera, FileSource(start)] if camera.available() else [FileSource(start)]
