"""Exact quantum-mechanical simulation of NMR line lists for spin systems.

Hamiltonian (in Hz, rotating frame of each isotope, high-field limit):

    H = sum_k nu_k I_zk + sum_{k<l, same isotope} J_kl I_k . I_l
                        + sum_{k<l, different isotopes} J_kl I_zk I_zl

Lines are the transitions of the observed isotope's lowering operator
F- = sum_k I-_k, with intensity |<f|F-|i>|^2 at uniform (high-temperature)
populations, and frequency E_i - E_f.  The standard treatment is given in
Pople, Schneider & Bernstein, *High-resolution Nuclear Magnetic Resonance*
(1959), ch. 6, and Corio, *Structure of High-Resolution NMR Spectra* (1966).

Work is kept small by three exact reductions:

* fragments: nuclei not linked by any non-zero coupling are simulated apart;
* magnetically equivalent groups (equal shift, equal spin, equal coupling to
  every nucleus outside the group) are replaced by composite spins of each
  allowed total spin S with its multiplicity (the intra-group couplings then
  drop out because they commute with the rest of H and with F-);
* the Hamiltonian is block diagonal in the total Fz of every isotope; blocks
  are built with index arrays (no loop over basis states) and diagonalised
  with LAPACK, blocks spread over the cores; blocks of SINGLE_PRECISION_FROM
  states or more are solved in single precision (see _eigh_single).

Intensities are scaled so that every observed nucleus contributes one unit:
sum of intensities = number of observed nuclei (the sum rule
Tr(F+F-) / dim = N * 2/3 I(I+1) is what makes that hold, nothing rescales it).
"""

from __future__ import annotations

import contextlib
import ctypes
import itertools
import math
import os
import threading
from concurrent.futures import Future, ThreadPoolExecutor
from dataclasses import dataclass

import numpy as np
import scipy.linalg as sla
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from equivclass.errors import InputError

#: Largest Fz block (states) the simulator will diagonalise; a 14-spin
#: fully coupled spin-1/2 system needs 3432, 15 spins need 6435.
MAX_BLOCK = 6500
#: Largest Hilbert space (states) of one fragment after composite reduction.
MAX_STATES = 1 << 20
#: Lines closer than this (Hz) are merged, their intensities summed.
MERGE_HZ = 1e-6
#: Lines weaker than this fraction of the strongest line are dropped.
DROP_RELATIVE = 1e-9
#: Couplings and shift differences below this (Hz) count as zero / equal.
ZERO_HZ = 1e-9
#: Fz blocks of at least this many states are diagonalised in single
#: precision (see _eigh_single for the accuracy this costs).
SINGLE_PRECISION_FROM = 1000


@dataclass(frozen=True)
class SpinSystem:
    """Nuclei with shifts (Hz), symmetric coupling matrix (Hz), spins and isotopes."""

    shifts_hz: tuple
    j_hz: tuple
    spins: tuple
    isotopes: tuple
    record: str = "spin system"

    def __post_init__(self):
        shifts, j, spins, isotopes = _validated(
            self.shifts_hz, self.j_hz, self.spins, self.isotopes, self.record)
        object.__setattr__(self, "shifts_hz", tuple(float(x) for x in shifts))
        object.__setattr__(self, "j_hz", tuple(tuple(float(x) for x in row) for row in j))
        object.__setattr__(self, "spins", tuple(spins))
        object.__setattr__(self, "isotopes", tuple(isotopes))

    @property
    def size(self) -> int:
        return len(self.shifts_hz)


@dataclass(frozen=True, eq=False)
class Transitions:
    """Line list of one observed isotope: frequencies (Hz, ascending) and intensities."""

    freqs_hz: np.ndarray
    intensities: np.ndarray
    isotope: str

    def __post_init__(self):
        f = np.array(self.freqs_hz, dtype=float)
        a = np.array(self.intensities, dtype=float)
        f.setflags(write=False)
        a.setflags(write=False)
        object.__setattr__(self, "freqs_hz", f)
        object.__setattr__(self, "intensities", a)


# --------------------------------------------------------------------------- input

def _validated(shifts, j, spins, isotopes, record):
    """Check shapes and values; return numpy arrays and python lists or raise InputError."""
    try:
        nu = np.asarray(shifts, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{record}: shifts must be numbers (Hz)") from None
    if nu.ndim != 1 or nu.size == 0:
        raise InputError(f"{record}: shifts must be a non-empty list of numbers (Hz)")
    n = nu.size
    if not np.all(np.isfinite(nu)):
        raise InputError(f"{record}: shifts must be finite numbers")
    try:
        jm = np.asarray(j, dtype=float)
    except (TypeError, ValueError):
        raise InputError(f"{record}: J matrix must be a square table of numbers (Hz)") from None
    if jm.shape != (n, n):
        raise InputError(f"{record}: J matrix must be {n}x{n} to match {n} shifts, "
                         f"got shape {'x'.join(map(str, jm.shape)) or 'scalar'}")
    if not np.all(np.isfinite(jm)):
        raise InputError(f"{record}: J matrix must hold finite numbers")
    scale = max(1.0, float(np.max(np.abs(jm))))
    bad = np.argwhere(np.abs(jm - jm.T) > 1e-9 * scale)
    if bad.size:
        a, b = (int(x) for x in bad[0])
        raise InputError(f"{record}: J matrix is not symmetric (J[{a}][{b}]={jm[a, b]:g} "
                         f"but J[{b}][{a}]={jm[b, a]:g})")
    diag = np.flatnonzero(np.abs(np.diag(jm)) > 0)
    if diag.size:
        k = int(diag[0])
        raise InputError(f"{record}: J[{k}][{k}] must be 0 (a nucleus does not couple to itself)")
    if spins is None:
        spins = [0.5] * n
    spins = list(spins)
    if len(spins) != n:
        raise InputError(f"{record}: {len(spins)} spins given for {n} nuclei")
    out_spins = []
    for k, s in enumerate(spins):
        try:
            twice = float(s) * 2.0
        except (TypeError, ValueError):
            raise InputError(f"{record}: spin of nucleus {k} is not a number: {s!r}") from None
        if not math.isfinite(twice) or twice < 1 or abs(twice - round(twice)) > 1e-9:
            raise InputError(f"{record}: spin of nucleus {k} must be a positive multiple "
                             f"of 1/2, got {s!r}")
        out_spins.append(round(twice) / 2)
    if isotopes is None:
        isotopes = ["*"] * n          # one unnamed isotope (hand-given systems)
    isotopes = [str(x) for x in isotopes]
    if len(isotopes) != n:
        raise InputError(f"{record}: {len(isotopes)} isotopes given for {n} nuclei")
    if any(not x.strip() for x in isotopes):
        raise InputError(f"{record}: isotope names must not be empty")
    for iso in set(isotopes):
        ss = {out_spins[k] for k in range(n) if isotopes[k] == iso}
        if len(ss) > 1 and iso != "*":
            raise InputError(f"{record}: nuclei of isotope {iso} are given different spins "
                             f"{sorted(ss)}")
    return nu, jm, out_spins, isotopes


def system_from_mapping(data, record: str = "spin system") -> SpinSystem:
    """Build a SpinSystem from a parsed JSON object.

    Keys: ``shifts_hz`` (list), ``j_hz`` (square list of lists), optional
    ``spins`` (default 1/2 each) and ``isotopes`` (default "1H" each).
    """
    if not isinstance(data, dict):
        raise InputError(f"{record}: expected an object with shifts_hz and j_hz")
    unknown = set(data) - {"shifts_hz", "j_hz", "spins", "isotopes", "title"}
    if unknown:
        raise InputError(f"{record}: unknown key(s) {', '.join(sorted(unknown))}")
    for key in ("shifts_hz", "j_hz"):
        if key not in data:
            raise InputError(f"{record}: missing key {key}")
    isotopes = data.get("isotopes")
    if isotopes is None and isinstance(data["shifts_hz"], list):
        isotopes = ["1H"] * len(data["shifts_hz"])
    return SpinSystem(data["shifts_hz"], data["j_hz"], data.get("spins"), isotopes, record)


# --------------------------------------------------------------------------- public API

def lines(shifts_hz, j_hz, spins=None):
    """Line list of a homonuclear spin system given by hand.

    ``shifts_hz``: one shift per nucleus (Hz); ``j_hz``: symmetric J matrix
    (Hz, zero diagonal); ``spins``: spin quantum numbers (default 1/2).
    Returns ``(frequencies_hz, intensities)`` sorted by frequency, intensities
    summing to the number of nuclei.
    """
    t = simulate(SpinSystem(shifts_hz, j_hz, spins, None, "spin system"), "*")
    return np.array(t.freqs_hz), np.array(t.intensities)


def simulate(system: SpinSystem, observe: str, decouple: tuple = (),
             use_groups: bool = True) -> Transitions:
    """Transitions of isotope ``observe``; nuclei of isotopes in ``decouple`` are removed.

    Couplings between different isotopes act in the weak form J I_z I_z.
    ``use_groups`` enables the composite-spin reduction of magnetically
    equivalent groups (exact; off only to cross-check).
    """
    record = system.record
    isotopes = np.array(system.isotopes, dtype=object)
    if observe not in set(system.isotopes):
        raise InputError(f"{record}: no nucleus of the observed isotope {observe}")
    decouple = (decouple,) if isinstance(decouple, str) else tuple(decouple)
    if observe in decouple:
        raise InputError(f"{record}: the observed isotope {observe} cannot also be decoupled")
    keep = np.array([iso not in decouple for iso in system.isotopes])
    idx = np.flatnonzero(keep)
    nu = np.asarray(system.shifts_hz, dtype=float)[idx]
    jm = np.asarray(system.j_hz, dtype=float)[np.ix_(idx, idx)]
    spins = np.asarray(system.spins, dtype=float)[idx]
    iso = isotopes[idx]
    observed = iso == observe
    # per-nucleus sum-rule value 2/3 I(I+1), averaged over the observed nuclei
    unit = float(np.mean(2.0 / 3.0 * spins[observed] * (spins[observed] + 1.0)))

    freqs, amps = [], []
    cache: dict = {}
    for frag in _fragments(jm):
        if not observed[frag].any():
            continue
        key = (tuple(nu[frag]), tuple(map(tuple, jm[np.ix_(frag, frag)])),
               tuple(spins[frag]), tuple(iso[frag]))
        if key not in cache:
            cache[key] = _fragment_lines(nu[frag], jm[np.ix_(frag, frag)], spins[frag],
                                         iso[frag], observe, use_groups, record)
        f, a = cache[key]
        freqs.append(f)
        amps.append(a)
    f = np.concatenate(freqs)
    a = np.concatenate(amps) / unit
    f, a = _merge_halves(f, a)
    if a.size:
        strong = a >= DROP_RELATIVE * a.max()
        f, a = f[strong], a[strong]
    return Transitions(f, a, observe)


# --------------------------------------------------------------------------- reductions

def _fragments(jm: np.ndarray) -> list:
    """Connected components of the non-zero coupling graph (lists of indices)."""
    graph = sp.csr_matrix(np.abs(jm) > ZERO_HZ)
    count, labels = connected_components(graph, directed=False)
    return [np.flatnonzero(labels == c) for c in range(count)]


def equivalent_groups(shifts_hz, j_hz, spins, isotopes) -> list:
    """Partition nuclei into magnetically equivalent groups.

    Nuclei share a group when isotope, spin and shift are equal and their
    couplings to every nucleus outside the group are equal (the condition of
    magnetic equivalence, PSB 1959 sect. 6-2). Found by partition refinement:
    start from (isotope, spin, shift) classes and split by the coupling row
    restricted to the outside until nothing changes.
    """
    nu = np.asarray(shifts_hz, dtype=float)
    jm = np.asarray(j_hz, dtype=float)
    n = nu.size
    q = np.round(nu / 1e-6).astype(np.int64)          # equal within ~1e-6 Hz
    label = {}
    cls = np.array([label.setdefault((isotopes[k], spins[k], q[k]), len(label))
                    for k in range(n)])
    jq = np.round(jm / 1e-6).astype(np.int64)
    while True:
        keys = {}
        new = np.empty(n, dtype=int)
        for k in range(n):
            outside = cls != cls[k]
            sig = (cls[k], tuple(jq[k, outside]))
            new[k] = keys.setdefault(sig, len(keys))
        if len(keys) == len(set(cls.tolist())):
            break
        cls = new
    groups = {}
    for k in range(n):
        groups.setdefault(int(cls[k]), []).append(k)
    return list(groups.values())


def _total_spin_multiplicities(count: int, spin: float) -> list:
    """(S, multiplicity) for ``count`` spins ``spin`` coupled to total spin S.

    The number of states with total M is the coefficient of the polynomial
    (x^-I + ... + x^I)^count; multiplicity(S) = c(M=S) - c(M=S+1)
    (angular-momentum addition, e.g. Corio 1966, ch. 5).
    """
    d = int(round(2 * spin)) + 1
    poly = np.ones(1, dtype=np.int64)
    for _ in range(count):
        poly = np.convolve(poly, np.ones(d, dtype=np.int64))
    # poly[i] is the count for 2M = 2*count*spin - 2*i  (i = 0 is the top)
    top2 = int(round(2 * count * spin))
    out = []
    for i in range(0, top2 // 2 + 1):
        s2 = top2 - 2 * i
        mult = int(poly[i] - (poly[i - 1] if i > 0 else 0))
        if mult:
            out.append((s2 / 2.0, mult))
    return out


def _fragment_lines(nu, jm, spins, iso, observe, use_groups, record):
    """Lines of one connected fragment; intensities already divided by its dimension."""
    n = nu.size
    dim_real = float(np.prod(2 * spins + 1))
    if use_groups:
        groups = equivalent_groups(nu, jm, list(spins), list(iso))
    else:
        groups = [[k] for k in range(n)]
    reps = [g[0] for g in groups]
    options = [_total_spin_multiplicities(len(g), spins[g[0]]) for g in groups]
    g_nu = nu[reps]
    g_j = jm[np.ix_(reps, reps)]
    g_iso = iso[reps]
    freqs, amps = [], []
    for combo in itertools.product(*options):
        s = np.array([c[0] for c in combo])
        weight = float(np.prod([c[1] for c in combo]))
        present = s > 0
        if not (present & (g_iso == observe)).any():
            continue
        p = np.flatnonzero(present)
        f, a = _exact_lines(g_nu[p], g_j[np.ix_(p, p)], s[p], g_iso[p], observe, record)
        freqs.append(f)
        amps.append(a * weight)
    if not freqs:
        return np.zeros(0), np.zeros(0)
    return np.concatenate(freqs), np.concatenate(amps) / dim_real


# --------------------------------------------------------------------------- exact core

def _conserved_groups(jm: np.ndarray, iso: np.ndarray) -> list:
    """Sets of nuclei whose total Fz is conserved: components of the same-isotope couplings.

    Only homonuclear couplings flip spins (I+I- terms); couplings between
    isotopes are J Iz Iz, so the total Fz of every component of the
    homonuclear coupling graph is a good quantum number.
    """
    same = (iso[:, None] == iso[None, :]) & (np.abs(jm) > ZERO_HZ)
    count, labels = connected_components(sp.csr_matrix(same), directed=False)
    return [np.flatnonzero(labels == c) for c in range(count)]


def _largest_block(d: np.ndarray, groups: list) -> int:
    """Size of the largest block when blocking by the total Fz of each group."""
    largest = 1
    for g in groups:
        poly = np.ones(1, dtype=np.int64)
        for dk in d[g]:
            poly = np.convolve(poly, np.ones(int(dk), dtype=np.int64))
        largest *= int(poly.max())
    return largest


def _exact_lines(nu, jm, spins, iso, observe, record):
    """All transitions of F-(observe) for one spin system, raw |<f|F-|i>|^2 (not scaled)."""
    n = nu.size
    d = np.rint(2 * spins + 1).astype(np.int64)
    dim = int(np.prod(d))
    if dim > MAX_STATES:
        raise InputError(f"{record}: spin system too large to simulate exactly "
                         f"({dim} states; limit {MAX_STATES}); split it into smaller fragments")
    groups = _conserved_groups(jm, iso)
    biggest = _largest_block(d, groups)
    if biggest > MAX_BLOCK:
        raise InputError(f"{record}: spin system too large to simulate exactly "
                         f"(a block of {biggest} states; limit {MAX_BLOCK}); "
                         f"split it into smaller fragments")
    # Zeeman offsets of each isotope are constant inside a block: remove the
    # mean for numerical precision, add it back to the observed frequencies.
    nu = nu.astype(float).copy()
    obs = iso == observe
    centre = float(nu[obs].mean())
    for name in set(iso.tolist()):
        sel = iso == name
        nu[sel] -= nu[sel].mean()

    stride = np.ones(n, dtype=np.int64)
    for k in range(n - 2, -1, -1):
        stride[k] = stride[k + 1] * d[k + 1]
    states = np.arange(dim, dtype=np.int64)
    digit = (states[:, None] // stride[None, :]) % d[None, :]   # 0 = highest m
    m = spins[None, :] - digit                                  # (dim, n) float

    # block key: total 2M of every conserved group, combined in mixed radix
    key = np.zeros(dim, dtype=np.int64)
    radix = []
    for g in groups:
        top = int(round(2 * spins[g].sum()))
        radix.append(2 * top + 1)
        key = key * radix[-1] + (np.rint(2 * m[:, g].sum(axis=1)).astype(np.int64) + top)
    weight = [int(np.prod(radix[i + 1:], dtype=np.int64)) for i in range(len(groups))]
    # lowering one group's M by one is key - 2*weight, valid while its digit >= 2
    lowering = [(weight[i], radix[i], g[obs[g]]) for i, g in enumerate(groups) if obs[g].any()]

    order = np.argsort(key, kind="stable")
    skey = key[order]
    cuts = np.flatnonzero(np.diff(skey)) + 1
    starts = np.concatenate(([0], cuts))
    ends = np.concatenate((cuts, [dim]))
    pos = np.empty(dim, dtype=np.int64)
    blocks = {}
    for a, b in zip(starts, ends):
        members = order[a:b]
        pos[members] = np.arange(b - a)
        blocks[int(skey[a])] = members

    jz = jm.copy()
    np.fill_diagonal(jz, 0.0)
    same = iso[:, None] == iso[None, :]
    pairs = [(k, l) for k in range(n) for l in range(k + 1, n)
             if same[k, l] and abs(jm[k, l]) > ZERO_HZ]
    ii = spins * (spins + 1)

    def block(members, dtype):
        mb = m[members]
        nb = members.size
        h = np.zeros((nb, nb), dtype=dtype)
        h[np.arange(nb), np.arange(nb)] = mb @ nu + 0.5 * np.einsum("ij,ij->i", mb @ jz, mb)
        for k, l in pairs:
            # I+_k I-_l: raise k (digit_k > 0), lower l (digit_l < d_l - 1)
            ok = (digit[members, k] > 0) & (digit[members, l] < d[l] - 1)
            if not ok.any():
                continue
            src = members[ok]
            mk = mb[ok, k]
            ml = mb[ok, l]
            val = 0.5 * jm[k, l] * np.sqrt((ii[k] - mk * (mk + 1)) * (ii[l] - ml * (ml - 1)))
            r, c = pos[src - stride[k] + stride[l]], pos[src]
            h[r, c] += val
            h[c, r] += val
        return h

    def diagonalise(members):
        if members.size < SINGLE_PRECISION_FROM:
            return np.linalg.eigh(block(members, np.float64))
        return _eigh_single(lambda: block(members, np.float32))

    def transitions(job):
        bkey, (wgt, rdx, spins_here) = job
        tkey = bkey - 2 * wgt
        if (bkey // wgt) % rdx < 2 or tkey not in blocks:
            return None
        members, target = blocks[bkey], blocks[tkey]
        mb = m[members]
        rows, cols, vals = [], [], []
        for k in spins_here:
            ok = digit[members, k] < d[k] - 1
            if not ok.any():
                continue
            src = members[ok]
            mk = mb[ok, k]
            rows.append(pos[src + stride[k]])
            cols.append(pos[src])
            vals.append(np.sqrt(ii[k] - mk * (mk - 1)))
        if not rows:
            return None
        wi, vi = eig[bkey]
        wf, vf = eig[tkey]
        kind = np.float32 if np.float32 in (vi.dtype, vf.dtype) else np.float64
        t = sp.csr_matrix((np.concatenate(vals).astype(kind),
                           (np.concatenate(rows), np.concatenate(cols))),
                          shape=(target.size, members.size))
        amp = vf.astype(kind, copy=False).T @ (t @ vi.astype(kind, copy=False))
        inten = np.square(amp, out=amp)
        r, c = np.nonzero(inten > DROP_RELATIVE * inten.max())
        freq = wi[c] - wf[r] + centre
        # sorted runs here (in parallel) make the final stable merge cheap
        order = np.argsort(freq)
        return freq[order], inten[r, c].astype(np.float64)[order]

    # largest blocks first so that the workers finish together
    # largest blocks first so that the workers finish together; each block
    # pair's transitions start as soon as both of its blocks are solved
    keys = sorted(blocks, key=lambda x: -blocks[x].size)
    rank = {x: i for i, x in enumerate(keys)}
    jobs = sorted(((x, low) for x in keys for low in lowering),
                  key=lambda job: max(rank[job[0]], rank.get(job[0] - 2 * job[1][0], -1)))
    with _parallel_linear_algebra(len(keys)) as pool:
        solved = {x: pool.submit(diagonalise, blocks[x]) for x in keys}
        eig = _Solved(solved)
        pending = [pool.submit(transitions, job) for job in jobs]
        found = [x for x in (p.result() for p in pending) if x is not None]
    freqs = [x[0] for x in found]
    amps = [x[1] for x in found]
    if not freqs:
        return np.zeros(0), np.zeros(0)
    # lines below DROP_RELATIVE of the strongest are removed once, after merging
    return np.concatenate(freqs), np.concatenate(amps)


class _Solved:
    """Read-only mapping of block key -> (eigenvalues, eigenvectors), waiting on futures."""

    def __init__(self, futures: dict):
        self._futures = futures

    def __getitem__(self, key):
        return self._futures[key].result()


def _eigh_single(build):
    """Eigenpairs of a large symmetric block in single precision (LAPACK ssyevd).

    ``build()`` returns the block (float32, C order); it is overwritten by the solver and built
    again only if the solver fails. Divide and conquer in single precision takes about 60 % of the
    double-precision time. Eigenvalues carry absolute errors of order eps_single * ||H|| (Golub &
    Van Loan, *Matrix Computations*, sect. 8.1): a few millihertz for 13-14 protons spread over
    8 ppm at 400 MHz, more for wide 19F ranges — below any line width. Intensities of
    near-degenerate transitions mix, so only their sums are reliable; a broadened spectrum differs
    from the double-precision one by about 1e-5 of its tallest peak (BENCHMARKS.md). The
    eigenvalues are returned in double precision so that their differences lose nothing more.
    """
    h = build()
    solver = _single_solver()
    if solver is not None:
        w = np.empty(h.shape[0], dtype=np.float32)
        # a column-major call on a symmetric matrix; the eigenvectors come back
        # in the columns of the column-major array, i.e. the rows of ``h``
        if solver(h, w) == 0:
            return w.astype(np.float64), np.ascontiguousarray(h.T)
        h = build()
    w, v = sla.eigh(h, driver="evd", overwrite_a=True, check_finite=False)
    return w.astype(np.float64), v


_SINGLE_SOLVER = ()


def _single_solver():
    """ssyevd of a loaded OpenBLAS through ctypes, or None.

    ctypes releases the interpreter lock during the call, so blocks solved on
    worker threads run in parallel (the scipy wrapper holds the lock).  Only
    the symbols of the OpenBLAS builds bundled with numpy and scipy are used,
    whose integer widths are known from their names.
    """
    global _SINGLE_SOLVER
    if _SINGLE_SOLVER != ():
        return _SINGLE_SOLVER
    found = None
    libs = []
    for path in _openblas_paths():
        try:
            libs.append(ctypes.CDLL(path))
        except OSError:
            continue
    # the 32-bit-integer build (scipy's) first: the faster of the two on the benchmark machine
    for name, width in (("scipy_LAPACKE_ssyevd", ctypes.c_int32),
                        ("scipy_LAPACKE_ssyevd64_", ctypes.c_int64)):
        fn = next((getattr(lib, name) for lib in libs if hasattr(lib, name)), None)
        if fn is None:
            continue
        fn.restype = width
        fn.argtypes = [ctypes.c_int, ctypes.c_char, ctypes.c_char, width,
                       ctypes.c_void_p, width, ctypes.c_void_p]

        def solve(a, w, _fn=fn):
            n = a.shape[0]
            return int(_fn(102, b"V", b"L", n, a.ctypes.data, n, w.ctypes.data))
        found = solve
        break
    _SINGLE_SOLVER = found
    return found


# --------------------------------------------------------------------------- threads

_BLAS_LOCK = threading.RLock()
_BLAS_CONTROLS = None


def _blas_controls() -> list:
    """(get, set) thread-count functions of every OpenBLAS loaded in this process.

    Found from the process's memory map (Linux); empty elsewhere or for other
    BLAS builds, in which case blocks are simply done one after another.
    """
    global _BLAS_CONTROLS
    if _BLAS_CONTROLS is not None:
        return _BLAS_CONTROLS
    found = []
    for path in _openblas_paths():
        try:
            lib = ctypes.CDLL(path)
        except OSError:
            continue
        for suffix in ("64_", "_64_", ""):
            for prefix in ("scipy_openblas", "openblas"):
                get = getattr(lib, f"{prefix}_get_num_threads{suffix}", None)
                put = getattr(lib, f"{prefix}_set_num_threads{suffix}", None)
                if get is not None and put is not None:
                    get.restype = ctypes.c_int
                    get.argtypes = []
                    put.argtypes = [ctypes.c_int]
                    found.append((get, put))
                    break
            else:
                continue
            break
    _BLAS_CONTROLS = found
    return found


def _openblas_paths() -> list:
    """Paths of the OpenBLAS shared libraries loaded in this process (Linux)."""
    try:
        with open("/proc/self/maps", encoding="utf-8", errors="replace") as fh:
            return sorted({ln.split()[-1] for ln in fh
                           if "openblas" in ln.lower() and ".so" in ln.split()[-1]})
    except OSError:
        return []


class _InlinePool:
    """Executor stand-in that runs each job at once on the calling thread."""

    @staticmethod
    def submit(fn, *args):
        done = Future()
        try:
            done.set_result(fn(*args))
        except Exception as exc:          # re-raised by .result(), as a pool would
            done.set_exception(exc)
        return done


@contextlib.contextmanager
def _parallel_linear_algebra(tasks: int):
    """Yield an executor (``submit``) spreading jobs over the cores, BLAS single-threaded.

    Independent Fz blocks scale better one per core than one block with a
    multi-threaded BLAS, and a multi-threaded BLAS degrades badly when the
    machine is busy.  Falls back to running jobs inline when BLAS threads
    cannot be set.
    """
    workers = min(os.cpu_count() or 1, tasks)
    controls = _blas_controls() if workers > 1 else []
    if not controls:
        yield _InlinePool()
        return
    with _BLAS_LOCK:
        saved = [(get(), put) for get, put in controls]
        for _, put in saved:
            put(1)
        try:
            with ThreadPoolExecutor(max_workers=workers) as pool:
                yield pool
        finally:
            for count, put in saved:
                put(count)


#: Line lists longer than this are merged in two halves on two threads.
PARALLEL_MERGE_FROM = 2_000_000


def _merge_halves(f: np.ndarray, a: np.ndarray, tol: float = MERGE_HZ):
    """``_merge`` of a long list in two frequency halves on two threads (same result).

    A group of close lines cut by the pivot ends up as the last group of the lower half and the
    first of the upper; those two are joined afterwards (weighted position of all their lines).
    """
    if f.size < PARALLEL_MERGE_FROM or (os.cpu_count() or 1) < 2:
        return _merge(f, a, tol)
    pivot = float(np.median(f[:: max(1, f.size // 4096)]))
    low = f < pivot
    parts = [(f[low], a[low]), (f[~low], a[~low])]
    if not parts[0][0].size or not parts[1][0].size:
        return _merge(f, a, tol)
    gap = float(parts[1][0].min() - parts[0][0].max())    # between the raw lines at the cut
    with ThreadPoolExecutor(max_workers=2) as pool:
        (f1, a1), (f2, a2) = pool.map(lambda p: _merge(p[0], p[1], tol), parts)
    if gap <= tol:
        total = a1[-1] + a2[0]
        pos = (f1[-1] * a1[-1] + f2[0] * a2[0]) / total if total > 0 else f1[-1]
        f1, a1 = f1.copy(), a1.copy()
        f1[-1], a1[-1] = pos, total
        f2, a2 = f2[1:], a2[1:]
    return np.concatenate((f1, f2)), np.concatenate((a1, a2))


def _merge(f: np.ndarray, a: np.ndarray, tol: float = MERGE_HZ):
    """Sort lines and merge neighbours closer than ``tol`` Hz (intensity-weighted position).

    The sort is stable, so inputs made of already-sorted runs sort fast; the
    weighted positions are computed only for the groups that hold several lines.
    """
    if f.size == 0:
        return f, a
    order = np.argsort(f, kind="stable")
    f, a = f[order], a[order]
    close = np.diff(f) <= tol
    if not close.any():
        return f, a
    head = np.concatenate(([True], ~close))          # first line of each group
    start = np.flatnonzero(head)
    pos, total = f[start], a[start]
    member = np.zeros(f.size, dtype=bool)            # lines of groups of two or more
    member[:-1] |= close
    member[1:] |= close
    grouped = np.flatnonzero(member[start])
    sub_f, sub_a = f[member], a[member]
    sub_start = np.flatnonzero(head[member])
    sub_total = np.add.reduceat(sub_a, sub_start)
    moment = np.add.reduceat(sub_a * sub_f, sub_start)
    safe = np.where(sub_total > 0, sub_total, 1.0)
    pos[grouped] = np.where(sub_total > 0, moment / safe, sub_f[sub_start])
    total[grouped] = sub_total
    return pos, total
