"""Complete verification of a bundle before anything is changed.

Refused, each with one message: not a zip or truncated; a member path that is absolute, climbs out
(``..``), is a link, or is not one of the allowed names; a compression other than stored or deflate
(so every read is capped by the bytes it may produce); a member larger than allowed or compressed
suspiciously well (a decompression bomb); a member that inflates to another size than its header
says; an unknown format or version; a manifest not of the documented shape; a bundle not signed by
a device this store trusts (``sync.trust``); a member missing from the manifest, or listed with
another size or SHA-256; journal entries from another device, out of the stated sequence range, of
the wrong types, or whose values a form would not write (``sync.entry_gate``).

Bounds: the manifest is at most 1 MiB, the journal at most ``MAX_JOURNAL``, media and programs are
hashed in 1 MiB pieces and never held whole while checking, JSON is read by orjson (nesting deeper
than 1024 is refused) and entry values must be flat. Peak memory is the journal and its decoded
entries plus a constant (tests/test_sync_trust.py measures it).
"""

from __future__ import annotations

import hashlib
import re
import stat
import zipfile
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from fieldapp.core.fields import FieldProblem, ValidationError
from fieldapp.store.base import loads
from fieldapp.store.batches import BATCH_OP, expand
from fieldapp.store.batches import problem as batch_problem
from sync.bundle import ENTRY_COLUMNS, FORMAT, VERSION
from sync.entry_gate import entries_problem, entry_name

MAX_MEMBER = 2 * 1024**3
MAX_TOTAL = 8 * 1024**3
MAX_MANIFEST = 1024**2
MAX_JOURNAL = 512 * 1024**2
MAX_PROGRAM = 1024**2
MAX_MEMBERS = 100_000
MAX_SEQ = 2**62
MAX_RATIO = 200
CHUNK = 1024**2
FIELDS = frozenset(ENTRY_COLUMNS)
TABLES = frozenset({"sites", "components", "surveys", "leaks", "actions", "media", "markers"})
OFFICE_TABLES = frozenset({"sites", "components"})
OPS = frozenset({"insert", "update", "delete", BATCH_OP})
VALUE_TYPES = (dict, type(None))
HLC = re.compile(r"^\d{15}-\d{6}-[0-9a-f-]{36}$")
SHA = re.compile(r"^[0-9a-f]{64}$")
NAME = re.compile(r"^(manifest\.json|manifest\.sig|journal\.jsonl|media/[0-9a-f]{64}|programs/[A-Za-z0-9_.-]{1,80}"
                  r"\.toml)$")
COMPRESSIONS = (zipfile.ZIP_STORED, zipfile.ZIP_DEFLATED)
MANIFEST_KEYS = {"device": {"format", "version", "kind", "device_id", "seq_from", "seq_to", "created_at", "entries",
                            "members"},
                 "office": {"format", "version", "kind", "device_id", "for_device", "ack_seq", "seq_from", "seq_to",
                            "created_at", "entries", "members"}}
Trust = Callable[[dict[str, Any], bytes, bytes | None], str | None]


class BundleError(ValidationError):
    """A bundle was refused; nothing was changed."""

    def __init__(self, path: Path | str, message: str):
        super().__init__([FieldProblem(f"bundle {Path(path).name}", message)])


@dataclass
class CheckedBundle:
    """A bundle whose every byte has been checked (media are re-read, and re-hashed, when stored)."""

    path: Path
    manifest: dict[str, Any]
    entries: list[dict[str, Any]]
    media: frozenset[str]
    programs: dict[str, bytes]
    journal_sha256: str = ""
    entries_decoded: bool = True


def _member_names(path: Path, zf: zipfile.ZipFile) -> list[zipfile.ZipInfo]:
    infos = zf.infolist()
    if len(infos) > MAX_MEMBERS:
        raise BundleError(path, f"has {len(infos)} members; at most {MAX_MEMBERS} allowed")
    total = 0
    seen = set()
    for info in infos:
        name = info.filename
        if name.startswith("/") or "\\" in name or ".." in name.split("/") or re.match(r"^[A-Za-z]:", name):
            raise BundleError(path, f"member {name[:80]!r} points outside the bundle")
        if stat.S_ISLNK(info.external_attr >> 16):
            raise BundleError(path, f"member {name[:80]!r} is a link")
        if not NAME.match(name):
            raise BundleError(path, f"member {name[:80]!r} is not an allowed name")
        if name in seen:
            raise BundleError(path, f"member {name!r} appears twice")
        seen.add(name)
        if info.compress_type not in COMPRESSIONS:
            raise BundleError(path, f"member {name!r} uses compression method {info.compress_type}; "
                              "only stored and deflate are allowed")
        if info.flag_bits & 0x1:
            raise BundleError(path, f"member {name!r} is encrypted")
        limit = {"manifest.json": MAX_MANIFEST, "journal.jsonl": MAX_JOURNAL, "manifest.sig": 1024}.get(
            name, MAX_PROGRAM if name.startswith("programs/") else MAX_MEMBER)
        if info.file_size > limit:
            raise BundleError(path, f"member {name!r} is larger than the {limit:,} bytes allowed")
        if info.file_size > 1_000_000 and info.file_size > MAX_RATIO * max(1, info.compress_size):
            raise BundleError(path, f"member {name!r} expands {info.file_size // max(1, info.compress_size)}x: "
                              "refused as a possible decompression bomb")
        total += info.file_size
    if total > MAX_TOTAL:
        raise BundleError(path, "members add up to more than the allowed total size")
    return infos


def _chunks(zf: zipfile.ZipFile, info: zipfile.ZipInfo, path: Path):
    """The member's bytes in pieces, never more in all than its header's size (+1 to see an excess)."""
    left = info.file_size + 1
    try:
        with zf.open(info) as fh:
            while left > 0:
                piece = fh.read(min(CHUNK, left))
                if not piece:
                    break
                left -= len(piece)
                yield piece
    except BundleError:
        raise
    except Exception as exc:  # zlib.error, BadZipFile (CRC), EOFError, OSError, ...: all mean a damaged member
        raise BundleError(path, f"member {info.filename!r} is damaged ({type(exc).__name__}: {exc})") from None


def _read(zf: zipfile.ZipFile, info: zipfile.ZipInfo, path: Path) -> bytes:
    data = b"".join(_chunks(zf, info, path))
    if len(data) != info.file_size:
        raise BundleError(path, f"member {info.filename!r} does not have the size its header says")
    return data


def _hash(zf: zipfile.ZipFile, info: zipfile.ZipInfo, path: Path) -> tuple[str, int]:
    digest, size = hashlib.sha256(), 0
    for piece in _chunks(zf, info, path):
        digest.update(piece)
        size += len(piece)
    if size != info.file_size:
        raise BundleError(path, f"member {info.filename!r} does not have the size its header says")
    return digest.hexdigest(), size


def read_member(path: Path, name: str, sha256: str) -> bytes:
    """One member's bytes, read again (capped) and re-hashed: BundleError if it changed since the check."""
    try:
        with zipfile.ZipFile(path) as zf:
            info = zf.getinfo(name)
            data = _read(zf, info, path)
    except (OSError, KeyError, zipfile.BadZipFile) as exc:
        raise BundleError(path, f"member {name!r} could not be read again ({exc})") from None
    if hashlib.sha256(data).hexdigest() != sha256:
        raise BundleError(path, f"member {name!r} changed after it was checked")
    return data


def _is_int(value: Any, low: int = 0, high: int = MAX_SEQ) -> bool:
    return type(value) is int and low <= value <= high


def _manifest(path: Path, raw: bytes) -> dict[str, Any]:
    try:
        manifest = loads(raw)
    except ValueError as exc:
        raise BundleError(path, f"manifest.json is not valid JSON ({exc})") from None
    if not isinstance(manifest, dict) or manifest.get("format") != FORMAT:
        raise BundleError(path, "is not a plumebook bundle (manifest format)")
    if manifest.get("version") != VERSION:
        raise BundleError(path, f"format version {str(manifest.get('version'))[:20]!r} is not supported; this "
                          f"plumebook reads version {VERSION}")
    kind = manifest.get("kind")
    if kind not in MANIFEST_KEYS:
        raise BundleError(path, f"unknown bundle kind {str(kind)[:20]!r}")
    if manifest.keys() != MANIFEST_KEYS[kind]:
        raise BundleError(path, f"manifest keys differ from a {kind} bundle's "
                          f"(missing {sorted(MANIFEST_KEYS[kind] - manifest.keys())}, "
                          f"unknown {sorted(str(k)[:20] for k in manifest.keys() - MANIFEST_KEYS[kind])[:5]})")
    for key in ("device_id", "created_at") + (("for_device",) if kind == "office" else ()):
        if type(manifest[key]) is not str or not 0 < len(manifest[key]) <= 64:
            raise BundleError(path, f"manifest {key} must be a text of at most 64 characters")
    for key in ("seq_from", "seq_to", "entries") + (("ack_seq",) if kind == "office" else ()):
        if not _is_int(manifest[key]):
            raise BundleError(path, f"manifest {key} must be a whole number from 0 to {MAX_SEQ}")
    members = manifest["members"]
    if not isinstance(members, list) or len(members) > MAX_MEMBERS or any(
            not isinstance(m, dict) or m.keys() != {"name", "sha256", "size"} or type(m["name"]) is not str
            or type(m["sha256"]) is not str or not SHA.match(m["sha256"]) or not _is_int(m["size"], 0, MAX_MEMBER)
            for m in members):
        raise BundleError(path, "manifest members must each be {name, sha256, size}")
    if kind == "device":
        span = manifest["seq_to"] - manifest["seq_from"] + 1
        if manifest["seq_from"] < 1 or span < 0 or span != manifest["entries"]:
            raise BundleError(path, "manifest sequence range does not match its entry count")
    return manifest


def check(path: Path | str, held: Callable[[str], int] | None = None, trust: Trust | None = None,
          now_ms: int | None = None, known_journal: Callable[[str], bool] | None = None) -> CheckedBundle:
    """Read and verify a whole bundle; BundleError (nothing changed) if anything is wrong.

    ``trust(manifest, manifest_bytes, signature)`` says why the signature is not accepted (None
    when it is); ``now_ms`` is the receiving store's clock for the stamp bound. Every entry is
    decoded and checked even when ``held`` says the store holds the range, except when
    ``known_journal(sha256)`` says this exact journal member was checked and merged before.
    """
    path = Path(path)
    try:
        zf = zipfile.ZipFile(path)
    except Exception as exc:  # BadZipFile, OSError, EOFError, ValueError on crafted directories
        raise BundleError(path, f"not a readable zip file ({exc}): truncated or damaged") from None
    with zf:
        infos = {i.filename: i for i in _member_names(path, zf)}
        if "manifest.json" not in infos:
            raise BundleError(path, "has no manifest.json")
        raw_manifest = _read(zf, infos["manifest.json"], path)
        manifest = _manifest(path, raw_manifest)
        if trust is not None:
            sig = _read(zf, infos["manifest.sig"], path) if "manifest.sig" in infos else None
            if wrong := trust(manifest, raw_manifest, sig):
                raise BundleError(path, wrong)
        listed = {m["name"]: m for m in manifest["members"]}
        present = set(infos) - {"manifest.json", "manifest.sig"}
        if set(listed) != present or len(listed) != len(manifest["members"]):
            missing, extra = sorted(set(listed) - present), sorted(present - set(listed))
            raise BundleError(path, f"members differ from the manifest (missing {missing[:5]}, unlisted {extra[:5]})")
        journal, programs = b"", {}
        for name in sorted(present):
            if name == "journal.jsonl" or name.startswith("programs/"):
                blob = _read(zf, infos[name], path)
                digest, size = hashlib.sha256(blob).hexdigest(), len(blob)
                if name == "journal.jsonl":
                    journal = blob
                else:
                    programs[name[9:]] = blob
            else:
                digest, size = _hash(zf, infos[name], path)
            if listed[name]["size"] != size:
                raise BundleError(path, f"member {name!r} size {size} differs from the manifest")
            if listed[name]["sha256"] != digest:
                raise BundleError(path, f"member {name!r} SHA-256 differs from the manifest")
            if name.startswith("media/") and digest != name[6:]:
                raise BundleError(path, f"member {name!r} is not named by its SHA-256")
    media = frozenset(n[6:] for n in present if n.startswith("media/"))
    journal_sha = hashlib.sha256(journal).hexdigest()
    if known_journal is not None and manifest["kind"] == "device" and held is not None \
            and manifest["seq_to"] <= held(manifest["device_id"]) and known_journal(journal_sha):
        return CheckedBundle(path, manifest, [], media, programs, journal_sha, entries_decoded=False)
    entries = _entries(path, journal, manifest, now_ms)
    needed = {e["new"]["sha256"] for e in entries if e["tbl"] == "media" and e["op"] == "insert"}
    if needed - media:
        raise BundleError(path, f"media entries reference {len(needed - media)} file(s) not in the bundle")
    return CheckedBundle(path, manifest, entries, media, programs, journal_sha)


def _entries(path: Path, blob: bytes, manifest: dict[str, Any], now_ms: int | None) -> list[dict[str, Any]]:
    lines = blob.splitlines()
    if len(lines) != manifest["entries"]:
        raise BundleError(path, "journal.jsonl holds another number of entries than the manifest says")
    try:  # one decoder call for the whole journal; line by line only to name a damaged line
        entries = loads(b"[" + b",".join(lines) + b"]") if lines else []
        if len(entries) != len(lines):
            raise ValueError("a line holds more than one value")
    except ValueError:
        for n, line in enumerate(lines, 1):
            try:
                loads(line)
            except ValueError as exc:
                raise BundleError(path, f"journal.jsonl line {n} is damaged ({exc})") from None
        raise BundleError(path, "journal.jsonl is damaged (a line holds more than one value)") from None
    kind, device = manifest["kind"], manifest["device_id"]
    expected = manifest["seq_from"]
    plain: list[dict[str, Any]] = []  # batch entries as one insert per record
    for n, e in enumerate(entries, 1):
        if not isinstance(e, dict) or e.keys() != FIELDS:
            raise BundleError(path, f"journal.jsonl line {n}: an entry lacks the expected fields")
        if e["tbl"] not in TABLES:
            raise BundleError(path, f"journal.jsonl line {n}: unknown table {str(e['tbl'])[:20]!r}")
        op = e["op"]
        if op not in OPS:
            raise BundleError(path, f"journal.jsonl line {n}: unknown operation {str(op)[:20]!r}")
        if not _is_int(e["seq"], 1) or type(e["row_id"]) is not str or type(e["hlc"]) is not str \
                or type(e["device_id"]) is not str or type(e["at"]) is not str or type(e["actor"]) is not str \
                or len(e["actor"]) > 120 or len(e["at"]) > 40 \
                or type(e["old"]) not in VALUE_TYPES or type(e["new"]) not in VALUE_TYPES:
            raise BundleError(path, f"journal.jsonl line {n}: a field has the wrong type")
        if not HLC.match(e["hlc"]) or e["hlc"][23:] != e["device_id"]:
            raise BundleError(path, f"{entry_name(e)}: its clock stamp is not in the stamp format of its device")
        if kind == "device":
            if e["device_id"] != device:
                raise BundleError(path, "holds entries of another device than its manifest names")
            if e["seq"] != expected:
                raise BundleError(path, "journal sequence numbers do not match the manifest's range")
            expected += 1
        elif e["tbl"] not in OFFICE_TABLES:
            raise BundleError(path, f"{entry_name(e)}: an office bundle carries only sites and components")
        if op == BATCH_OP:
            if wrong := batch_problem(e):
                raise BundleError(path, f"{entry_name(e)}: {wrong}")
            plain += expand(e)
        else:
            plain.append(e)
    if found := entries_problem(plain, now_ms):
        raise BundleError(path, f"{entry_name(found[0])} {found[1]}")
    return entries
