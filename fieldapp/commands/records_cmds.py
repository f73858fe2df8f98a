"""Commands over records: init, demo, sites, surveys, leaks, history, import."""

from __future__ import annotations

import argparse
import os
from pathlib import Path

from fieldapp.cmdkit import emit_json, emit_table, open_store, required_text

MIN_SIDE, MAX_SIDE = 100, 8192  # screenshot size limits in pixels


def register(sub: argparse._SubParsersAction) -> None:
    """Add the record commands."""
    p = sub.add_parser("init", help="create an empty store")
    p.set_defaults(handler=cmd_init, creates_store=True)

    p = sub.add_parser("demo", help="load the invented demo scenario and write its outputs")
    p.add_argument("--reset", action="store_true", help="delete the store file first")
    p.add_argument("--no-app", action="store_true", help="never open the tablet app")
    p.set_defaults(handler=cmd_demo, creates_store=True)

    p = sub.add_parser("sites", help="list sites")
    p.add_argument("--json", action="store_true")
    p.set_defaults(handler=cmd_sites)

    p = sub.add_parser("surveys", help="list surveys")
    p.add_argument("--site", help="site id or name")
    p.add_argument("--json", action="store_true")
    p.set_defaults(handler=cmd_surveys)

    p = sub.add_parser("leaks", help="list leaks with their derived state")
    p.add_argument("--site", help="site id or name")
    p.add_argument("--open", action="store_true", help="only leaks not closed or void")
    p.add_argument("--json", action="store_true")
    p.set_defaults(handler=cmd_leaks)

    p = sub.add_parser("history", help="a leak's whole story (or the journal of any record), oldest first")
    p.add_argument("record_id", help="leak TAG (its open leak, or its only one), TAG@YYYY-MM-DD, or any record id")
    p.add_argument("--site", help="site id or name, when the tag is used at several sites")
    p.add_argument("--as-of", help="date YYYY-MM-DD: only what had been recorded by the end of that day (UTC)")
    p.add_argument("--json", action="store_true")
    p.set_defaults(handler=cmd_history)

    p = sub.add_parser("import", help="bulk import")
    what = p.add_subparsers(dest="what", required=True, metavar="WHAT")
    c = what.add_parser("components", help="components CSV (see DEVELOPERS.md for the columns)")
    c.add_argument("file", type=Path)
    c.add_argument("--site", required=True, help="site id or name")
    c.set_defaults(handler=cmd_import_components)
    c = what.add_parser("work", help="a contractor's work: CSV of actions on leaks, all or nothing (columns in "
                        "DEVELOPERS.md)")
    c.add_argument("file", type=Path)
    c.add_argument("--site", help="site id or name, when tags are used at several sites")
    c.set_defaults(handler=cmd_import_work)
    register_app(sub)


def cmd_init(args: argparse.Namespace) -> int:
    store = open_store(args)
    print(f"store ready: {store.path} (device {store.device_id})")
    return 0


def _remove_store(path: Path) -> None:
    import shutil

    for suffix in ("", "-wal", "-shm"):
        Path(f"{path}{suffix}").unlink(missing_ok=True)
    shutil.rmtree(path.parent / f"{path.stem}-media", ignore_errors=True)
    shutil.rmtree(path.parent / f"{path.stem}-keys", ignore_errors=True)


def has_display() -> bool:
    """True when a graphical display is reachable."""
    return bool(os.environ.get("DISPLAY") or os.environ.get("WAYLAND_DISPLAY"))


def cmd_demo(args: argparse.Namespace) -> int:
    from fieldapp import demo

    if args.reset:
        from fieldapp.paths import store_file

        _remove_store(store_file(args.db))
    store = open_store(args)
    counts = demo.load(store)
    print(f"demo loaded into {store.path}: " + ", ".join(f"{v} {k}" for k, v in counts.items()))
    out = demo_outputs(store)
    print(f"demo outputs written to {out}/")
    for path in sorted(out.iterdir()):
        print(f"  {path.name}")
    if args.no_app:
        return 0
    if not has_display():
        print("no display found: not opening the tablet app (run `plumebook app` on a machine with a screen)")
        return 0
    try:
        from fieldapp.ui.app import run_app
    except ImportError:
        print("the tablet app is not available in this build")
        return 0
    return run_app(store.path)


def demo_outputs(store) -> Path:
    """Write the demo's outputs beside the store and return the folder."""
    from fieldapp.outputs import write_demo_outputs

    return write_demo_outputs(store, store.path.parent / "plumebook-demo-output")


def cmd_sites(args: argparse.Namespace) -> int:
    from fieldapp.store.reads import list_sites

    rows = list_sites(open_store(args))
    if args.json:
        emit_json(rows)
    else:
        emit_table(rows, ("name", "kind", "program_id", "timezone", "id"))
    return 0


def _site_id(store, key: str | None) -> str | None:
    from fieldapp.store.reads import resolve_site

    return resolve_site(store, key)["id"] if required_text(key, "site") is not None else None


def cmd_surveys(args: argparse.Namespace) -> int:
    from fieldapp.store.reads import list_surveys

    required_text(args.site, "site")
    store = open_store(args)
    rows = list_surveys(store, _site_id(store, args.site))
    if args.json:
        emit_json(rows)
    else:
        emit_table(rows, ("started_at", "site_name", "method", "operator", "camera_check", "leak_count", "id"))
    return 0


def cmd_leaks(args: argparse.Namespace) -> int:
    from fieldapp.store.reads import list_leaks

    required_text(args.site, "site")
    store = open_store(args)
    rows = list_leaks(store, _site_id(store, args.site), open_only=args.open)
    if args.json:
        emit_json(rows)
    else:
        for r in rows:  # the same column names and words as `plumebook due`
            r["repeat leaker"] = "REPEAT LEAKER" if r["repeat_leaker"] else ""
            r["hazard"] = "HAZARD" if r["hazard"] else ""
        emit_table(rows, ("detected_on", "site_name", "tag", "component_type", "state", "hazard", "repeat leaker",
                          "id"))
    return 0


def cmd_history(args: argparse.Namespace) -> int:
    from fieldapp.cmdkit import parse_day
    from fieldapp.store.history import history, leak_timeline
    from fieldapp.store.names import resolve_leak

    as_of = parse_day(args.as_of, "--as-of").isoformat() if args.as_of is not None else None
    store = open_store(args)
    key = required_text(args.record_id, "record_id")
    is_leak = store.rows("SELECT 1 FROM leaks WHERE id = ?", (key,))
    other = not is_leak and store.rows("SELECT 1 FROM journal WHERE row_id = ? LIMIT 1", (key,))
    if not other:
        leak = resolve_leak(store, key, _site_id(store, args.site), "record_id", closed_too=True)
        story = leak_timeline(store, leak["id"], as_of)
        if args.json:
            emit_json(story)
        else:
            print_story(story, leak)
        return 0
    entries = history(store, key)
    if as_of:
        entries = [e for e in entries if e["at"] <= f"{as_of}T99"]
    if args.json:
        emit_json(entries)
        return 0
    for e in entries:
        changed = ""
        if e["op"] == "update":
            changed = ", ".join(f"{k}: {e['old'].get(k)!r} -> {v!r}" for k, v in e["new"].items()
                                if e["old"].get(k) != v)
        elif e.get("batch_size"):
            changed = f"(one import of {e['batch_size']} records)"
        print(f"{e['at']}  {e['op']:<6}  {e['tbl']:<10}  by {e['actor'] or '(not named)'} on device "
              f"{e['device_id'][:8]} #{e['seq']}  {changed}")
    return 0


def print_story(story: dict, leak: dict) -> None:
    """A leak's timeline as text, one event a line, with who recorded it, when and on which device."""
    comp = story["component"] or {}
    state = "as recorded by the end of " + story["as_of"] if story["as_of"] else "now"
    print(f"leak {leak['tag']} at {story['site']} ({comp.get('type')}, {comp.get('service')}), {state}; "
          f"id {leak['id']}")
    if (story["leak"] or {}).get("hazard"):
        print("HAZARD: the leak may be large, near ignition or carry H2S; follow site procedures.")
    for e in story["events"]:
        late = f"  BACKDATED (keyed in {e['recorded_at'][:10]})" if e["backdated"] else ""
        print(f"{e['on']} {e['at'] or '     '}  {e['what']:<9}  {e['summary']}")
        print(f"{'':18}recorded {e['recorded_at']} by {e['actor'] or '(not named)'} on device "
              f"{e['device_id'][:8]} #{e['seq']}{late}")


def cmd_import_components(args: argparse.Namespace) -> int:
    from fieldapp.paths import input_file
    from fieldapp.store.importer import import_components
    from fieldapp.store.reads import resolve_site

    required_text(args.site, "site")
    input_file(args.file, "file")
    store = open_store(args)
    site = resolve_site(store, args.site)
    from fieldapp.cmdkit import steps

    with steps("importing stages") as tick:
        count = import_components(store, args.file, site["id"], args.actor, tick)
    print(f"imported {count} components into {site['name']}")
    return 0


def cmd_import_work(args: argparse.Namespace) -> int:
    import sys

    from fieldapp.cmdkit import progress, say_actor
    from fieldapp.core.fields import FieldProblem, ValidationError
    from fieldapp.paths import input_file
    from fieldapp.store.work_import import import_work

    input_file(args.file, "file")
    store = open_store(args)
    site_id = _site_id(store, args.site)
    try:
        with progress(None, "checking rows") as bar:
            done = import_work(store, args.file, args.actor, site_id, bar.update)
    except ValidationError as exc:
        for problem in exc.problems:  # every problem with its line, then the one-line summary
            print(f"plumebook: {args.file.name}: {problem}", file=sys.stderr)
        lines = sorted({p.line for p in exc.problems if p.line is not None})
        raise ValidationError([FieldProblem("file", f"{len(exc.problems)} problem(s) on line(s) "
                                            f"{', '.join(map(str, lines)) or '1'}; nothing was imported")]) from None
    say_actor(args)
    for row in done:
        print(f"line {row['line']}: {row['kind'].replace('_', ' ')} of {row['tag']} at {row['site']} on "
              f"{row['done_on']} by {row['who']}")
    print(f"imported {len(done)} action(s) from {args.file.name} in one transaction")
    return 0


def register_app(sub: argparse._SubParsersAction) -> None:
    """Add the `app` command."""
    p = sub.add_parser("app", help="open the tablet app")
    p.add_argument("--screen", default="start", help="start, site, survey, survey_run, leak, repair, due, export")
    p.add_argument("--screenshot", type=Path, help="render the screen offscreen to this PNG and exit")
    p.add_argument("--size", default="1280x800", help="window size for --screenshot, e.g. 800x1280")
    p.add_argument("--verbose", action="store_true", help="show Kivy's full log (warnings and worse otherwise)")
    p.set_defaults(handler=cmd_app, creates_store=True)


SCREEN_CHOICES = ("start", "site", "survey", "survey_run", "leak", "repair", "due", "export")


def cmd_app(args: argparse.Namespace) -> int:
    from fieldapp.core.fields import FieldProblem, ValidationError

    if args.screen not in SCREEN_CHOICES:
        raise ValidationError([FieldProblem("screen", f"{args.screen!r} is not allowed; allowed: "
                                            f"{', '.join(SCREEN_CHOICES)}")])
    if args.screenshot:
        from fieldapp.paths import output_file

        try:
            width, height = (int(v) for v in args.size.lower().split("x"))
        except ValueError:
            width = height = -1
        if not (MIN_SIDE <= width <= MAX_SIDE and MIN_SIDE <= height <= MAX_SIDE):
            raise ValidationError([FieldProblem("size", f"{args.size[:40]!r}: write WIDTHxHEIGHT with each side "
                                                f"{MIN_SIDE} to {MAX_SIDE} pixels, e.g. 1280x800")])
        output_file(args.screenshot, "screenshot")
        os.environ.setdefault("SDL_VIDEODRIVER", "offscreen" if not has_display() else "")
        os.environ.update(KCFG_GRAPHICS_WIDTH=str(width), KCFG_GRAPHICS_HEIGHT=str(height), KIVY_NO_ARGS="1",
                          KIVY_NO_CONFIG="1", KIVY_NO_FILELOG="1")
        os.environ.setdefault("KIVY_WINDOW", "sdl2")
    elif not has_display():
        print("no display found: use --screenshot OUT.png to render a screen offscreen")
        return 0
    if getattr(args, "verbose", False):
        os.environ["PLUMEBOOK_VERBOSE"] = "1"
    from fieldapp.ui.app import run_app

    store = open_store(args)
    store.close()
    return run_app(args.db, args.screen, args.screenshot)
