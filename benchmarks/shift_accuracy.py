"""Mean absolute error of the additive shift estimates per class, and their speed.

Accuracy: against the measured reference set in tests/test_shifts.py (handbook and database values,
sources cited there). Speed: estimates for every 1H/13C/19F/31P atom of the NCI molecule set that
ships with RDKit (first_5K.smi). Run: python benchmarks/shift_accuracy.py
"""

from __future__ import annotations

import platform
import sys
import time
from datetime import date
from pathlib import Path

from rdkit import Chem, RDConfig

sys.path.insert(0, str(Path(__file__).resolve().parent.parent / "tests"))

from test_shifts import evaluate, mae_by_class  # noqa: E402

from equivclass.shifts import estimate  # noqa: E402

ISO = {1: "1H", 6: "13C", 9: "19F", 15: "31P"}


def speed(limit: int = 2000) -> tuple[int, int, float]:
    mols = []
    with open(f"{RDConfig.RDDataDir}/NCI/first_5K.smi") as fh:
        for line in fh:
            m = Chem.MolFromSmiles(line.split()[0]) if line.strip() else None
            if m is not None:
                mols.append(Chem.AddHs(m))
            if len(mols) >= limit:
                break
    t0 = time.perf_counter()
    n = 0
    for m in mols:
        for a in m.GetAtoms():
            iso = ISO.get(a.GetAtomicNum())
            if iso:
                estimate(m, a.GetIdx(), iso)
                n += 1
    return len(mols), n, time.perf_counter() - t0


def main() -> None:
    rows = evaluate()
    print(f"date {date.today().isoformat()}  python {platform.python_version()}  "
          f"machine {platform.machine()} {platform.processor() or ''}".rstrip())
    print(f"{'class':24s} {'n':>4s} {'MAE':>8s}")
    unit = {"13C": "ppm", "19F": "ppm", "31P": "ppm"}
    for cls, (mae, n) in mae_by_class(rows).items():
        print(f"{cls:24s} {n:4d} {mae:8.3f} {unit.get(cls, 'ppm')}")
    worst = sorted(rows, key=lambda r: -abs(r[2] - r[1]))[:5]
    print("largest errors:")
    for cls, ppm, est, basis, src in worst:
        print(f"  {cls:8s} {src:40s} measured {ppm:8.2f} estimate {est:8.2f}")
    nm, n, dt = speed()
    print(f"speed: {n} nuclei in {nm} NCI molecules, {dt:.2f} s, {1e6 * dt / n:.1f} us per estimate")


if __name__ == "__main__":
    main()
