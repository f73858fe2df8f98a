"""Enrolment and bundle signatures (Ed25519, from the ``cryptography`` package).

Key files, beside the store (``plumebook.db`` -> ``plumebook-keys/``)::

    <store>-keys/device.key   this store's private key (PKCS#8 PEM, file mode 0600); made on first use.
                              Never copy it to another machine: a copied store must get its own device.
    <store>-keys/device.pub   its public key, 64 hex digits (what the office enrols)
    <store>-keys/device.id    the device id the pair belongs to (keys of another device are refused)

The ``devices`` table (migration 10) holds the public keys this store trusts: at the office, each
enrolled tablet (role ``tablet``, with a device name); on a tablet, its office (role ``office``,
only one active). Revoking keeps the row with ``revoked_at`` set, so the record of who was
trusted stays. Every bundle carries ``manifest.sig``: the signer's Ed25519 signature of the exact
bytes of ``manifest.json``, which lists the SHA-256 of every other member, so one signature covers
the whole bundle.
"""

from __future__ import annotations

import re
from pathlib import Path
from typing import Any

from cryptography.exceptions import InvalidSignature
from cryptography.hazmat.primitives import serialization
from cryptography.hazmat.primitives.asymmetric.ed25519 import Ed25519PrivateKey, Ed25519PublicKey

from fieldapp.atomic import write_bytes
from fieldapp.core.fields import FieldProblem, ValidationError
from fieldapp.store.base import Store

ROLES = ("tablet", "office")
HEX_KEY = re.compile(r"^[0-9a-f]{64}$")


def key_folder(store: Store) -> Path:
    """The folder of a store's key files."""
    return store.path.parent / f"{store.path.stem}-keys"


def _private_key(store: Store) -> Ed25519PrivateKey:
    folder = key_folder(store)
    path = folder / "device.key"
    owner = folder / "device.id"
    if owner.exists() and owner.read_text(encoding="utf-8").strip() != store.device_id:
        raise ValidationError([FieldProblem(str(folder), f"holds the keys of device {owner.read_text().strip()}, "
                                            f"not of this store ({store.device_id}): move the folder away so this "
                                            "store makes its own key pair, then enrol it again")])
    if path.exists():
        key = serialization.load_pem_private_key(path.read_bytes(), password=None)
        if not isinstance(key, Ed25519PrivateKey):
            raise ValidationError([FieldProblem(str(path), "is not an Ed25519 private key")])
        return key
    key = Ed25519PrivateKey.generate()
    folder.mkdir(parents=True, exist_ok=True)
    pem = key.private_bytes(serialization.Encoding.PEM, serialization.PrivateFormat.PKCS8,
                            serialization.NoEncryption())
    write_bytes(path, pem, mode=0o600)
    write_bytes(folder / "device.pub", (_hex(key.public_key()) + "\n").encode())
    write_bytes(owner, (store.device_id + "\n").encode())
    return key


def _hex(key: Ed25519PublicKey) -> str:
    return key.public_bytes(serialization.Encoding.Raw, serialization.PublicFormat.Raw).hex()


def public_key(store: Store) -> str:
    """This store's public key as 64 hex digits (the key pair is made on first use)."""
    return _hex(_private_key(store).public_key())


def sign(store: Store, data: bytes) -> bytes:
    """This store's signature of ``data`` (64 bytes)."""
    return _private_key(store).sign(data)


def read_key(text: str) -> str:
    """A public key given as 64 hex digits or as the path of a ``device.pub`` file."""
    text = text.strip()
    if not HEX_KEY.match(text.lower()) and Path(text).is_file():
        text = Path(text).read_text(encoding="utf-8", errors="replace").strip()
    if not HEX_KEY.match(text.lower()):
        raise ValidationError([FieldProblem("public_key", "must be 64 hex digits or a device.pub file")])
    return text.lower()


def enrol(store: Store, device_id: str, key: str, name: str, role: str = "tablet") -> dict[str, Any]:
    """Trust a device's public key: a tablet (at the office) or this tablet's office."""
    problems = []
    if role not in ROLES:
        problems.append(FieldProblem("role", f"allowed: {', '.join(ROLES)}"))
    if not re.match(r"^[0-9A-Za-z-]{1,64}$", device_id):
        problems.append(FieldProblem("device_id", "a device id (as `plumebook device` prints it) is required"))
    if device_id == store.device_id:
        problems.append(FieldProblem("device_id", "is this store's own device"))
    if not name.strip() or len(name) > 120:
        problems.append(FieldProblem("name", "1 to 120 characters required"))
    key = read_key(key)
    if problems:
        raise ValidationError(problems)
    with store.transaction():
        if role == "office":
            other = store.rows("SELECT device_id FROM devices WHERE role = 'office' AND revoked_at IS NULL "
                               "AND device_id != ?", (device_id,))
            if other:
                trusted = other[0]["device_id"]
                raise ValidationError([FieldProblem("role", f"this tablet already trusts office {trusted}; "
                                                    "revoke it first")])
        store.conn.execute(
            "INSERT INTO devices VALUES (?, ?, ?, ?, ?, NULL) ON CONFLICT(device_id) DO UPDATE SET "
            "name = excluded.name, role = excluded.role, public_key = excluded.public_key, "
            "enrolled_at = excluded.enrolled_at, revoked_at = NULL",
            (device_id, name.strip(), role, key, store.now_text()))
    return store.rows("SELECT * FROM devices WHERE device_id = ?", (device_id,))[0]


def revoke(store: Store, device_id: str) -> dict[str, Any]:
    """Stop trusting a device (a lost tablet): its bundles are refused from now on."""
    with store.transaction():
        found = store.rows("SELECT * FROM devices WHERE device_id = ?", (device_id,))
        if not found:
            raise ValidationError([FieldProblem("device_id", f"{device_id!r} is not enrolled here")])
        store.conn.execute("UPDATE devices SET revoked_at = ? WHERE device_id = ? AND revoked_at IS NULL",
                           (store.now_text(), device_id))
    return store.rows("SELECT * FROM devices WHERE device_id = ?", (device_id,))[0]


def devices(store: Store) -> list[dict[str, Any]]:
    """Every enrolled device, revoked ones too."""
    return store.rows("SELECT * FROM devices ORDER BY role, name, device_id")


def signature_problem(store: Store, manifest: dict[str, Any], manifest_bytes: bytes, sig: bytes | None) -> str | None:
    """Why this bundle's signature is not one this store accepts, or None when it is."""
    role = "tablet" if manifest.get("kind") == "device" else "office"
    device = manifest.get("device_id")
    if sig is None:
        return "is not signed (no manifest.sig); make it again with this plumebook"
    found = store.conn.execute("SELECT public_key, revoked_at, name FROM devices WHERE device_id = ? AND role = ?",
                               (device, role)).fetchone()
    if found is None:
        who = "an enrolled tablet" if role == "tablet" else "this tablet's office"
        return f"is signed by device {str(device)[:36]}, which is not {who}: enrol it with `plumebook enrol`"
    if found[1] is not None:
        return f"is from device {found[2]!r} ({str(device)[:8]}), revoked at {found[1]}"
    try:
        text = sig.decode("ascii").strip()
        Ed25519PublicKey.from_public_bytes(bytes.fromhex(found[0])).verify(bytes.fromhex(text), manifest_bytes)
    except (InvalidSignature, ValueError, UnicodeDecodeError):
        return f"signature does not match device {found[2]!r}'s key: the bundle was altered or signed by another key"
    return None


def enrol_each_other(office: Store, tablet: Store, name: str = "") -> None:
    """Enrol a tablet at an office and the office on the tablet (both stores at hand, as in the demo)."""
    enrol(office, tablet.device_id, public_key(tablet), name or f"tablet {tablet.device_id[:8]}", "tablet")
    enrol(tablet, office.device_id, public_key(office), "office", "office")
