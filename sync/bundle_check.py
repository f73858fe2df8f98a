"""Complete verification of a bundle before anything is changed.

Refused, each with a message: not a zip or truncated; a member path that is absolute, climbs out
(``..``), is a link, or is not one of the allowed names; a member larger than allowed or compressed
suspiciously well (a decompression bomb); an unknown format or version; a member missing from the
manifest, or listed with another size or SHA-256; journal entries from another device or out of the
stated sequence range.
"""

from __future__ import annotations

import hashlib
import json
import re
import stat
import zipfile
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from fieldapp.core.fields import FieldProblem, ValidationError
from fieldapp.store.base import loads
from fieldapp.store.batches import BATCH_OP
from fieldapp.store.batches import problem as batch_problem
from sync.bundle import ENTRY_COLUMNS, FORMAT, VERSION

MAX_MEMBER = 2 * 1024**3
MAX_TOTAL = 8 * 1024**3
MAX_RATIO = 200
FIELDS = frozenset(ENTRY_COLUMNS)
TABLES = frozenset({"sites", "components", "surveys", "leaks", "actions", "media", "markers"})
OPS = frozenset({"insert", "update", "delete", BATCH_OP})
VALUE_TYPES = (dict, type(None))
HLC = re.compile(r"^\d{15}-\d{6}-[0-9a-f-]{36}$")
NAME = re.compile(r"^(manifest\.json|journal\.jsonl|media/[0-9a-f]{64}|programs/[A-Za-z0-9_.-]{1,80}\.toml)$")


class BundleError(ValidationError):
    """A bundle was refused; nothing was changed."""

    def __init__(self, path: Path | str, message: str):
        super().__init__([FieldProblem(f"bundle {Path(path).name}", message)])


@dataclass
class CheckedBundle:
    """A bundle whose every byte has been checked."""

    path: Path
    manifest: dict[str, Any]
    entries: list[dict[str, Any]]
    media: dict[str, bytes]
    programs: dict[str, bytes]


def _member_names(path: Path, zf: zipfile.ZipFile) -> list[zipfile.ZipInfo]:
    infos = zf.infolist()
    total = 0
    seen = set()
    for info in infos:
        name = info.filename
        if name.startswith("/") or "\\" in name or ".." in name.split("/") or re.match(r"^[A-Za-z]:", name):
            raise BundleError(path, f"member {name!r} points outside the bundle")
        if stat.S_ISLNK(info.external_attr >> 16):
            raise BundleError(path, f"member {name!r} is a link")
        if not NAME.match(name):
            raise BundleError(path, f"member {name!r} is not an allowed name")
        if name in seen:
            raise BundleError(path, f"member {name!r} appears twice")
        seen.add(name)
        if info.file_size > MAX_MEMBER:
            raise BundleError(path, f"member {name!r} is larger than {MAX_MEMBER // 1024**3} GiB")
        if info.file_size > 1_000_000 and info.file_size > MAX_RATIO * max(1, info.compress_size):
            raise BundleError(path, f"member {name!r} expands {info.file_size // max(1, info.compress_size)}x: "
                              "refused as a possible decompression bomb")
        total += info.file_size
    if total > MAX_TOTAL:
        raise BundleError(path, "members add up to more than the allowed total size")
    return infos


def _read(zf: zipfile.ZipFile, info: zipfile.ZipInfo, path: Path) -> bytes:
    with zf.open(info) as fh:
        data = fh.read(info.file_size + 1)
    if len(data) != info.file_size:
        raise BundleError(path, f"member {info.filename!r} does not have the size its header says")
    return data


def check(path: Path | str, held: Callable[[str], int] | None = None) -> CheckedBundle:
    """Read and verify a whole bundle; BundleError (nothing changed) if anything is wrong.

    ``held(device)`` tells how far the store already holds a device's entries; a device bundle
    entirely below that is verified by its hashes and returned without decoding its entries.
    """
    path = Path(path)
    try:
        zf = zipfile.ZipFile(path)
    except (zipfile.BadZipFile, OSError, EOFError) as exc:
        raise BundleError(path, f"not a readable zip file ({exc}): truncated or damaged") from None
    with zf:
        infos = {i.filename: i for i in _member_names(path, zf)}
        if "manifest.json" not in infos:
            raise BundleError(path, "has no manifest.json")
        try:
            manifest = json.loads(_read(zf, infos["manifest.json"], path))
            data = {name: _read(zf, info, path) for name, info in infos.items() if name != "manifest.json"}
        except (zipfile.BadZipFile, json.JSONDecodeError, EOFError, OSError) as exc:
            raise BundleError(path, f"damaged member ({exc})") from None
    if not isinstance(manifest, dict) or manifest.get("format") != FORMAT:
        raise BundleError(path, "is not a plumebook bundle (manifest format)")
    if manifest.get("version") != VERSION:
        raise BundleError(path, f"format version {manifest.get('version')!r} is not supported; this plumebook "
                          f"reads version {VERSION}")
    listed = {m["name"]: m for m in manifest.get("members", []) if isinstance(m, dict) and "name" in m}
    if set(listed) != set(data):
        missing, extra = sorted(set(listed) - set(data)), sorted(set(data) - set(listed))
        raise BundleError(path, f"members differ from the manifest (missing {missing}, unlisted {extra})")
    for name, blob in data.items():
        if listed[name].get("size") != len(blob):
            raise BundleError(path, f"member {name!r} size {len(blob)} differs from the manifest")
        if listed[name].get("sha256") != hashlib.sha256(blob).hexdigest():
            raise BundleError(path, f"member {name!r} SHA-256 differs from the manifest")
    for name, blob in data.items():
        if name.startswith("media/") and hashlib.sha256(blob).hexdigest() != name[6:]:
            raise BundleError(path, f"member {name!r} is not named by its SHA-256")
    if held is not None and manifest.get("kind") == "device" and isinstance(manifest.get("seq_to"), int) \
            and manifest["seq_to"] <= held(str(manifest.get("device_id"))):
        return CheckedBundle(path, manifest, [], {}, {})
    entries = _entries(path, data.get("journal.jsonl", b""), manifest)
    media = {n[6:]: b for n, b in data.items() if n.startswith("media/")}
    needed = {e["new"]["sha256"] for e in entries if e["tbl"] == "media" and e["new"]}
    if needed - set(media):
        raise BundleError(path, f"media entries reference {len(needed - set(media))} file(s) not in the bundle")
    programs = {n[9:]: b for n, b in data.items() if n.startswith("programs/")}
    return CheckedBundle(path, manifest, entries, media, programs)


def _entries(path: Path, blob: bytes, manifest: dict[str, Any]) -> list[dict[str, Any]]:
    try:
        entries = [loads(line) for line in blob.splitlines() if line.strip()]
    except (UnicodeDecodeError, ValueError) as exc:
        raise BundleError(path, f"journal.jsonl is damaged ({exc})") from None
    if len(entries) != manifest.get("entries"):
        raise BundleError(path, "journal.jsonl holds another number of entries than the manifest says")
    for e in entries:
        if not isinstance(e, dict) or e.keys() != FIELDS:
            raise BundleError(path, "a journal entry lacks the expected fields")
        if e["tbl"] not in TABLES:
            raise BundleError(path, f"a journal entry names an unknown table {e['tbl']!r}")
        op = e["op"]
        if op not in OPS:
            raise BundleError(path, f"a journal entry has an unknown operation {op!r}")
        if type(e["seq"]) is not int or type(e["row_id"]) is not str or type(e["hlc"]) is not str \
                or type(e["old"]) not in VALUE_TYPES or type(e["new"]) not in VALUE_TYPES:
            raise BundleError(path, f"entry {e.get('seq')!r}: a field has the wrong type")
        if op == BATCH_OP and (wrong := batch_problem(e)):
            raise BundleError(path, f"entry {e['seq']}: {wrong}")
    if any(not HLC.match(e["hlc"]) for e in entries):
        raise BundleError(path, "a journal entry's clock stamp is not in the stamp format")
    if manifest.get("kind") == "device":
        device = manifest.get("device_id")
        seqs = [e["seq"] for e in entries]
        if any(e["device_id"] != device for e in entries):
            raise BundleError(path, "holds entries of another device than its manifest names")
        expected = list(range(manifest.get("seq_from", 0), manifest.get("seq_to", -1) + 1))
        if seqs != expected:
            raise BundleError(path, "journal sequence numbers do not match the manifest's range")
    elif manifest.get("kind") != "office":
        raise BundleError(path, f"unknown bundle kind {manifest.get('kind')!r}")
    return entries
