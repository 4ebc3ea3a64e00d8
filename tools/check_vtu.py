#!/usr/bin/env python3
"""Reads a twistmode `fields.vtu` with meshio (an independent VTK reader) and checks it
against the `modes.json` beside it: one triangle cell per mesh triangle, three arrays
per mode, and `|E|^2 = |Re E|^2 + |Im E|^2` at every node.

Usage: python3 tools/check_vtu.py OUT_DIR   (the folder `twistmode solve/demo` wrote)
Prints one line per mode and exits non-zero on a mismatch.
"""
import json
import sys
from pathlib import Path

import meshio
import numpy as np


def main() -> int:
    out = Path(sys.argv[1])
    mesh = meshio.read(out / "fields.vtu")
    doc = json.loads((out / "modes.json").read_text())
    cells = mesh.cells[0]
    print(f"{len(mesh.points)} points, {len(cells.data)} cells of type {cells.type}")
    ok = cells.type in ("triangle", "triangle6")
    for mode in doc["modes"]:
        name = f"mode_{mode['index']:02d}_E"
        re = mesh.point_data[f"{name}_re"]
        im = mesh.point_data[f"{name}_im"]
        abs2 = mesh.point_data[f"{name}_abs2"].reshape(-1)
        worst = np.max(np.abs(abs2 - (re**2).sum(1) - (im**2).sum(1))) / abs2.max()
        print(f"{name}: max relative mismatch of |E|^2 {worst:.1e}")
        ok &= worst < 1e-12
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
