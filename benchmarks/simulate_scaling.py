"""Time and peak memory of the exact simulator against a naive full-matrix diagonalisation.

Input: random fully coupled spin-1/2 systems (fixed seed), shifts spread over
2 ppm at 400 MHz, every J drawn from 0-15 Hz.  ``lines()`` blocks the
Hamiltonian by total Fz; the naive route builds the whole 2^n x 2^n matrix,
diagonalises it once and forms all F- matrix elements.  Every case runs in a
fresh process so that its peak resident memory (getrusage) is its own.

    python benchmarks/simulate_scaling.py            # prints a markdown table
    python benchmarks/simulate_scaling.py --sizes 8 10 --repeat 1
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import subprocess
import sys
import tempfile
import time

import numpy as np

MHZ = 400.0
SEED = 20240


def random_system(n: int):
    rng = np.random.default_rng(SEED + n)
    shifts = rng.uniform(0.0, 2.0 * MHZ, n)                 # 2 ppm at 400 MHz, Hz
    j = np.triu(rng.uniform(0.0, 15.0, (n, n)), 1)
    return shifts, j + j.T


def naive_lines(shifts, j):
    """Full-matrix reference: one eigh of the 2^n x 2^n Hamiltonian."""
    n = len(shifts)
    dim = 1 << n
    states = np.arange(dim)
    bits = (states[:, None] >> np.arange(n - 1, -1, -1)[None, :]) & 1   # 1 = beta
    m = 0.5 - bits
    h = np.zeros((dim, dim))
    h[states, states] = m @ shifts + 0.5 * np.einsum("ij,ij->i", m @ j, m)
    for k in range(n):
        for l in range(k + 1, n):
            bk, bl = 1 << (n - 1 - k), 1 << (n - 1 - l)
            src = states[(bits[:, k] == 1) & (bits[:, l] == 0)]     # k beta, l alpha
            dst = src ^ bk ^ bl
            h[src, dst] = h[dst, src] = 0.5 * j[k, l]
    w, v = np.linalg.eigh(h)
    fm = np.zeros((dim, dim))                                  # F- : alpha -> beta
    for k in range(n):
        bk = 1 << (n - 1 - k)
        src = states[bits[:, k] == 0]
        fm[src | bk, src] = 1.0
    amp = v.T @ fm @ v
    inten = amp * amp
    keep = inten > 1e-9 * inten.max()
    r, c = np.nonzero(keep)
    f = w[c] - w[r]
    a = inten[r, c] / (dim * 0.5)
    order = np.argsort(f)
    return f[order], a[order]


def broadened(f, a, lo, hi, width_hz=0.5, step_hz=0.02):
    """Lorentzian spectrum (FWHM ``width_hz``) of a line list on a fixed grid, by FFT."""
    nb = int((hi - lo) / step_hz) + 1
    u = (f - lo) / step_hz
    i = np.floor(u).astype(int)
    frac = u - i
    hist = (np.bincount(i, weights=a * (1 - frac), minlength=nb + 1)[:nb]
            + np.bincount(i + 1, weights=a * frac, minlength=nb + 1)[:nb])
    x = (np.arange(nb) - nb // 2) * step_hz
    g = width_hz / 2
    kern = np.fft.ifftshift(g / np.pi / (x * x + g * g) * step_hz)
    return np.real(np.fft.ifft(np.fft.fft(hist) * np.fft.fft(kern)))


def spectrum_deviation(path_a: str, path_b: str) -> float:
    """Largest difference of the two broadened spectra, as a fraction of the tallest peak."""
    fa, aa = np.load(path_a).values()
    fb, ab = np.load(path_b).values()
    lo = min(fa.min(), fb.min()) - 50
    hi = max(fa.max(), fb.max()) + 50
    sa, sb = broadened(fa, aa, lo, hi), broadened(fb, ab, lo, hi)
    return float(np.abs(sa - sb).max() / sa.max())


def run_case(method: str, n: int, repeat: int, save: str | None = None) -> dict:
    shifts, j = random_system(n)
    if method in ("blocked", "double"):
        import equivclass.simulate as simulate
        if method == "double":        # every block in double precision, for comparison
            simulate.SINGLE_PRECISION_FROM = 1 << 30
        fn = simulate.lines
    else:
        fn = naive_lines
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        f, a = fn(shifts, j)
        best = min(best, time.perf_counter() - t0)
    if save:
        np.savez(save, f=f, a=a)
    peak_kib = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    return {"method": method, "n": n, "seconds": best, "peak_mib": peak_kib / 1024,
            "lines": int(len(f)), "sum": float(a.sum()),
            "strong": [float(x) for x in np.sort(f[a > 1e-3])[:5]]}


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--sizes", type=int, nargs="*", default=[8, 10, 12, 14])
    ap.add_argument("--naive-max", type=int, default=12,
                    help="largest n for the full-matrix route (14 needs a 16384^2 eigh)")
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--case", nargs=2, metavar=("METHOD", "N"))
    ap.add_argument("--save", help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.case:
        method, n = args.case[0], int(args.case[1])
        print(json.dumps(run_case(method, n, args.repeat if n < 14 else 1, args.save)))
        return
    baseline = subprocess.run([sys.executable, "-c", "import numpy, scipy, equivclass.simulate;"
                               "import resource;print(resource.getrusage(resource.RUSAGE_SELF)"
                               ".ru_maxrss)"], capture_output=True, text=True, check=True)
    base_mib = int(baseline.stdout) / 1024
    load_start = os.getloadavg()[0]
    rows = []
    tmp = tempfile.mkdtemp()
    for n in args.sizes:
        res = {}
        for method in ("blocked", "double", "naive"):
            if method == "naive" and n > args.naive_max:
                res[method] = None
                continue
            save = os.path.join(tmp, f"{method}{n}.npz")
            out = subprocess.run([sys.executable, __file__, "--case", method, str(n),
                                  "--repeat", str(args.repeat), "--save", save],
                                 capture_output=True, text=True, check=True)
            res[method] = json.loads(out.stdout)
        res["deviation"] = spectrum_deviation(os.path.join(tmp, f"double{n}.npz"),
                                              os.path.join(tmp, f"blocked{n}.npz"))
        rows.append((n, res))
        b, nv = res["blocked"], res["naive"]
        agree = ""
        if nv is not None:
            agree = "yes" if (abs(b["sum"] - nv["sum"]) < 1e-6 * n and np.allclose(
                b["strong"], nv["strong"], atol=1e-6)) else "NO"
        print(f"n={n}: blocked {b['seconds']:.3f} s, naive "
              f"{'-' if nv is None else format(nv['seconds'], '.3f')} s, agree {agree}",
              file=sys.stderr)
    print(f"1-minute load average {load_start:.2f} at start, {os.getloadavg()[0]:.2f} at end; "
          f"interpreter + numpy/scipy baseline RSS {base_mib:.0f} MiB (included in the "
          f"peaks below). Times are the best of {args.repeat} runs (one run for 14 spins).\n")
    print("| spins | Fz-blocked `lines()` time | peak RSS | lines | all-double time | "
          "spectrum deviation | naive 2^n matrix time | peak RSS | speed-up |")
    print("|---:|---:|---:|---:|---:|---:|---:|---:|---:|")
    for n, res in rows:
        b, nv = res["blocked"], res["naive"]
        if nv is None:
            naive = "not run (see note) | –"
            speed = "–"
        else:
            naive = f"{nv['seconds']:.2f} s | {nv['peak_mib']:.0f} MiB"
            speed = f"{nv['seconds'] / b['seconds']:.1f}×"
        dbl = res["double"]
        print(f"| {n} | {b['seconds']:.3f} s | {b['peak_mib']:.0f} MiB | {b['lines']} | "
              f"{dbl['seconds']:.3f} s | {res['deviation']:.1e} | {naive} | {speed} |")


if __name__ == "__main__":
    main()
