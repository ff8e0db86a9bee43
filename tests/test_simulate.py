"""Checks of the exact simulator against analytic spectra from the literature.

References for the closed forms (re-derived below in comments; the derivations
follow the textbook route and were written from memory of it):

* PSB 1959: J. A. Pople, W. G. Schneider, H. J. Bernstein, *High-resolution
  Nuclear Magnetic Resonance*, McGraw-Hill 1959, ch. 6 (AB, A2B, ABX) and
  ch. 6/8 (AA'XX' with N, L, K, M).
* R. K. Harris, *Nuclear Magnetic Resonance Spectroscopy*, Pitman 1983, ch. 5
  (same results, AA'XX' line table).
* First-order multiplets: binomial / polynomial coefficients (math.comb),
  common practice of the trade for weakly coupled spins.

All energies in Hz; H = sum nu_k Iz_k + sum J I.I (same isotope) + sum J Iz Iz
(different isotopes); a line is E_i - E_f for F- |i> -> |f>.  Intensities are
per nucleus: they sum to the number of observed nuclei.
"""

import json
import math

import numpy as np
import pytest

from equivclass.errors import InputError
from equivclass.simulate import (MAX_BLOCK, SpinSystem, Transitions, equivalent_groups,
                                 lines, simulate, system_from_mapping)

TOL_HZ = 1e-6
TOL_REL = 1e-6


def _pool(pairs, tol):
    """Merge (frequency, intensity) pairs closer than ``tol`` Hz (weighted position)."""
    merged = []
    for f, a in sorted(pairs):
        if merged and abs(f - merged[-1][0]) < tol:
            f0, a0 = merged[-1]
            merged[-1] = ((f0 * a0 + f * a) / (a0 + a), a0 + a)
        else:
            merged.append((f, a))
    return merged


def _assert_lines(freqs, ints, expected, tol_hz=TOL_HZ, tol_rel=TOL_REL, merge_hz=None):
    """Compare a line list with an expected list of (frequency, intensity).

    Expected lines closer than 1e-6 Hz are merged first (as the simulator
    does); expected lines below 1e-9 of the strongest are dropped.  With
    ``merge_hz``, both lists are first pooled at that tolerance (for
    single-precision results, whose degenerate lines split by ~1e-5 Hz).
    """
    merged = _pool(expected, merge_hz or 1e-6)
    if merge_hz:
        got = _pool(zip(freqs, ints), merge_hz)
        freqs = np.array([f for f, _ in got])
        ints = np.array([a for _, a in got])
    amax = max(a for _, a in merged)
    merged = [(f, a) for f, a in merged if a >= 1e-9 * amax]
    assert len(freqs) == len(merged), (len(freqs), len(merged), freqs, merged)
    ef = np.array([f for f, _ in merged])
    ea = np.array([a for _, a in merged])
    np.testing.assert_allclose(freqs, ef, rtol=0, atol=tol_hz)
    np.testing.assert_allclose(ints, ea, rtol=tol_rel, atol=tol_rel * amax)


# ----------------------------------------------------------------------------- AB

def ab_analytic(nu_a, nu_b, j):
    """AB quartet (PSB 1959 sect. 6-3; Harris 1983 sect. 5.4).

    With c = (nu_a+nu_b)/2, D = sqrt((nu_a-nu_b)^2 + J^2) (= 2C), sin 2theta = J/D:
    the M=0 states are cos(theta)|ab> + sin(theta)|ba> (E = -J/4 + D/2) and
    -sin(theta)|ab> + cos(theta)|ba> (E = -J/4 - D/2); |aa>, |bb> have
    E = +-c + J/4.  F- matrix elements are cos(theta) +- sin(theta), so the
    lines are c + J/2 - D/2 and c - J/2 + D/2 with (1 + sin 2theta) and
    c + J/2 + D/2 and c - J/2 - D/2 with (1 - sin 2theta); per nucleus /2.
    """
    c = (nu_a + nu_b) / 2
    d = math.hypot(nu_a - nu_b, j)
    s = j / d
    return [(c + j / 2 - d / 2, (1 + s) / 2), (c - j / 2 + d / 2, (1 + s) / 2),
            (c + j / 2 + d / 2, (1 - s) / 2), (c - j / 2 - d / 2, (1 - s) / 2)]


@pytest.mark.parametrize("nu_a,nu_b,j", [(0.0, 10.0, 5.0), (120.0, 100.0, 16.0),
                                         (1203.7, 1199.1, -12.5), (0.0, 40.0, 0.8)])
def test_ab_matches_analytic(nu_a, nu_b, j):
    f, a = lines([nu_a, nu_b], [[0, j], [j, 0]])
    _assert_lines(f, a, ab_analytic(nu_a, nu_b, j))


# ----------------------------------------------------------------------------- A2B

def a2b_analytic(nu_a, nu_b, j):
    """A2B spectrum, 9 lines (PSB 1959 sect. 6-4, re-derived here).

    Symmetrised basis: the A2 singlet gives only the B line at nu_b (raw 1).
    The A2 triplet (T=1) with B is a spin-1/spin-1/2 problem:
      |1a>                     E1 = nu_a + nu_b/2 + J/2
      {|1b>, |0a>}  diag (nu_a - nu_b/2 - J/2, nu_b/2),  off-diag J/sqrt(2)
      {|0b>, |-1a>} diag (-nu_b/2, -nu_a + nu_b/2 - J/2), off-diag J/sqrt(2)
      |-1b>                    E4 = -nu_a - nu_b/2 + J/2
    Each 2x2 block [[p, o], [o, q]] has E = (p+q)/2 +- R, R = sqrt(((p-q)/2)^2 + o^2),
    eigenvectors (cos phi, sin phi) and (-sin phi, cos phi), tan 2phi = 2o/(p-q)
    (R is the C+/C- of PSB).  F-|1a> = sqrt2|0a> + |1b>, F-|1b> = sqrt2|0b>,
    F-|0a> = sqrt2|-1a> + |0b>, F-|0b> = sqrt2|-1b>, F-|-1a> = |-1b>.
    Raw intensities divided by 4 (dim 8 and the per-nucleus 1/2).
    """
    r2 = math.sqrt(2)

    def block(p, q, o):
        phi = 0.5 * math.atan2(2 * o, p - q)
        rad = math.hypot((p - q) / 2, o)
        return (p + q) / 2 + rad, (p + q) / 2 - rad, math.cos(phi), math.sin(phi)

    e1 = nu_a + nu_b / 2 + j / 2
    e4 = -nu_a - nu_b / 2 + j / 2
    e2p, e2m, c2, s2 = block(nu_a - nu_b / 2 - j / 2, nu_b / 2, j / r2)
    e3p, e3m, c3, s3 = block(-nu_b / 2, -nu_a + nu_b / 2 - j / 2, j / r2)
    raw = [
        (nu_b, 1.0),                                          # A2 singlet: B alone
        (e1 - e2p, (c2 + r2 * s2) ** 2),                      # |1a> -> 2+
        (e1 - e2m, (-s2 + r2 * c2) ** 2),                     # |1a> -> 2-
        (e2p - e3p, (c3 * (r2 * c2 + s2) + s3 * r2 * s2) ** 2),
        (e2p - e3m, (-s3 * (r2 * c2 + s2) + c3 * r2 * s2) ** 2),
        (e2m - e3p, (c3 * (c2 - r2 * s2) + s3 * r2 * c2) ** 2),
        (e2m - e3m, (-s3 * (c2 - r2 * s2) + c3 * r2 * c2) ** 2),
        (e3p - e4, (r2 * c3 + s3) ** 2),
        (e3m - e4, (-r2 * s3 + c3) ** 2),
    ]
    return [(f, x / 4.0) for f, x in raw]


@pytest.mark.parametrize("use_groups", [True, False])
@pytest.mark.parametrize("nu_a,nu_b,j,j_aa", [(0.0, 10.0, 6.0, -12.0), (250.0, 230.0, 8.0, 0.0),
                                              (30.0, 0.0, 10.0, 3.0), (0.0, 2.0, 7.5, 0.0)])
def test_a2b_matches_analytic(nu_a, nu_b, j, j_aa, use_groups):
    # the A-A coupling must not change the spectrum (magnetic equivalence)
    system = SpinSystem((nu_a, nu_a, nu_b), ((0, j_aa, j), (j_aa, 0, j), (j, j, 0)),
                        (0.5, 0.5, 0.5), ("1H", "1H", "1H"))
    t = simulate(system, "1H", use_groups=use_groups)
    _assert_lines(t.freqs_hz, t.intensities, a2b_analytic(nu_a, nu_b, j))
    assert abs(t.intensities.sum() - 3) < 1e-9


def test_a2b_has_nine_lines_when_strongly_coupled():
    # PSB 1959: A2B shows up to 9 lines (8 + a weak combination line)
    f, a = lines([0, 0, 15], [[0, 0, 9], [0, 0, 9], [9, 9, 0]])
    assert len(f) == 9


# ----------------------------------------------------------------------------- ABX

def abx_analytic(nu_a, nu_b, nu_x, j_ab, j_ax, j_bx):
    """ABX with X weakly coupled (exact for J Iz Iz to X), PSB 1959 sect. 6-5.

    For m_X = +-1/2 the AB part sees shifts nu_a +- J_AX/2, nu_b +- J_BX/2:
    two AB quartets with centres c+- = (nu_a+nu_b)/2 +- (J_AX+J_BX)/4 and
    D+- = sqrt((nu_a - nu_b +- (J_AX-J_BX)/2)^2 + J_AB^2), each with half weight.
    X part: |aa>, |bb> give nu_x +- (J_AX+J_BX)/2 (raw 1); the mixed states give
    nu_x +- (D+ - D-)/2 with cos^2(th+ - th-) and nu_x +- (D+ + D-)/2 with
    sin^2(th+ - th-) (combination lines), tan 2th+- = J_AB / (Delta +- (J_AX-J_BX)/2).
    Returns (AB part, X part), per-nucleus intensities.
    """
    ab = []
    d = {}
    th = {}
    for sign in (+1, -1):
        pa = nu_a + sign * j_ax / 2
        pb = nu_b + sign * j_bx / 2
        for f, x in ab_analytic(pa, pb, j_ab):
            ab.append((f, x / 2))
        d[sign] = math.hypot(pa - pb, j_ab)
        th[sign] = 0.5 * math.atan2(j_ab, pa - pb)
    c2 = math.cos(th[1] - th[-1]) ** 2
    s2 = math.sin(th[1] - th[-1]) ** 2
    n = (j_ax + j_bx) / 2
    x = [(nu_x + n, 0.25), (nu_x - n, 0.25),
         (nu_x + (d[1] - d[-1]) / 2, c2 / 4), (nu_x - (d[1] - d[-1]) / 2, c2 / 4),
         (nu_x + (d[1] + d[-1]) / 2, s2 / 4), (nu_x - (d[1] + d[-1]) / 2, s2 / 4)]
    return ab, x


@pytest.mark.parametrize("params", [
    (100.0, 80.0, 5000.0, 10.0, 6.0, -2.0),
    (0.0, 12.0, -300.0, -15.0, 40.0, 5.0),
    (40.0, 40.5, 10.0, 17.0, 2.0, 9.0),
])
def test_abx_matches_analytic(params):
    nu_a, nu_b, nu_x, j_ab, j_ax, j_bx = params
    # X is a different isotope, so its couplings take the weak form exactly
    system = SpinSystem((nu_a, nu_b, nu_x), ((0, j_ab, j_ax), (j_ab, 0, j_bx), (j_ax, j_bx, 0)),
                        (0.5, 0.5, 0.5), ("1H", "1H", "19F"))
    ab, x = abx_analytic(*params)
    t = simulate(system, "1H")
    _assert_lines(t.freqs_hz, t.intensities, ab)
    tx = simulate(system, "19F")
    _assert_lines(tx.freqs_hz, tx.intensities, x)


# ----------------------------------------------------------------------------- AA'XX'

def aaxx_analytic(nu_a, j_aa, j_xx, j_ax, j_ax2):
    """A part of AA'XX' (PSB 1959; Harris 1983 table 5-5): N, L, K, M result.

    N = J_AX + J_AX', L = J_AX - J_AX', K = J_AA' + J_XX', M = J_AA' - J_XX'.
    Lines relative to nu_A: +-N/2 (1/2 each per nucleus);
    +-K/2 + sqrt(K^2+L^2)/2 ... as  +K/2 - R_K/2, -K/2 + R_K/2 with (1 + K/R_K)/8
    and +K/2 + R_K/2, -K/2 - R_K/2 with (1 - K/R_K)/8, R_K = sqrt(K^2 + L^2);
    the same with M in place of K (R_M = sqrt(M^2 + L^2)).
    Derivation: in the symmetric/antisymmetric basis of A and X the only
    mixing is (L/2)(IzA - IzA')(IzX - IzX') between s_A s_X and a_A a_X (split K)
    and between s_A a_X and a_A s_X (split M).
    """
    n = j_ax + j_ax2
    ll = j_ax - j_ax2
    k = j_aa + j_xx
    m = j_aa - j_xx
    out = [(nu_a + n / 2, 0.5), (nu_a - n / 2, 0.5)]
    for q in (k, m):
        r = math.hypot(q, ll)
        out += [(nu_a + q / 2 - r / 2, (1 + q / r) / 8), (nu_a - q / 2 + r / 2, (1 + q / r) / 8),
                (nu_a + q / 2 + r / 2, (1 - q / r) / 8), (nu_a - q / 2 - r / 2, (1 - q / r) / 8)]
    return out


@pytest.mark.parametrize("j_aa,j_xx,j_ax,j_ax2", [(4.7, 36.0, 0.6, 34.0),
                                                  (-3.0, 8.0, 12.0, -2.5),
                                                  (10.0, 2.0, 7.0, 7.5)])
def test_aaxx_matches_analytic(j_aa, j_xx, j_ax, j_ax2):
    # nuclei 0, 1 = A, A' (1H); 2, 3 = X, X' (19F); A-X and A'-X' couple by J_AX
    nu_a, nu_x = 310.0, -2000.0
    jm = [[0, j_aa, j_ax, j_ax2], [j_aa, 0, j_ax2, j_ax],
          [j_ax, j_ax2, 0, j_xx], [j_ax2, j_ax, j_xx, 0]]
    system = SpinSystem((nu_a, nu_a, nu_x, nu_x), jm, (0.5,) * 4, ("1H", "1H", "19F", "19F"))
    t = simulate(system, "1H")
    _assert_lines(t.freqs_hz, t.intensities, aaxx_analytic(nu_a, j_aa, j_xx, j_ax, j_ax2))
    # A and A' are not magnetically equivalent: no composite group may form
    assert sorted(map(sorted, equivalent_groups(system.shifts_hz, jm, list(system.spins),
                                                list(system.isotopes)))) == [[0], [1], [2], [3]]


# ----------------------------------------------------------------------------- large-block path

@pytest.fixture(params=["lapack via ctypes", "scipy fallback"])
def single_precision_everywhere(request, monkeypatch):
    """Send every Fz block through the single-precision solver used for large blocks."""
    import equivclass.simulate as simulate_module
    monkeypatch.setattr(simulate_module, "SINGLE_PRECISION_FROM", 1)
    if request.param == "scipy fallback":
        monkeypatch.setattr(simulate_module, "_SINGLE_SOLVER", None)
    elif simulate_module._single_solver() is None:
        pytest.skip("no OpenBLAS LAPACKE symbol loaded on this platform")
    return request.param


def test_single_precision_path_matches_analytic_abx_and_aaxx(single_precision_everywhere):
    # same closed forms as above (PSB 1959 sect. 6-5; Harris 1983 table 5-5); single
    # precision keeps positions to ~1e-5 Hz and intensities to ~1e-6 relative
    params = (40.0, 40.5, 10.0, 17.0, 2.0, 9.0)
    nu_a, nu_b, nu_x, j_ab, j_ax, j_bx = params
    system = SpinSystem((nu_a, nu_b, nu_x), ((0, j_ab, j_ax), (j_ab, 0, j_bx), (j_ax, j_bx, 0)),
                        (0.5, 0.5, 0.5), ("1H", "1H", "19F"))
    ab, x = abx_analytic(*params)
    t = simulate(system, "1H")
    _assert_lines(t.freqs_hz, t.intensities, ab, tol_hz=1e-3, tol_rel=1e-5, merge_hz=1e-3)
    j_aa, j_xx, j_ax, j_ax2 = (-3.0, 8.0, 12.0, -2.5)
    jm = [[0, j_aa, j_ax, j_ax2], [j_aa, 0, j_ax2, j_ax],
          [j_ax, j_ax2, 0, j_xx], [j_ax2, j_ax, j_xx, 0]]
    system = SpinSystem((310.0, 310.0, -2000.0, -2000.0), jm, (0.5,) * 4,
                        ("1H", "1H", "19F", "19F"))
    t = simulate(system, "1H", use_groups=False)
    _assert_lines(t.freqs_hz, t.intensities, aaxx_analytic(310.0, j_aa, j_xx, j_ax, j_ax2),
                  tol_hz=1e-3, tol_rel=1e-5, merge_hz=1e-3)


def test_single_precision_path_keeps_sum_rule_and_ab(single_precision_everywhere):
    # sum rule (PSB 1959 sect. 6-1) on a strongly coupled 8-spin system, and the AB quartet
    rng = np.random.default_rng(5)
    n = 8
    jm = np.triu(rng.uniform(-15, 15, (n, n)), 1)
    f, a = lines(rng.uniform(0, 40, n), jm + jm.T)
    assert abs(a.sum() - n) < 1e-5 * n
    f, a = lines([0.0, 10.0], [[0, 5.0], [5.0, 0]])
    _assert_lines(f, a, ab_analytic(0.0, 10.0, 5.0), tol_hz=1e-4, tol_rel=1e-5)


def test_one_core_runs_blocks_inline(monkeypatch):
    # without worker threads the blocks run one after another, same ABX result (PSB 1959)
    import equivclass.simulate as simulate_module
    monkeypatch.setattr(simulate_module.os, "cpu_count", lambda: 1)
    params = (0.0, 12.0, -300.0, -15.0, 40.0, 5.0)
    nu_a, nu_b, nu_x, j_ab, j_ax, j_bx = params
    system = SpinSystem((nu_a, nu_b, nu_x), ((0, j_ab, j_ax), (j_ab, 0, j_bx), (j_ax, j_bx, 0)),
                        (0.5, 0.5, 0.5), ("1H", "1H", "19F"))
    _assert_lines(simulate(system, "1H").freqs_hz, simulate(system, "1H").intensities,
                  abx_analytic(*params)[0])


@pytest.mark.slow
def test_thirteen_weakly_coupled_spins_through_large_blocks_are_first_order():
    # 13 coupled protons 60 Hz apart with J of 0.1-1 Hz: the Fz blocks of 1287 and 1716 states take
    # the single-precision route. First-order rules (common practice; Pople-Schneider-Bernstein
    # 1959, ch. 6, weak-coupling limit): around each shift the lines carry one unit of intensity,
    # centred on the shift, with variance sum_l (J_kl / 2)^2 (each partner splits by +-J/2).
    # Second-order corrections are of order J/delta ~ 0.02 here.
    rng = np.random.default_rng(13)
    n = 13
    shifts = 60.0 * np.arange(n)
    jm = np.triu(rng.uniform(0.1, 1.0, (n, n)), 1)
    jm = jm + jm.T
    f, a = lines(shifts, jm)
    assert abs(a.sum() - n) < 1e-5 * n
    for k in range(n):
        win = np.abs(f - shifts[k]) < 30.0
        total = a[win].sum()
        mean = (f[win] * a[win]).sum() / total
        var = (a[win] * (f[win] - mean) ** 2).sum() / total
        expected_var = (jm[k] ** 2).sum() / 4
        assert abs(total - 1.0) < 1e-3
        assert abs(mean - shifts[k]) < 0.02
        assert abs(var - expected_var) < 0.01 * expected_var


# ----------------------------------------------------------------------------- first order

def binomial_multiplet(centre, couplings):
    """First-order multiplet: for each (J, n, I) partner group, polynomial splitting.

    Spin 1/2: binomial C(n, k) / 2^n (common practice, 'Pascal triangle');
    spin 1: coefficients of (1 + x + x^2)^n = sum_j C(n, j) C(n - j, k - 2j), / 3^n.
    """
    lines_ = [(centre, 1.0)]
    for j, n, spin in couplings:
        if spin == 0.5:
            split = [(j * (k - n / 2), math.comb(n, k) / 2 ** n) for k in range(n + 1)]
        elif spin == 1:
            split = []
            for k in range(2 * n + 1):
                c = sum(math.comb(n, q) * math.comb(n - q, k - 2 * q)
                        for q in range(0, k // 2 + 1) if k - 2 * q <= n - q)
                split.append((j * (k - n), c / 3 ** n))
        else:
            raise ValueError(spin)
        lines_ = [(f + df, a * da) for f, a in lines_ for df, da in split]
    return lines_


def test_heteronuclear_quartet_is_binomial():
    # H coupled to three equivalent 19F (weak form is exact): 1:3:3:1
    j = 7.3
    system = SpinSystem((50.0, 9000.0, 9000.0, 9000.0),
                        ((0, j, j, j), (j, 0, 0, 0), (j, 0, 0, 0), (j, 0, 0, 0)),
                        (0.5,) * 4, ("1H", "19F", "19F", "19F"))
    t = simulate(system, "1H")
    _assert_lines(t.freqs_hz, t.intensities, binomial_multiplet(50.0, [(j, 3, 0.5)]))


def test_heteronuclear_doublet_has_no_roof_effect():
    # 1H-19F with a tiny frequency difference in the two rotating frames:
    # heteronuclear coupling is weak (J Iz Iz), so a clean 1:1 doublet
    system = SpinSystem((0.0, 3.0), ((0, 48.0), (48.0, 0)), (0.5, 0.5), ("1H", "19F"))
    t = simulate(system, "1H")
    _assert_lines(t.freqs_hz, t.intensities, [(-24.0, 0.5), (24.0, 0.5)])


def test_decoupling_removes_splitting():
    system = SpinSystem((0.0, 3.0), ((0, 48.0), (48.0, 0)), (0.5, 0.5), ("1H", "19F"))
    t = simulate(system, "1H", decouple=("19F",))
    _assert_lines(t.freqs_hz, t.intensities, [(0.0, 1.0)])


def test_doublet_of_triplets_heteronuclear():
    # 1H coupled to 2 x 19F (J 50) and 1 x 31P (J 12): dt, product of binomials
    jm = np.zeros((4, 4))
    jm[0, 1] = jm[1, 0] = jm[0, 2] = jm[2, 0] = 50.0
    jm[0, 3] = jm[3, 0] = 12.0
    system = SpinSystem((-100.0, 0.0, 0.0, 700.0), jm, (0.5,) * 4, ("1H", "19F", "19F", "31P"))
    t = simulate(system, "1H")
    _assert_lines(t.freqs_hz, t.intensities,
                  binomial_multiplet(-100.0, [(50.0, 2, 0.5), (12.0, 1, 0.5)]))


@pytest.mark.parametrize("n", [1, 2, 3])
def test_spin_one_partner_gives_polynomial_multiplet(n):
    # 1H coupled to n equivalent 2H (spin 1): 1:1:1, 1:2:3:2:1, 1:3:6:7:6:3:1
    j = 2.2
    k = n + 1
    jm = np.zeros((k, k))
    jm[0, 1:] = jm[1:, 0] = j
    system = SpinSystem((0.0,) + (40.0,) * n, jm, (0.5,) + (1.0,) * n, ("1H",) + ("2H",) * n)
    t = simulate(system, "1H")
    _assert_lines(t.freqs_hz, t.intensities, binomial_multiplet(0.0, [(j, n, 1)]))


def test_spin_one_observed_shows_2i_plus_1_lines():
    # a 14N (spin 1) coupled weakly to one 1H: observed 14N is a 1:1 doublet
    system = SpinSystem((0.0, 500.0), ((0, 52.0), (52.0, 0)), (1.0, 0.5), ("14N", "1H"))
    t = simulate(system, "14N")
    _assert_lines(t.freqs_hz, t.intensities, [(-26.0, 0.5), (26.0, 0.5)])


def _first_order_error(delta):
    """Largest deviation of an A3X2 simulation from first order at separation delta.

    Simulated lines are pooled in windows of +-J/3 around each first-order
    line (second-order effects split lines by ~J^2/delta); the pooled
    intensity-weighted position and total intensity are compared.
    """
    j = 7.0
    jm = np.zeros((5, 5))
    jm[:3, 3:] = jm[3:, :3] = j
    f, a = lines([0.0] * 3 + [delta] * 2, jm)
    expected = [(x, 3 * y) for x, y in binomial_multiplet(0.0, [(j, 2, 0.5)])]       # A3: t
    expected += [(delta + x, 2 * y) for x, y in binomial_multiplet(0.0, [(j, 3, 0.5)])]  # X2: q
    err = 0.0
    pooled = 0.0
    for x, y in expected:
        win = np.abs(f - x) < j / 3
        tot = a[win].sum()
        pooled += tot
        err = max(err, abs((f[win] * a[win]).sum() / tot - x), abs(tot - y))
    return max(err, abs(a.sum() - pooled))


def test_weak_coupling_limit_is_first_order():
    # A3X2 (ethyl-like): deviation from the first-order triplet falls as J/delta
    # (perturbation theory: line shifts ~ J^2/delta, intensities ~ J/delta)
    e1 = _first_order_error(2.0e3)
    e2 = _first_order_error(2.0e5)
    assert e2 < 10 * 7.0 / 2.0e5          # within ~J/delta of first order
    assert e2 < e1 / 50                   # and converging to it


# ----------------------------------------------------------------------------- sum rule etc.

def test_sum_rule_random_strongly_coupled():
    # sum rule (PSB 1959 sect. 6-1): sum |<f|F-|i>|^2 = Tr(F+F-) = N dim / 2
    rng = np.random.default_rng(11)
    n = 7
    shifts = rng.uniform(0, 40, n)
    jm = rng.uniform(-15, 15, (n, n))
    jm = np.triu(jm, 1)
    jm = jm + jm.T
    f, a = lines(shifts, jm)
    assert abs(a.sum() - n) < 1e-9
    assert np.all(np.diff(f) > 0)
    assert len(f) > 100


def test_sum_rule_mixed_spins_and_groups():
    # CH3-CD2 type: three 1H, two 2H; observe 1H and 2H separately
    jm = np.zeros((5, 5))
    jm[:3, 3:] = jm[3:, :3] = 1.1
    jm[3, 4] = jm[4, 3] = 0.2
    system = SpinSystem((10.0,) * 3 + (12.0,) * 2, jm, (0.5,) * 3 + (1.0,) * 2,
                        ("1H",) * 3 + ("2H",) * 2)
    assert abs(simulate(system, "1H").intensities.sum() - 3) < 1e-9
    assert abs(simulate(system, "2H").intensities.sum() - 2) < 1e-9


def test_uncoupled_fragments_are_independent():
    # two AB systems that do not couple: the union of two analytic quartets
    jm = np.zeros((4, 4))
    jm[0, 1] = jm[1, 0] = 5.0
    jm[2, 3] = jm[3, 2] = 11.0
    f, a = lines([0.0, 10.0, 300.0, 330.0], jm)
    _assert_lines(f, a, ab_analytic(0.0, 10.0, 5.0) + ab_analytic(300.0, 330.0, 11.0))


def test_composite_groups_found():
    # A3B2: methyl and methylene each one magnetically equivalent group
    jm = np.zeros((5, 5))
    jm[:3, 3:] = jm[3:, :3] = 7.0
    g = equivalent_groups([1.0] * 3 + [2.0] * 2, jm, [0.5] * 5, ["1H"] * 5)
    assert sorted(map(sorted, g)) == [[0, 1, 2], [3, 4]]


def test_large_group_simulates_via_composite_spins():
    # nine equivalent 1H coupled to one 31P (weak form, exact first order):
    # 31P shows the binomial decet, 1H a doublet carrying nine units
    n = 10
    jm = np.zeros((n, n))
    jm[0, 1:] = jm[1:, 0] = 2.7
    system = SpinSystem((0.0,) + (400.0,) * 9, jm, (0.5,) * n, ("31P",) + ("1H",) * 9)
    assert sorted(map(len, equivalent_groups(system.shifts_hz, jm, list(system.spins),
                                             list(system.isotopes)))) == [1, 9]
    tp = simulate(system, "31P")
    _assert_lines(tp.freqs_hz, tp.intensities, binomial_multiplet(0.0, [(2.7, 9, 0.5)]))
    th = simulate(system, "1H")
    _assert_lines(th.freqs_hz, th.intensities, [(400.0 - 1.35, 4.5), (400.0 + 1.35, 4.5)])


def test_transitions_record_is_read_only():
    t = simulate(SpinSystem((0.0,), ((0.0,),), (0.5,), ("1H",)), "1H")
    assert isinstance(t, Transitions) and t.isotope == "1H"
    with pytest.raises(ValueError):
        t.freqs_hz[0] = 1.0


# ----------------------------------------------------------------------------- bad input

@pytest.mark.parametrize("shifts,j,spins,fault", [
    ([0, 1], [[0, 5], [4, 0]], None, "not symmetric"),
    ([0, 1], [[0, 5, 1], [5, 0, 1]], None, "must be 2x2"),
    ([0, 1], [[0, 5], [5, 0]], [0.5, 0.7], "multiple of 1/2"),
    ([0, 1], [[0, 5], [5, 0]], [0.5, 0], "multiple of 1/2"),
    ([0, 1], [[0, 5], [5, 0]], [0.5], "2 nuclei"),
    ([0, float("nan")], [[0, 5], [5, 0]], None, "finite"),
    ([0, 1], [[1, 5], [5, 0]], None, "J[0][0]"),
    ([], [], None, "non-empty"),
])
def test_bad_input_is_one_line_input_error(shifts, j, spins, fault):
    with pytest.raises(InputError) as err:
        lines(shifts, j, spins)
    msg = str(err.value)
    assert fault in msg and "\n" not in msg


def test_too_large_system_is_refused_with_clear_message():
    n = 16                               # largest Fz block C(16, 8) = 12870 states
    rng = np.random.default_rng(3)
    jm = np.triu(rng.uniform(1, 10, (n, n)), 1)
    with pytest.raises(InputError, match=f"limit {MAX_BLOCK}"):
        lines(np.arange(n) * 17.0, jm + jm.T)


def test_unknown_observed_isotope_is_refused():
    system = SpinSystem((0.0,), ((0.0,),), (0.5,), ("1H",))
    with pytest.raises(InputError, match="19F"):
        simulate(system, "19F")


def test_json_spin_system_matches_analytic_ab():
    text = '{"shifts_hz": [1200.0, 1215.0], "j_hz": [[0, 7.5], [7.5, 0]]}'
    system = system_from_mapping(json.loads(text), record="ab.json")
    assert system.isotopes == ("1H", "1H") and system.spins == (0.5, 0.5)
    t = simulate(system, "1H")
    _assert_lines(t.freqs_hz, t.intensities, ab_analytic(1200.0, 1215.0, 7.5))


@pytest.mark.parametrize("data,fault", [
    ({"shifts_hz": [0, 1]}, "missing key j_hz"),
    ({"shifts_hz": [0, 1], "j_hz": [[0, 1], [1]]}, "J matrix"),
    ({"shifts_hz": [0, 1], "j_hz": [[0, 1], [1, 0]], "colour": 1}, "unknown key"),
    ([1, 2], "expected an object"),
    ({"shifts_hz": ["a", 1], "j_hz": [[0, 1], [1, 0]]}, "shifts must be numbers"),
])
def test_bad_json_spin_system(data, fault):
    with pytest.raises(InputError) as err:
        system_from_mapping(data, record="sys.json")
    assert fault in str(err.value) and str(err.value).startswith("sys.json:")


def test_decouple_accepts_single_isotope_name():
    system = SpinSystem((0.0, 3.0), ((0, 48.0), (48.0, 0)), (0.5, 0.5), ("1H", "19F"))
    assert len(simulate(system, "1H", decouple="19F").freqs_hz) == 1


def test_proton_with_eight_distinct_fluorines_is_first_order():
    # 1H coupled to eight inequivalent, mutually uncoupled 19F: 2^8 lines at
    # nu + sum(+-J_k/2), each 1/256 (first order is exact for J Iz Iz)
    import itertools
    js = [3.1, 5.7, 11.0, 17.3, 23.9, 31.1, 47.0, 52.6]
    n = len(js) + 1
    jm = np.zeros((n, n))
    jm[0, 1:] = jm[1:, 0] = js
    system = SpinSystem((0.0,) + tuple(100.0 * k for k in range(1, n)), jm, (0.5,) * n,
                        ("1H",) + ("19F",) * (n - 1))
    t = simulate(system, "1H")
    expected = [(sum(s * j / 2 for s, j in zip(signs, js)), 1 / 256)
                for signs in itertools.product((1, -1), repeat=len(js))]
    _assert_lines(t.freqs_hz, t.intensities, expected)


def test_two_proton_pairs_bridged_by_fluorine():
    # AB-X-CD: two 1H pairs that do not couple to each other, both coupled to one
    # 19F. Each pair is the AB part of an ABX system (PSB 1959), the union of both.
    j = np.zeros((5, 5))
    j[0, 1] = j[1, 0] = 9.0
    j[2, 3] = j[3, 2] = 13.0
    j[0, 4] = j[4, 0] = 6.0
    j[1, 4] = j[4, 1] = -2.0
    j[2, 4] = j[4, 2] = 4.0
    j[3, 4] = j[4, 3] = 30.0
    system = SpinSystem((100.0, 80.0, 400.0, 430.0, 5000.0), j, (0.5,) * 5,
                        ("1H",) * 4 + ("19F",))
    t = simulate(system, "1H")
    first, _ = abx_analytic(100.0, 80.0, 5000.0, 9.0, 6.0, -2.0)
    second, _ = abx_analytic(400.0, 430.0, 5000.0, 13.0, 4.0, 30.0)
    _assert_lines(t.freqs_hz, t.intensities, first + second)


def test_long_line_lists_merge_in_halves_like_one_pass(monkeypatch):
    # the two-thread merge must pool exactly like a plain pass over sorted lines (reference: the
    # test's own _pool); clusters lie within 1e-7 Hz, clusters apart by at least 1e-3 Hz
    import equivclass.simulate as simulate_module
    monkeypatch.setattr(simulate_module, "PARALLEL_MERGE_FROM", 10)
    rng = np.random.default_rng(3)
    centres = np.round(rng.uniform(-500, 500, 3000), 3)
    f = np.repeat(np.unique(centres), 3) + rng.uniform(0, 1e-7, 3 * np.unique(centres).size)
    runs = np.array_split(rng.permutation(f.size), 4)          # a few sorted runs, as the simulator makes
    f = np.concatenate([np.sort(f[r]) for r in runs])
    a = rng.uniform(0.1, 1.0, f.size)
    got_f, got_a = simulate_module._merge_halves(f, a)
    expected = _pool(zip(f, a), 1e-6)
    np.testing.assert_allclose(got_f, [x for x, _ in expected], rtol=0, atol=1e-9)
    np.testing.assert_allclose(got_a, [y for _, y in expected], rtol=1e-12)


def test_merge_in_halves_joins_a_group_cut_by_the_pivot(monkeypatch):
    # one chain of lines 5e-7 Hz apart is one group whatever the pivot (merge rule of the simulator:
    # neighbours closer than 1e-6 Hz pool, intensity-weighted); expected values from numpy directly
    import equivclass.simulate as simulate_module
    monkeypatch.setattr(simulate_module, "PARALLEL_MERGE_FROM", 10)
    f = np.arange(200) * 5e-7 + 42.0
    a = np.linspace(1.0, 2.0, 200)
    got_f, got_a = simulate_module._merge_halves(f, a)
    assert got_f.size == 1
    assert abs(got_a[0] - a.sum()) < 1e-12 and abs(got_f[0] - (f * a).sum() / a.sum()) < 1e-12
