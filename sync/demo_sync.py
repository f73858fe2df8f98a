"""The demo's round trip: the demo tablet and a demo office enrol each other and exchange signed bundles."""

from __future__ import annotations

import shutil
from pathlib import Path

from fieldapp.store.base import Store
from sync.bundle import make_device_bundle, make_office_bundle
from sync.dump import canonical
from sync.merge import merge
from sync.trust import enrol_each_other, revoke


def round_trip(tablet: Store, folder: Path) -> list[str]:
    """Tablet -> office -> tablet with signatures on, in ``folder/office``; returns what happened, line by line.

    The office is made anew each time; an office the tablet trusted before is revoked first.
    """
    office_dir = folder / "office"
    shutil.rmtree(office_dir, ignore_errors=True)
    office = Store(office_dir / "office.db", actor="demo office", wall=tablet.wall)
    try:
        for row in tablet.rows("SELECT device_id FROM devices WHERE role = 'office' AND revoked_at IS NULL"):
            revoke(tablet, row["device_id"])
        enrol_each_other(office, tablet, "demo tablet")
        sent = make_device_bundle(tablet, office_dir / "from-tablet.zip")
        there = merge(office, sent.path)
        back = make_office_bundle(office, office_dir / "to-tablet.zip", tablet.device_id)
        home = merge(tablet, back.path)
        same = canonical(office) == canonical(tablet)
        return [f"tablet {tablet.device_id} enrolled at office {office.device_id} (keys in *-keys/ folders)",
                f"tablet -> office: signed bundle of {sent.entries} entries and {sent.media} media; office merged "
                f"{there.new_entries} new entries, {there.media} media files",
                f"office -> tablet: signed bundle acknowledging them; tablet merged {home.new_entries} new entries",
                f"office holds the same records and journal as the tablet: {'yes' if same else 'NO'}"]
    finally:
        office.close()
