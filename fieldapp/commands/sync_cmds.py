"""Commands for device bundles and the office merge: bundle make, bundle merge, conflicts."""

from __future__ import annotations

import argparse
from pathlib import Path

from fieldapp.cli import emit_json, emit_table, open_store, parse_whole, required_text
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
    d = sub.add_parser("device", help="this store's device id")
    d.set_defaults(handler=cmd_device)


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
    s = make_device_bundle(store, args.out, since)
    print(f"bundle of device {s.device_id}: entries {s.seq_from}..{s.seq_to} ({s.entries}), {s.media} media "
          f"-> {s.path}")
    return 0


def cmd_merge(args: argparse.Namespace) -> int:
    from sync.merge import merge_many

    for path in args.files:
        input_file(path, "files")
    store = open_store(args)
    for path, r in zip(args.files, merge_many(store, args.files), strict=True):
        print(f"{path.name}: {r.kind} bundle from {r.device_id[:8]}: {r.new_entries} new entries, {r.rows} records "
              f"rebuilt, {r.media} media files, {r.conflicts} conflicts")
        for note in r.notes:
            print(f"  {note}")
    return 0


def cmd_conflicts(args: argparse.Namespace) -> int:
    from sync.merge import conflicts

    rows = conflicts(open_store(args))
    if args.json:
        emit_json(rows)
    else:
        emit_table(rows, ("tbl", "row_id", "field", "winner_value", "winner_device", "loser_value", "loser_device"))
    return 0


def cmd_device(args: argparse.Namespace) -> int:
    print(open_store(args).device_id)
    return 0
