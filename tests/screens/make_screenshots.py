"""Screenshots of every screen of the tablet app at 1280x800 (landscape), 800x1280 (portrait) and
1920x1200 (a large rugged tablet).

Run: python tests/screens/make_screenshots.py [OUT_DIR] [--db DEMO.db]
Loads the demo into a fresh store (unless --db is given) and renders each screen offscreen with
`plumebook app --screen NAME --screenshot FILE`.
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import tempfile
from pathlib import Path

SCREENS = ("start", "site", "survey", "survey_run", "leak", "repair", "due", "export")
SIZES = ("1280x800", "800x1280", "1920x1200")


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("out", nargs="?", default="screenshots/out", type=Path)
    parser.add_argument("--db", type=Path)
    args = parser.parse_args()
    args.out.mkdir(parents=True, exist_ok=True)  # `app --screenshot` refuses a missing folder
    env = {**os.environ, "KIVY_NO_CONSOLELOG": "1", "SDL_VIDEODRIVER": "offscreen", "KIVY_WINDOW": "sdl2"}
    env.pop("DISPLAY", None)
    tmp = tempfile.mkdtemp(prefix="plumebook-shots-")
    env.setdefault("XDG_CONFIG_HOME", tmp)
    env.setdefault("KIVY_HOME", tmp)
    db = args.db or Path(tmp) / "demo.db"
    cmd = [sys.executable, "-m", "fieldapp", "--db", str(db)]
    if args.db is None:
        subprocess.run([*cmd, "demo", "--no-app"], env=env, check=True, capture_output=True)
    for size in SIZES:
        for screen in SCREENS:
            out = args.out / f"{screen}-{size}.png"
            # a 10-inch 1920x1200 tablet reports a pixel density of about 1.5 (Android's hdpi bucket; memory),
            # so it is drawn at that density, not as a desktop monitor would be
            density = {"KIVY_METRICS_DENSITY": "1.5"} if size == "1920x1200" else {}
            subprocess.run([*cmd, "app", "--screen", screen, "--screenshot", str(out), "--size", size],
                           env={**env, **density}, check=True)


if __name__ == "__main__":
    main()
