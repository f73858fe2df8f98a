"""Writes the demo sites' invented component inventories (demo_site/inventory/*.csv).

Run from the repository root: ``python demo_site/make_inventory.py``. The output is committed;
the script stays so the inventory can be regenerated. Deterministic (fixed seed).
"""

from __future__ import annotations

import csv
import random
from pathlib import Path

HERE = Path(__file__).parent
SITES = {
    # key: (tag prefix, count, areas, equipment, types with weights)
    "tamsin-draw-cs": ("TD", 140, ["inlet", "compression", "discharge", "fuel gas"],
                       ["compressor unit 1", "compressor unit 2", "inlet separator", "fuel skid"],
                       {"valve": 30, "connector": 45, "flange": 20, "open_ended_line": 5,
                        "pressure_relief_device": 5, "compressor_seal": 4, "instrument": 6, "thief_hatch": 1}),
    "orrel-mesa-2": ("OM2", 80, ["wellheads", "separators", "tanks"],
                     ["wellhead 2-1", "wellhead 2-2", "separator A", "tank 1"],
                     {"valve": 30, "connector": 50, "flange": 8, "open_ended_line": 4, "instrument": 6,
                      "thief_hatch": 2}),
    "orrel-mesa-5": ("OM5", 70, ["wellheads", "separators"],
                     ["wellhead 5-1", "wellhead 5-2", "wellhead 5-3", "separator B"],
                     {"valve": 30, "connector": 55, "flange": 6, "open_ended_line": 4, "instrument": 5}),
    "brackwater-tb1": ("BW", 60, ["tank row", "load-out", "vapour recovery"],
                       ["tank 1", "tank 2", "tank 3", "VRU"],
                       {"valve": 25, "connector": 40, "flange": 10, "thief_hatch": 10,
                        "pressure_relief_device": 8, "open_ended_line": 7}),
}
FIXED = {  # tags the scenario's leaks refer to: tag -> (type, service)
    "TD-0007": ("valve", "gas"), "TD-0012": ("connector", "gas"), "TD-0021": ("pressure_relief_device", "gas"),
    "TD-0033": ("compressor_seal", "gas"), "TD-0040": ("connector", "gas"), "TD-0051": ("valve", "gas"),
    "TD-0058": ("open_ended_line", "gas"), "TD-0064": ("flange", "gas"), "TD-0070": ("thief_hatch", "light_liquid"),
    "OM2-0003": ("valve", "gas"), "OM2-0009": ("connector", "gas"), "OM2-0015": ("valve", "gas"),
    "OM2-0022": ("connector", "light_liquid"), "OM2-0030": ("instrument", "gas"),
    "OM5-0004": ("valve", "gas"), "OM5-0011": ("open_ended_line", "gas"), "OM5-0019": ("connector", "gas"),
    "BW-0005": ("thief_hatch", "light_liquid"), "BW-0013": ("pressure_relief_device", "light_liquid"),
    "BW-0020": ("valve", "water_oil"),
}


def main() -> None:
    rng = random.Random(20261201)
    out = HERE / "inventory"
    out.mkdir(exist_ok=True)
    for key, (prefix, count, areas, equipment, weights) in SITES.items():
        with open(out / f"{key}.csv", "w", newline="", encoding="utf-8") as fh:
            writer = csv.writer(fh)
            writer.writerow(["tag", "type", "service", "area", "equipment", "difficult_to_monitor",
                             "unsafe_to_monitor"])
            for n in range(1, count + 1):
                tag = f"{prefix}-{n:04d}"
                ctype, service = FIXED.get(tag, (None, None))
                if ctype is None:
                    ctype = rng.choices(list(weights), list(weights.values()))[0]
                    service = rng.choices(["gas", "light_liquid", "water_oil"], [80, 15, 5])[0]
                writer.writerow([tag, ctype, service, rng.choice(areas), rng.choice(equipment),
                                 "yes" if rng.random() < 0.04 else "no", "yes" if rng.random() < 0.01 else "no"])


if __name__ == "__main__":
    main()
