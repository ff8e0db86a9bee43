"""Predicted spectrum of a structure (equivclass.predicted_spectrum) against outside references.

References: first-order (binomial) multiplets and the weak-coupling limit, Pople, Schneider &
Bernstein, High-resolution NMR (1959) ch. 6 and any NMR textbook; the sum rule Tr(F+F-) gives one
unit per observed nucleus (same source); nucleus counts come from RDKit's own atom table.
"""
import math

import numpy as np
import pytest
from rdkit import Chem

from equivclass.analysis import analyze
from equivclass.errors import InputError
from equivclass.predicted_spectrum import predict, spectrum_of


def _clusters(freqs, amps, tol=0.05):
    """Group lines closer than ``tol`` Hz (second-order splittings far below the line width)."""
    out = []
    for f, a in sorted(zip(freqs, amps)):
        if out and f - out[-1][2] < tol:
            out[-1][0] += f * a
            out[-1][1] += a
            out[-1][2] = f
        else:
            out.append([f * a, a, f])
    return [(m / w, w) for m, w, _ in out]


def _near(pred, centre_hz, width_hz, tol=0.05):
    f = np.asarray(pred.transitions.freqs_hz)
    a = np.asarray(pred.transitions.intensities)
    sel = np.abs(f - centre_hz) < width_hz
    return _clusters(f[sel], a[sel], tol)


def _set_with(report, n_atoms, isotope="1H", near_ppm=None):
    for s in report.to_dict()["sets"]:
        if s["isotope"] == isotope and len(s["atoms"]) == n_atoms and (
                near_ppm is None or abs(s["shift_ppm"] - near_ppm) < 1.0):
            return s
    raise AssertionError("set not found")


def test_weak_coupling_limit_ethyl_acetate_quartet():
    # At 99 000 MHz (just below the analysis' field limit of 1e5 MHz) every Δν >> J: the exact lines must equal the first-order quartet
    # (binomial 1:3:3:1, lines J apart; PSB 1959 ch. 6).
    r = analyze("CCOC(C)=O", mhz=99000.0)
    ch2 = _set_with(r, 2, near_ppm=4.0)
    pred = spectrum_of(r)
    centre = ch2["shift_ppm"] * pred.observe_mhz
    lines = _near(pred, centre, 60.0)
    assert len(lines) == 4
    j = 7.0  # the report's vicinal estimate; the pattern is checked against its own first-order list
    expected = ch2["lines"]
    for (f, a), (off, w) in zip(lines, expected):
        assert f - centre == pytest.approx(off, abs=0.01)
        assert a == pytest.approx(w * 2, rel=1e-3)
    offsets = [f - centre for f, _ in lines]
    assert np.allclose(np.diff(offsets), ch2["j_hz"][0], atol=0.01)
    assert abs(ch2["j_hz"][0] - j) < 3.0
    binom = [math.comb(3, k) / 8 * 2 for k in range(4)]          # 1:3:3:1, 2 protons
    assert np.allclose([a for _, a in lines], binom, rtol=1e-3)


@pytest.mark.parametrize("smiles", ["CCOC(C)=O", "Cc1ccccc1", "CC(C)Cl", "c1ccncc1",
                                    "CC(C)Cc1ccc(cc1)C(C)C(=O)O", "OC(=O)C=CC(=O)O", "CCN(CC)CC"])
def test_sum_rule_counts_protons(smiles):
    # total intensity = number of observed nuclei (sum rule, PSB 1959); count from RDKit
    r = analyze(smiles)
    n_h = sum(1 for a in Chem.AddHs(Chem.MolFromSmiles(smiles)).GetAtoms() if a.GetAtomicNum() == 1)
    pred = spectrum_of(r)
    assert pred.total_intensity == pytest.approx(n_h, rel=1e-6)
    assert pred.observed_nuclei == n_h


def test_sum_rule_fluorine_and_carbon():
    smiles = "Fc1ccc(F)c(F)c1"
    mol = Chem.MolFromSmiles(smiles)
    pred = predict(smiles, observe="19F")
    assert pred.total_intensity == pytest.approx(sum(a.GetSymbol() == "F" for a in mol.GetAtoms()), rel=1e-6)
    pred = predict("CCOC(C)=O", observe="13C")
    assert pred.total_intensity == pytest.approx(4, rel=1e-9)      # four carbons, each its own set
    assert len(pred.transitions.freqs_hz) == 4                      # dilute 13C: singlets
    assert any("dilute" in n for n in pred.notes)


def test_trifluoroethanol_ch2_quartet_and_19f_decoupling():
    # 3J(H,F) of CF3CH2 splits the CH2 into a 1:3:3:1 quartet; broadband 19F decoupling collapses it
    # to a singlet (common practice).
    r = analyze("OCC(F)(F)F")
    ch2 = _set_with(r, 2)
    coupled = spectrum_of(r)
    centre = ch2["shift_ppm"] * coupled.observe_mhz
    q = _near(coupled, centre, 40.0)
    assert len(q) == 4
    assert np.allclose([a for _, a in q], [math.comb(3, k) / 8 * 2 for k in range(4)], rtol=1e-6)
    step = np.diff([f for f, _ in q])
    assert np.allclose(step, step[0]) and 6.0 < step[0] < 12.0     # 3J(H,F) ~ 8 Hz (textbook range)
    dec = spectrum_of(r, decouple=("19F",))
    s = _near(dec, centre, 40.0)
    assert len(s) == 1 and s[0][1] == pytest.approx(2.0) and s[0][0] == pytest.approx(centre)
    assert dec.total_intensity == pytest.approx(3.0)


def test_diethyl_ether_copies():
    r = analyze("CCOCC")
    pred = spectrum_of(r)
    assert pred.total_intensity == pytest.approx(10.0, rel=1e-6)
    assert [f.copies for f in pred.fragments] == [2]
    ch2 = _set_with(r, 4)
    # at 400 MHz the A3X2 lines carry second-order splittings of ~0.1 Hz (J^2/Δν), far below the
    # 1 Hz line width: grouped within 0.5 Hz they are the first-order quartet
    q = _near(pred, ch2["shift_ppm"] * pred.observe_mhz, 40.0, tol=0.5)
    assert len(q) == 4
    assert np.allclose([a for _, a in q], [math.comb(3, k) / 8 * 4 for k in range(4)], rtol=5e-2)
    # roof effect: the lines nearer the CH3 partner (lower frequency) are the stronger ones (common practice)
    assert q[0][1] > q[3][1] and q[1][1] > q[2][1]


def test_spin_one_partner_gives_trinomial_quintet():
    # CHD2Cl: the proton is split by two deuterons (I = 1) into 2nI+1 = 5 lines 1:2:3:2:1
    # (coefficients of (1+x+x^2)^2; common practice).
    pred = predict("[2H]C([2H])Cl", nuclei="1H,2H")
    a = np.asarray(pred.transitions.intensities)
    assert len(a) == 5
    assert np.allclose(a / a.min(), [1, 2, 3, 2, 1], rtol=1e-6)
    assert pred.total_intensity == pytest.approx(1.0)


def test_first_order_fallback_above_block_limit():
    r = analyze("CCOC(C)=O")
    pred = spectrum_of(r, max_block=1)
    assert any(f.method == "first order" for f in pred.fragments)
    assert any("first-order" in n for n in pred.notes)
    assert pred.total_intensity == pytest.approx(8.0)
    ch2 = _set_with(r, 2, near_ppm=4.0)
    centre = ch2["shift_ppm"] * pred.observe_mhz
    q = _near(pred, centre, 40.0)
    assert np.allclose([f - centre for f, _ in q], [off for off, _ in ch2["lines"]], atol=1e-6)
    assert np.allclose([a for _, a in q], [math.comb(3, k) / 8 * 2 for k in range(4)])


def test_exchange_decoupled_oh_is_singlet():
    r = analyze("CCO")
    pred = spectrum_of(r)
    oh = [s for s in r.to_dict()["sets"] if s["exchange_decoupled"]][0]
    lines = _near(pred, oh["shift_ppm"] * pred.observe_mhz, 3.0)
    assert lines == [(pytest.approx(oh["shift_ppm"] * pred.observe_mhz), pytest.approx(1.0))]


def test_bad_requests():
    r = analyze("CCO")
    with pytest.raises(InputError, match="no 19F"):
        spectrum_of(r, observe="19F")
    with pytest.raises(InputError, match="cannot also be decoupled"):
        spectrum_of(r, observe="1H", decouple="1H")
    with pytest.raises(InputError):
        spectrum_of(r, observe="Xx")
