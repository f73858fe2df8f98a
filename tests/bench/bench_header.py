"""Import header check on a very wide header: the whole refusal (read, split, check, message) stays
linear and short.

Baseline in the same run: ``str.split`` of the same header line, the least any check must do.
Target: 100,000 columns refused in under 1 s, with a message under 700 characters.
Run: python tests/bench/bench_header.py [COLUMNS]
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

from fieldapp.core.fields import ValidationError
from fieldapp.failures import describe
from fieldapp.store import ops
from fieldapp.store.base import Store
from fieldapp.store.importer import import_components


def header_text(columns: int, repeated: bool) -> str:
    names = [f"c{i % 1000 if repeated else i}" for i in range(columns)]
    return ",".join(names) + "\nV-1,valve,gas\n"


def refuse(store: Store, site_id: str, path: Path) -> tuple[float, str]:
    start = time.perf_counter()
    try:
        import_components(store, path, site_id)
    except ValidationError as exc:
        message = describe(exc)
    else:
        raise SystemExit("the wide header was accepted")
    return time.perf_counter() - start, message


def main(columns: int = 100_000) -> None:
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        store = Store(folder / "s.db")
        site = ops.add_site(store, {"name": "Bench", "kind": "compressor_station", "program_id": "us-nsps-oooo-a",
                                    "timezone": "UTC", "methane_mole_fraction": 0.9})
        for repeated in (False, True):
            text = header_text(columns, repeated)
            path = folder / "wide.csv"
            path.write_text(text)
            runs, floor = [], []
            for _ in range(3):  # interleaved, best of three
                start = time.perf_counter()
                text.split("\n", 1)[0].split(",")
                floor.append(time.perf_counter() - start)
                elapsed, message = refuse(store, site.id, path)
                runs.append(elapsed)
            best, split_s = min(runs), min(floor)
            kind = "repeated names" if repeated else "distinct names"
            print(f"{columns:,} columns ({kind}): refused in {best:.4f} s; str.split floor {split_s:.5f} s; "
                  f"ratio {best / split_s:.0f}x the split; message {len(message)} characters")
            print(f"  {'OK' if best < 1.0 and len(message) < 700 else 'ABOVE TARGET'} (target < 1 s, < 700 chars)")
        store.close()


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 100_000)
