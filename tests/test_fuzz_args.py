"""Random strings, numbers and byte strings in every command's arguments: never a traceback, exit 0
or 2, and the store unchanged unless the command succeeded (exit 0).

Byte strings arrive as a Linux command line hands them to Python: decoded as UTF-8 with
``surrogateescape``. NUL cannot be part of a real argument (C strings end there), so it is left out.
"""

from __future__ import annotations

import io
import sqlite3

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from PIL import Image
from test_bad_inputs import snapshot

from fieldapp.cli import main

TRICKY = ["", " ", "nan", "inf", "-inf", "-1", "0", "1e308", "1e-308", "9999-12-31", "0000-00-00", "1" * 30,
          "2026-02-29", "--", "-", "x" * 300, "0x0", "1,5", "\t", "\u2028", "é", "😀", "..", "/"]
VALUE = st.one_of(
    st.sampled_from(TRICKY),
    st.text(st.characters(exclude_characters="\x00", exclude_categories=("Cs",)), max_size=24),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(min_value=-(10**40), max_value=10**40).map(str),
    st.binary(max_size=16).map(lambda b: b.replace(b"\x00", b"").decode("utf-8", "surrogateescape")),
)

# "V" is the argument hypothesis fills; "{leak}", "{files}" come from the world fixture.
TEMPLATES = [
    ["sites", "--json"],
    ["surveys", "--site", "V"], ["leaks", "--site", "V"], ["leaks", "--site", "V", "--open", "--json"],
    ["history", "V"], ["programs", "show", "V"],
    ["estimate", "--type", "V", "--service", "gas"],
    ["estimate", "--type", "valve", "--service", "V"],
    ["estimate", "--type", "valve", "--service", "gas", "--method", "method21", "--ppm", "V", "--json"],
    ["estimate", "--type", "valve", "--service", "gas", "--measured", "V", "--unit", "kg/h", "--json"],
    ["estimate", "--type", "valve", "--service", "gas", "--measured", "5", "--unit", "V"],
    ["estimate", "--type", "valve", "--service", "gas", "--methane-fraction", "V", "--json"],
    ["estimate", "--type", "valve", "--service", "gas", "--factor-set", "V"],
    ["estimate", "--type", "valve", "--service", "gas", "--gwp", "V"],
    ["estimate", "--type", "valve", "--service", "gas", "--method", "method21", "--ppm", "20000",
     "--pegged-at", "V"],
    ["rules", "deadlines", "--program", "us-nsps-oooo-a", "--detected", "V", "--json"],
    ["rules", "deadlines", "--program", "us-nsps-oooo-a", "--detected", "2026-05-01", "--ppm", "V"],
    ["rules", "deadlines", "--program", "us-nsps-oooo-a", "--detected", "2026-05-01", "--first-attempt", "V"],
    ["rules", "deadlines", "--program", "us-nsps-oooo-a", "--detected", "2026-05-01", "--delayed", "V",
     "--shutdown", "2026-09-01"],
    ["rules", "deadlines", "--program", "V", "--detected", "2026-05-01"],
    ["rules", "window", "--program", "us-nsps-oooo-a", "--site-kind", "well_site", "--last", "V", "--json"],
    ["rules", "window", "--program", "us-nsps-oooo-a", "--site-kind", "V", "--startup", "2026-01-01"],
    ["due", "--as-of", "V", "--json"], ["due", "--within", "V"], ["due", "--site", "V"],
    ["emissions", "--from", "V", "--to", "2026-12-01", "--json"],
    ["emissions", "--from", "2026-01-01", "--to", "V", "--as-of", "2026-12-01"],
    ["emissions", "--from", "2026-01-01", "--to", "2026-12-01", "--convention", "V"],
    ["evidence", "list", "--leak", "V"],
    ["evidence", "add", "--leak", "V", "{files}/good.jpg"],
    ["evidence", "add", "--leak", "{leak}", "{files}/good.jpg", "--marker", "V"],
    ["evidence", "add", "--leak", "{leak}", "{files}/good.jpg", "--marker", "0.5,0.5", "--label", "V"],
    ["import", "components", "{files}/good.csv", "--site", "V"],
    ["import", "components", "{files}/V", "--site", "Orrel Mesa Pad 2"],
    ["bundle", "make", "--out", "{files}/b.zip", "--since", "V"],
    ["bundle", "make", "--out", "{files}/b.zip", "--for-device", "V"],
    ["bundle", "merge", "{files}/V"],
    ["export", "csv", "--out", "{files}/csv", "--from", "V"],
    ["export", "csv", "--out", "{files}/csv", "--site", "V"],
    ["report", "period", "--from", "V", "--to", "2026-12-01", "--out", "{files}/p.pdf"],
    ["report", "survey", "V", "--out", "{files}/s.pdf"],
    ["report", "leak", "V", "--out", "{files}/k.pdf"],
    ["report", "leak", "{leak}", "--as-of", "V", "--out", "{files}/k.pdf"],
    ["app", "--screen", "V"],
    ["--actor", "V", "device"],
]


@pytest.fixture(scope="module")
def world(tmp_path_factory):
    with pytest.MonkeyPatch.context() as env:
        env.delenv("DISPLAY", raising=False)
        env.delenv("WAYLAND_DISPLAY", raising=False)
        yield _world(tmp_path_factory)


def _world(tmp_path_factory):
    root = tmp_path_factory.mktemp("fuzz")
    db = root / "demo.db"
    assert main(["--db", str(db), "demo", "--no-app"]) == 0
    conn = sqlite3.connect(db)
    leak = conn.execute("SELECT id FROM leaks WHERE deleted = 0 ORDER BY id LIMIT 1").fetchone()[0]
    conn.close()
    files = root / "files"
    files.mkdir()
    img = io.BytesIO()
    Image.new("RGB", (64, 48), (90, 90, 200)).save(img, "JPEG")
    (files / "good.jpg").write_bytes(img.getvalue())
    (files / "good.csv").write_text("tag,type,service\nFZ-1,valve,gas\n")
    return {"db": db, "leak": leak, "files": files}


@pytest.mark.parametrize("template", TEMPLATES, ids=[" ".join(t)[:50] for t in TEMPLATES])
@settings(max_examples=12, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(value=VALUE)
def test_random_arguments_never_crash(world, capsys, template, value):
    argv = ["--db", str(world["db"])]
    for part in template:
        part = part.replace("{files}", str(world["files"])).replace("{leak}", world["leak"])
        argv.append(value if part == "V" else part.replace("/V", "/" + value.replace("/", "_")))
    before = snapshot(world["db"])
    code = main(argv)
    out, err = capsys.readouterr()
    assert "Traceback" not in out + err, (argv, err)
    assert code in (0, 2), (argv, code, err)
    if code == 2:
        assert len(err.splitlines()) == 1, (argv, err)
        assert snapshot(world["db"]) == before, argv
