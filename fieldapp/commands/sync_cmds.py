"""Commands for bundles and the office merge: bundle make/merge, conflicts, resolve, device, enrol, revoke."""

from __future__ import annotations

import argparse
from pathlib import Path

from fieldapp.cmdkit import emit_json, emit_table, open_store, parse_whole, required_text, say_actor, steps
from fieldapp.paths import input_file, output_file


def register(sub: argparse._SubParsersAction) -> None:
    """Add the sync commands."""
    p = sub.add_parser("bundle", help="hand records between a tablet and the office")
    what = p.add_subparsers(dest="what", required=True, metavar="WHAT")
    m = what.add_parser("make", help="write a bundle file")
    m.add_argument("--out", required=True, type=Path)
    m.add_argument("--since", default="auto", help="auto (after the office's acknowledgement) or a sequence number")
    m.add_argument("--for-device", help="office: make the bundle of sites, inventory and programs for this tablet")
    m.set_defaults(handler=cmd_make)
    g = what.add_parser("merge", help="verify and merge bundle files")
    g.add_argument("files", nargs="+", type=Path)
    g.set_defaults(handler=cmd_merge, creates_store=True)  # an office may start its store from bundles
    c = sub.add_parser("conflicts", help="concurrent edits resolved by the merge rule")
    c.add_argument("--json", action="store_true")
    c.set_defaults(handler=cmd_conflicts)
    d = sub.add_parser("device", help="this store's device id and public key")
    d.set_defaults(handler=cmd_device)
    r = sub.add_parser("resolve", help="resolve a tag collision between two devices")
    how = r.add_subparsers(dest="how", required=True, metavar="HOW")
    j = how.add_parser("join", help="one component tagged twice: move DROP's leaks to KEEP, tombstone DROP")
    j.add_argument("keep", help="component id, or its tag when only one live component has it")
    j.add_argument("drop", help="component id, or its tag when only one live component has it")
    j.add_argument("--site", help="site id or name, to narrow a tag to one site")
    j.set_defaults(handler=cmd_join)
    t = how.add_parser("retag", help="two different components: give one a new tag")
    t.add_argument("component", help="component id, or its tag when only one live component has it")
    t.add_argument("tag")
    t.add_argument("--site", help="site id or name, to narrow a tag to one site")
    t.set_defaults(handler=cmd_retag)
    e = sub.add_parser("enrol", help="trust a device's public key (office: a tablet; tablet: its office)")
    e.add_argument("device_id")
    e.add_argument("public_key", help="64 hex digits, or the path of the device's device.pub file")
    e.add_argument("--name", required=True, help="a name people know the device by")
    e.add_argument("--role", choices=("tablet", "office"), default="tablet")
    e.set_defaults(handler=cmd_enrol)
    v = sub.add_parser("revoke", help="stop trusting a device (a lost tablet)")
    v.add_argument("device_id")
    v.set_defaults(handler=cmd_revoke)
    ds = sub.add_parser("devices", help="enrolled devices")
    ds.add_argument("--json", action="store_true")
    ds.set_defaults(handler=cmd_devices)


def cmd_make(args: argparse.Namespace) -> int:
    from sync.bundle import make_device_bundle, make_office_bundle

    output_file(args.out, "out")
    required_text(args.for_device, "for-device")
    since = None if args.since == "auto" else parse_whole(args.since, "since", 0)
    store = open_store(args)
    if args.for_device:
        s = make_office_bundle(store, args.out, args.for_device)
        print(f"office bundle for device {args.for_device}: {s.entries} entries -> {s.path}")
        return 0
    with steps("writing bundle") as tick:
        s = make_device_bundle(store, args.out, since, tick)
    print(f"bundle of device {s.device_id}: entries {s.seq_from}..{s.seq_to} ({s.entries}), {s.media} media "
          f"-> {s.path}")
    return 0


def cmd_merge(args: argparse.Namespace) -> int:
    from sync.merge import merge_many

    for path in args.files:
        input_file(path, "files")
    store = open_store(args)
    with steps("merging bundles") as tick:
        results = merge_many(store, args.files, tick)
    for path, r in zip(args.files, results, strict=True):
        print(f"{path.name}: {r.kind} bundle from {r.device_id[:8]}: {r.new_entries} new entries, {r.rows} records "
              f"rebuilt, {r.media} media files, {r.conflicts} conflicts")
        for note in r.notes:
            print(f"  {note}")
        if r.collisions:
            print(f"  {r.collisions} tag collision(s) between devices: see `plumebook conflicts`")
    return 0


def cmd_conflicts(args: argparse.Namespace) -> int:
    from sync.merge import conflicts, tag_collisions

    store = open_store(args)
    rows, collisions = conflicts(store), tag_collisions(store)
    if args.json:
        emit_json({"field_conflicts": rows, "tag_collisions": collisions})
        return 0
    emit_table(rows, ("tbl", "row_id", "field", "winner_value", "winner_device", "loser_value", "loser_device"))
    if collisions:
        print("\ntag collisions (two devices created the same tag; resolve with `plumebook resolve join KEEP DROP` "
              "or `plumebook resolve retag ID NEW_TAG`):")
        emit_table([{**c, "component_ids": " ".join(c["component_ids"])} for c in collisions],
                   ("site", "tag", "component_ids"))
    return 0


def cmd_device(args: argparse.Namespace) -> int:
    from sync.trust import key_folder, public_key

    store = open_store(args)
    print(store.device_id)
    print(f"public key {public_key(store)} (key files in {key_folder(store)})")
    return 0


def _component(store, key: str, site: str | None, field: str) -> str:
    from fieldapp.store.names import resolve_component
    from fieldapp.store.reads import resolve_site

    site_id = resolve_site(store, required_text(site, "site"))["id"] if site is not None else None
    return resolve_component(store, required_text(key, field), site_id, field)["id"]


def cmd_join(args: argparse.Namespace) -> int:
    from fieldapp.store.resolve import join

    store = open_store(args)
    say_actor(args)
    keep, drop = _component(store, args.keep, args.site, "keep"), _component(store, args.drop, args.site, "drop")
    done = join(store, keep, drop, args.actor)
    print(f"joined {done['dropped']} into {done['kept']} (tag {done['tag']}), {done['leaks_moved']} leak(s) moved")
    return 0


def cmd_retag(args: argparse.Namespace) -> int:
    from fieldapp.store.resolve import retag

    store = open_store(args)
    say_actor(args)
    row = retag(store, _component(store, args.component, args.site, "component"), args.tag, args.actor)
    print(f"component {row['id']} is now tag {row['tag']}")
    return 0


def cmd_enrol(args: argparse.Namespace) -> int:
    from sync.trust import enrol

    row = enrol(open_store(args), args.device_id, args.public_key, args.name, args.role)
    print(f"enrolled {row['role']} {row['name']!r} ({row['device_id']})")
    return 0


def cmd_revoke(args: argparse.Namespace) -> int:
    from sync.trust import revoke

    row = revoke(open_store(args), args.device_id)
    print(f"revoked {row['role']} {row['name']!r} ({row['device_id']}) at {row['revoked_at']}: its bundles are refused")
    return 0


def cmd_devices(args: argparse.Namespace) -> int:
    from sync.trust import devices

    rows = devices(open_store(args))
    if args.json:
        emit_json(rows)
    else:
        emit_table(rows, ("role", "name", "device_id", "enrolled_at", "revoked_at"))
    return 0
