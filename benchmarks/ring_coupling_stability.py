"""How much the ring vicinal couplings depend on the conformer sample, and what they cost.

    python benchmarks/ring_coupling_stability.py [--limit N] [--seeds A B]

Runs `equivclass.analyze()` (default options: Karplus couplings on MMFF conformers for ring H–C–C–H)
over the first N molecules of RDKit's Data/NCI/first_5K.smi twice, with two conformer seeds, and
compares every ring coupling between the runs: the share within 0.5 Hz and 1 Hz, the mean and the
largest difference, and the total time of each run. A method whose answer depends on the seed has
not sampled the conformations that matter (for cyclohexanes: both chairs).
"""
from __future__ import annotations

import argparse
import os
import platform
import statistics
import time

from rdkit import RDConfig, RDLogger, rdBase

import equivclass
from equivclass import karplus
from equivclass.errors import InputError

RDLogger.DisableLog("rdApp.*")
NCI_SMI = os.path.join(RDConfig.RDDataDir, "NCI", "first_5K.smi")


def ring_couplings(smiles: list[str], seed: int) -> tuple[dict, float]:
    """{(molecule, atom pair): J} of the Karplus ring couplings, and the run time (s)."""
    original = karplus.ring_vicinal_couplings

    def seeded(mol, pairs, **kw):
        kw["seed"] = seed
        return original(mol, pairs, **kw)

    karplus.ring_vicinal_couplings = seeded
    out = {}
    t0 = time.perf_counter()
    try:
        for i, smi in enumerate(smiles):
            try:
                report = equivclass.analyze(smi)
            except InputError:
                continue
            for c in report.couplings:
                if "Karplus" in c.j_basis:
                    out[(i, c.atoms)] = c.j_hz
    finally:
        karplus.ring_vicinal_couplings = original
    return out, time.perf_counter() - t0


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--limit", type=int, default=400)
    ap.add_argument("--seeds", type=int, nargs=2, default=[20240611, 20240617])
    args = ap.parse_args()
    with open(NCI_SMI) as fh:
        smiles = [ln.split()[0] for ln in fh if ln.strip()][:args.limit]
    a, ta = ring_couplings(smiles, args.seeds[0])
    b, tb = ring_couplings(smiles, args.seeds[1])
    diffs = sorted(((abs(a[k] - b[k]), k, a[k], b[k]) for k in a if k in b), reverse=True)
    print(f"equivclass {equivclass.__version__}, RDKit {rdBase.rdkitVersion}, Python "
          f"{platform.python_version()}, {platform.machine()}")
    print(f"molecules: first {len(smiles)} of first_5K.smi; seeds {args.seeds[0]} and {args.seeds[1]}\n")
    print("| quantity | value |")
    print("|---|---|")
    print(f"| ring couplings compared | {len(diffs)} |")
    if diffs:
        print(f"| within 0.5 Hz | {sum(d <= 0.5 for d, *_ in diffs) / len(diffs):.1%} |")
        print(f"| within 1 Hz | {sum(d <= 1.0 for d, *_ in diffs) / len(diffs):.1%} |")
        print(f"| mean difference | {statistics.mean(d for d, *_ in diffs):.2f} Hz |")
        print(f"| largest difference | {diffs[0][0]:.2f} Hz (molecule {diffs[0][1][0] + 1}, "
              f"atoms {diffs[0][1][1]}: {diffs[0][2]} vs {diffs[0][3]} Hz) |")
    print(f"| analyze() time, run 1 / run 2 | {ta:.1f} s / {tb:.1f} s |")


if __name__ == "__main__":
    main()
