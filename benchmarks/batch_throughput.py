"""Bulk-run throughput and memory on the NCI sample that ships inside the rdkit wheel.

Measures
  1. molecules/s of `equivclass batch` (JSON Lines to /dev/null) with 1 and 2 worker processes, and the
     ratio to RDKit's bare parse + AddHs + CanonicalRankAtoms over the same records;
  2. the same job on a Dask LocalCluster of 2 worker processes against the local 2-process run;
  3. peak memory (resident set of the command and all its worker processes, sampled from /proc) on an
     input of a million lines made by repeating the sample, for at most --memory-seconds of wall time
     (the whole input would take hours; the peak is taken while the run streams through it).

Run:  python benchmarks/batch_throughput.py [--limit N] [--memory-seconds S] [--skip-memory]
Prints a Markdown block to paste into BENCHMARKS.md.
"""
from __future__ import annotations

import argparse
import datetime
import os
import platform
import subprocess
import sys
import tempfile
import time

from rdkit import Chem, RDConfig, rdBase

NCI_DIR = os.path.join(RDConfig.RDDataDir, "NCI")


def nci_source() -> str:
    """first_5K.props.sdf where the wheel has it, else first_5K.smi (the same 5 000 NCI structures)."""
    for name in ("first_5K.props.sdf", "first_5K.smi"):
        path = os.path.join(NCI_DIR, name)
        if os.path.isfile(path):
            return path
    raise SystemExit("no NCI first_5K file in this rdkit installation")


def limited_copy(src: str, limit: int | None, tmp: str) -> str:
    if not limit:
        return src
    out = os.path.join(tmp, "nci_limited" + os.path.splitext(src)[1])
    with open(src, encoding="utf-8") as fh, open(out, "w", encoding="utf-8") as dst:
        if src.endswith(".sdf"):
            n = 0
            for line in fh:
                dst.write(line)
                if line.startswith("$$$$"):
                    n += 1
                    if n >= limit:
                        break
        else:
            for k, line in enumerate(fh):
                if k >= limit:
                    break
                dst.write(line)
    return out


def rdkit_baseline(path: str) -> tuple[int, float]:
    """Seconds for RDKit alone: parse, AddHs, CanonicalRankAtoms(breakTies=False) on every record."""
    t0 = time.perf_counter()
    n = 0
    if path.endswith(".sdf"):
        mols = Chem.ForwardSDMolSupplier(path)
    else:
        mols = (Chem.MolFromSmiles(line.split()[0]) for line in open(path, encoding="utf-8") if line.strip())
    for mol in mols:
        if mol is None:
            continue
        molh = Chem.AddHs(mol)
        Chem.CanonicalRankAtoms(molh, breakTies=False)
        n += 1
    return n, time.perf_counter() - t0


TIME_LIMIT = 60.0
OVERTIME: set = set()
RING_COUPLINGS = "karplus"


def timed_run(path: str, jobs: int = 1, scheduler: str | None = None) -> tuple[int, int, float]:
    from equivclass.batch import JsonlWriter, run
    from equivclass.options import make_options
    from equivclass.records import read_records

    opts = make_options(ring_couplings=RING_COUPLINGS == "karplus")
    n = errors = 0
    t0 = time.perf_counter()
    with open(os.devnull, "w", encoding="utf-8") as sink:
        writer = JsonlWriter(sink)
        for result in run(read_records(path), opts, jobs=jobs, scheduler=scheduler, time_limit=TIME_LIMIT):
            writer.write(result)
            n += 1
            errors += bool(result.error)
            if "analysis stopped after" in result.error:
                OVERTIME.add(result.number)
    return n, errors, time.perf_counter() - t0


def dask_run(path: str) -> tuple[int, int, float, float]:
    from distributed import LocalCluster

    t0 = time.perf_counter()
    with LocalCluster(n_workers=2, processes=True, threads_per_worker=1, dashboard_address=None,
                      host="127.0.0.1") as cluster:
        start = time.perf_counter() - t0
        n, errors, dt = timed_run(path, scheduler=cluster.scheduler_address)
    return n, errors, dt, start


def _tree_rss_kb(pid: int) -> int:
    """Resident set (kB) of a process and all its descendants, read from /proc."""
    total, stack, seen = 0, [pid], set()
    while stack:
        p = stack.pop()
        if p in seen:
            continue
        seen.add(p)
        try:
            with open(f"/proc/{p}/status") as fh:
                for line in fh:
                    if line.startswith("VmRSS:"):
                        total += int(line.split()[1])
            for task in os.listdir(f"/proc/{p}/task"):
                with open(f"/proc/{p}/task/{task}/children") as fh:
                    stack += [int(c) for c in fh.read().split()]
        except (FileNotFoundError, ProcessLookupError, PermissionError):
            continue
    return total


def memory_run(src: str, lines: int, seconds: float, jobs: int, tmp: str) -> dict:
    """Run the command on a `lines`-line input (the sample repeated) for at most `seconds`."""
    big = os.path.join(tmp, "nci_1M" + (".sdf" if src.endswith(".sdf") else ".smi"))
    if src.endswith(".sdf"):
        block = open(src, encoding="utf-8").read()
        with open(big, "w", encoding="utf-8") as fh:
            written = 0
            while written < lines:
                fh.write(block)
                written += block.count("\n")
    else:
        sample = [ln for ln in open(src, encoding="utf-8") if ln.strip()]
        with open(big, "w", encoding="utf-8") as fh:
            for k in range(lines):
                fh.write(sample[k % len(sample)])
    out = os.path.join(tmp, "out.jsonl")
    code = "import sys; from equivclass.cli import main; sys.exit(main())"
    cmd = [sys.executable, "-c", code, "batch", big, "-o", out, "--jobs", str(jobs),
           "--time-limit", str(TIME_LIMIT), "--ring-couplings", RING_COUPLINGS]
    t0 = time.perf_counter()
    proc = subprocess.Popen(cmd, stderr=subprocess.PIPE, stdout=subprocess.DEVNULL)
    peak, samples = 0, []
    while proc.poll() is None and time.perf_counter() - t0 < seconds:
        rss = _tree_rss_kb(proc.pid)
        peak = max(peak, rss)
        samples.append((time.perf_counter() - t0, rss))
        time.sleep(0.5)
    finished = proc.poll() is not None
    if not finished:
        proc.send_signal(2)          # SIGINT: the command stops, leaving a valid partial file
        try:
            proc.wait(timeout=60)
        except subprocess.TimeoutExpired:
            proc.kill()
            proc.wait()
    elapsed = time.perf_counter() - t0
    with open(out, encoding="utf-8") as fh:
        done = sum(1 for _ in fh)
    size_mb = os.path.getsize(big) / 1e6
    early = max((r for t, r in samples if t < elapsed / 4), default=0)
    os.remove(big)
    return {"lines": lines, "input_mb": size_mb, "seconds": elapsed, "records_done": done,
            "finished": finished, "peak_mb": peak / 1024, "peak_first_quarter_mb": early / 1024,
            "stderr": proc.stderr.read().decode(errors="replace").strip().splitlines()[-1:]}


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--limit", type=int, default=0, help="Use only the first N records (0 = all).")
    ap.add_argument("--memory-lines", type=int, default=1_000_000)
    ap.add_argument("--memory-seconds", type=float, default=300.0)
    ap.add_argument("--skip-memory", action="store_true")
    ap.add_argument("--skip-dask", action="store_true")
    ap.add_argument("--time-limit", type=float, default=TIME_LIMIT, help="Seconds per structure.")
    ap.add_argument("--ring-couplings", choices=("karplus", "table"), default="karplus",
                    help="ring vicinal couplings as in the batch command")
    args = ap.parse_args()
    globals()["TIME_LIMIT"] = args.time_limit
    globals()["RING_COUPLINGS"] = args.ring_couplings

    src = nci_source()
    with tempfile.TemporaryDirectory() as tmp:
        path = limited_copy(src, args.limit, tmp)
        nb, tb = rdkit_baseline(path)
        n1, e1, t1 = timed_run(path, jobs=1)
        n2, e2, t2 = timed_run(path, jobs=2)
        rows = [("RDKit parse + AddHs + CanonicalRankAtoms", nb, 0, tb),
                ("equivclass batch, 1 process", n1, e1, t1), ("equivclass batch, 2 processes", n2, e2, t2)]
        if not args.skip_dask:
            nd, ed, td, start = dask_run(path)
            rows.append(("equivclass batch, Dask LocalCluster (2 workers)", nd, ed, td))
        mem = None if args.skip_memory else memory_run(src, args.memory_lines, args.memory_seconds, 2, tmp)

    cpu = platform.processor() or platform.machine()
    try:
        with open("/proc/cpuinfo") as fh:
            cpu = next(line.split(":", 1)[1].strip() for line in fh if line.startswith("model name"))
    except (OSError, StopIteration):
        pass
    load = ", ".join(f"{x:.1f}" for x in os.getloadavg())
    print(f"Machine: {cpu}, {os.cpu_count()} cores; Python {platform.python_version()}, RDKit "
          f"{rdBase.rdkitVersion}; {datetime.date.today().isoformat()}; load average at the end {load}")
    print(f"Input: {os.path.basename(src)}" + (f" (first {args.limit} records)" if args.limit else "") +
          f"; time limit {TIME_LIMIT:g} s per structure; records stopped by it (local runs): "
          f"{sorted(OVERTIME) or 'none'}")
    print()
    print("| run | records | errors | seconds | molecules/s | time / RDKit |")
    print("| --- | ---: | ---: | ---: | ---: | ---: |")
    for name, n, e, t in rows:
        print(f"| {name} | {n} | {e} | {t:.1f} | {n / t:.0f} | {t / tb:.0f}x |")
    if not args.skip_dask:
        print(f"\nDask cluster start-up (not in the time above): {start:.1f} s; "
              f"Dask / local 2-process time: {td / t2:.2f}")
    if mem:
        state = "finished" if mem["finished"] else f"stopped after {mem['seconds']:.0f} s"
        print(f"\nMemory: {mem['lines']} lines ({mem['input_mb']:.0f} MB), 2 processes, {state}, "
              f"{mem['records_done']} records written; peak resident set (command + workers) "
              f"{mem['peak_mb']:.0f} MB (first quarter of the run: {mem['peak_first_quarter_mb']:.0f} MB). "
              f"Summary line: {' '.join(mem['stderr'])}")


if __name__ == "__main__":
    main()
