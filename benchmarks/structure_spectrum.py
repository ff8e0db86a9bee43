"""Time of the structure-to-spectrum step (predicted_spectrum.spectrum_of) for drug-like molecules.

The analysis (analyze) is timed apart; the target is spectrum_of < 5 s per molecule with ~30
protons.  Reports the largest Hamiltonian block diagonalised and which fragments fell back to
first-order lines.

    python benchmarks/structure_spectrum.py            # prints a markdown table
    python benchmarks/structure_spectrum.py --repeat 3
"""
from __future__ import annotations

import argparse
import platform
import time

from rdkit import Chem

from equivclass.analysis import analyze
from equivclass.predicted_spectrum import spectrum_of

MOLECULES = [   # SMILES written from the structures' published constitutions
    ("ibuprofen", "CC(C)Cc1ccc(cc1)C(C)C(=O)O"),
    ("diphenhydramine", "CN(C)CCOC(c1ccccc1)c1ccccc1"),
    ("lidocaine", "CCN(CC)CC(=O)Nc1c(C)cccc1C"),
    ("bupivacaine", "CCCCN1CCCCC1C(=O)Nc1c(C)cccc1C"),
    ("tamoxifen", "CC/C(=C(\\c1ccccc1)c1ccc(OCCN(C)C)cc1)c1ccccc1"),
    ("testosterone", "C[C@]12CC[C@H]3[C@@H](CCC4=CC(=O)CC[C@]34C)[C@@H]1CC[C@@H]2O"),
    ("propranolol", "CC(C)NCC(O)COc1cccc2ccccc12"),
]


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--mhz", type=float, default=400.0)
    args = ap.parse_args()
    print(f"machine: {platform.machine()} {platform.processor() or ''} {platform.system()} "
          f"python {platform.python_version()}")
    print(f"| molecule | 1H | analyze / s | spectrum_of / s (best of {args.repeat}) | largest block | "
          f"lines | first-order fragments |")
    print("|---|---|---|---|---|---|---|")
    for name, smi in MOLECULES:
        n_h = sum(a.GetAtomicNum() == 1 for a in Chem.AddHs(Chem.MolFromSmiles(smi)).GetAtoms())
        t0 = time.perf_counter()
        report = analyze(smi, mhz=args.mhz, name=name)
        t_an = time.perf_counter() - t0
        best, pred = float("inf"), None
        for _ in range(args.repeat):
            t0 = time.perf_counter()
            pred = spectrum_of(report)
            best = min(best, time.perf_counter() - t0)
        fallback = [f"{f.label} ({f.observed_nuclei} H)" for f in pred.fragments if f.method == "first order"]
        print(f"| {name} | {n_h} | {t_an:.2f} | {best:.3f} | {pred.largest_block} | "
              f"{len(pred.transitions.freqs_hz)} | {', '.join(fallback) or '-'} |")


if __name__ == "__main__":
    main()
