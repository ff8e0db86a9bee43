"""First-order multiplets, integrals and satellites checked against combinatorics, handbook ranges and
textbook examples.

References: Pascal's triangle (math.comb) for spin-1/2 partners; the polynomial (1 + x + x^2)^n from
numpy.polynomial for spin-1 partners (textbook rule 2nI+1 lines, e.g. H. Günther, "NMR Spectroscopy",
3rd ed. 2013, ch. 4); typical J ranges from E. Pretsch et al., "Structure Determination of Organic
Compounds", 4th ed. 2009 (H-H tables, recalled from memory); natural abundances from the periodictable
package (an independent reference library).
"""

import math

import numpy as np
import periodictable
import pytest
from numpy.polynomial import polynomial as P

import equivclass
from rdkit import Chem
from equivclass.multiplets import Multiplet, annotate, first_order_lines, multiplicity_name, spin_pattern


def _run(smiles, **kw):
    rep = equivclass.analyze(smiles, **kw)
    d = rep.to_dict()
    return d, annotate(d, rep.mol)


def _by_shift(d, m, ppm, tol=0.02, isotope="1H"):
    hits = [s["index"] for s in d["sets"] if s["isotope"] == isotope and abs(s["shift_ppm"] - ppm) <= tol]
    assert len(hits) == 1, (ppm, [(s["index"], s["shift_ppm"]) for s in d["sets"]])
    return m[hits[0]]


@pytest.mark.parametrize("n", range(1, 9))
def test_binomial_intensities_match_pascal(n):
    # Pascal's triangle: n equivalent spin-1/2 partners give n+1 lines with intensities C(n, k)
    ref = np.array([math.comb(n, k) for k in range(n + 1)], float)
    assert np.allclose(spin_pattern(0.5, n), ref / ref.sum())
    lines = first_order_lines([(7.0, 0.5, n)])
    assert len(lines) == n + 1
    assert np.allclose([w for _, w in lines], ref / ref.sum())
    # line spacing J, centred on the shift
    assert np.allclose([p for p, _ in lines], [(k - n / 2) * 7.0 for k in range(n + 1)])


@pytest.mark.parametrize("n", range(1, 5))
def test_spin1_partners_follow_polynomial_expansion(n):
    # 2nI+1 lines with the coefficients of (1 + x + x^2)^n for n spin-1 partners (numpy.polynomial)
    ref = P.polypow([1, 1, 1], n)
    lines = first_order_lines([(2.0, 1.0, n)])
    assert len(lines) == 2 * n + 1
    assert np.allclose([w for _, w in lines], ref / ref.sum())


def test_one_and_two_deuterons_textbook_patterns():
    # textbook: one D gives 1:1:1, two D give 1:2:3:2:1 (Günther ch. 4)
    assert np.allclose(spin_pattern(1.0, 1) * 3, [1, 1, 1])
    assert np.allclose(spin_pattern(1.0, 2) * 9, [1, 2, 3, 2, 1])
    # spin 3/2 (e.g. 11B): one partner gives four equal lines
    assert np.allclose(spin_pattern(1.5, 1) * 4, [1, 1, 1, 1])


def test_chd2_reads_as_quintet():
    # CHD2 group of acetone-d2-like CHD2C(O)CH3: the proton couples to two equivalent D -> 1:2:3:2:1
    d, m = _run("[2H]C([2H])C(=O)C")
    chd2 = next(m[s["index"]] for s in d["sets"] if s["isotope"] == "1H" and len(s["atoms"]) == 1)
    assert chd2.multiplicity == "quint"
    assert np.allclose([w for _, w in chd2.lines], np.array([1, 2, 3, 2, 1]) / 9)
    # 2J(H,D) = 2J(H,H) * gamma(2H)/gamma(1H) ~ 12.5 * 0.1535 ~ 1.9 Hz (geminal 10-15 Hz, Pretsch)
    assert 1.5 <= chd2.j_hz[0] <= 2.3


def test_ethyl_acetate_quartet_triplet_singlet_at_400():
    # textbook example (and the issue's): ethyl ester CH2 q, CH3 t, J ~ 7 Hz (vicinal 6-8 Hz, Pretsch)
    d, m = _run("CCOC(C)=O", mhz=400)
    ch2 = _by_shift(d, m, 4.12)
    ch3 = _by_shift(d, m, 1.26)
    acetyl = _by_shift(d, m, 2.05)
    assert (ch2.multiplicity, ch3.multiplicity, acetyl.multiplicity) == ("q", "t", "s")
    assert (ch2.integral, ch3.integral, acetyl.integral) == (2, 3, 3)
    assert 6.0 <= ch2.j_hz[0] <= 8.0 and ch2.j_hz == ch3.j_hz
    assert ch2.reason == ch3.reason == acetyl.reason == ""
    assert np.allclose([w for _, w in ch2.lines], np.array([1, 3, 3, 1]) / 8)


def test_isopropyl_methine_is_septet():
    # 2-chloropropane: CH septet (six equivalent CH3 protons), CH3 doublet of 6H (textbook example)
    d, m = _run("CC(C)Cl")
    ch = _by_shift(d, m, d["sets"][1]["shift_ppm"])
    me = _by_shift(d, m, d["sets"][0]["shift_ppm"])
    assert ch.multiplicity == "sept" and ch.integral == 1
    assert me.multiplicity == "d" and me.integral == 6
    assert np.allclose([w for _, w in ch.lines], np.array([math.comb(6, k) for k in range(7)]) / 64)


def test_aa_bb_prime_system_is_m_with_reason():
    # 1-bromo-2-chloroethane is the textbook AA'BB'/AA'XX' case: no first-order pattern
    d, m = _run("BrCCCl")
    assert all(x.multiplicity == "m" for x in m.values())
    assert all("magnetically inequivalent" in x.reason for x in m.values())


def test_strongly_coupled_vinyl_is_m():
    # acrylonitrile: three vinyl protons within about 0.5 ppm (measured 5.6-6.3 ppm) are an ABC system
    # at 60 MHz, |delta nu| < 10 J (common practice criterion); each set reads m and says why
    d, m = _run("C=CC#N", mhz=60)
    assert all(x.multiplicity == "m" and "strongly coupled" in x.reason for x in m.values())
    # well above the field where the engine calls the fragment first order: three dd (AMX)
    field = d["fragments"][0]["first_order_above_mhz"]
    d, m = _run("C=CC#N", mhz=max(400.0, 2 * field))
    assert all(x.multiplicity == "dd" for x in m.values())


def test_ethyl_crotonate_doublets_of_quartets():
    # (E)-ethyl crotonate, as usually reported: H3 dq (J ~ 15.5, 6.9 Hz), H2 dq (J ~ 15.5, 1.7 Hz),
    # CH3 dd (J ~ 6.9, 1.7 Hz) (values recalled from memory of experimental sections); the trans
    # vinyl coupling lies in the handbook range 14-19 Hz (Pretsch)
    d, m = _run("C/C=C/C(=O)OCC")
    h3 = _by_shift(d, m, d["sets"][4]["shift_ppm"])
    h2 = _by_shift(d, m, d["sets"][3]["shift_ppm"])
    me = _by_shift(d, m, d["sets"][1]["shift_ppm"])
    assert (h3.multiplicity, h2.multiplicity, me.multiplicity) == ("dq", "dq", "dd")
    assert 14 <= h3.j_hz[0] <= 19 and 6 <= h3.j_hz[1] <= 8
    assert 0.5 <= h2.j_hz[1] <= 3  # allylic 4J, Pretsch 0.5-3 Hz
    assert len(h3.lines) == 8


def test_dt_and_td_names_and_lines():
    # naming by falling J (common practice): big doublet of small triplets = dt, the reverse = td
    dt = [(10.0, 0.5, 1), (3.0, 0.5, 2)]
    td = [(7.0, 0.5, 2), (2.0, 0.5, 1)]
    assert multiplicity_name(dt) == "dt" and multiplicity_name(td) == "td"
    assert multiplicity_name([(8.0, 0.5, 1), (5.0, 0.5, 1), (2.0, 0.5, 1)]) == "ddd"
    assert multiplicity_name([]) == "s"
    # dt lines: +-5 Hz each split into 1:2:1 at +-3 Hz (explicit enumeration of spin states)
    ref = {}
    for s1 in (-0.5, 0.5):
        for s2 in (-0.5, 0.5):
            for s3 in (-0.5, 0.5):
                pos = 10.0 * s1 + 3.0 * (s2 + s3)
                ref[pos] = ref.get(pos, 0) + 1 / 8
    got = dict(first_order_lines(dt))
    assert set(got) == set(ref) and all(abs(got[k] - ref[k]) < 1e-12 for k in ref)


def test_equal_j_groups_merge_into_quintet():
    # two CH2 neighbours at the same 7 Hz give a quintet (common practice)
    assert multiplicity_name([(7.0, 0.5, 2), (7.05, 0.5, 2)]) == "quint"
    assert multiplicity_name([(7.0, 0.5, 2), (6.0, 0.5, 2)]) == "tt"


def test_labile_oh_is_broad_singlet():
    d, m = _run("CO")
    oh = next(m[s["index"]] for s in d["sets"] if s["exchange_decoupled"])
    assert oh.multiplicity == "br s" and oh.integral == 1


def test_tetramethylsilane_satellites():
    # TMS: 29Si satellites 2J(Si,H) ~ 6.6 Hz and 13C satellites 1J(C,H) ~ 118 Hz (values recalled from
    # memory of Günther ch. 10); abundances against the periodictable package
    d, m = _run("C[Si](C)(C)C")
    tms = m[0]
    assert tms.multiplicity == "s" and tms.integral == 12
    sat = {s["isotope"]: s for s in tms.satellites}
    assert set(sat) == {"29Si", "13C"}
    assert abs(sat["29Si"]["j_hz"] - 6.6) < 0.5
    assert abs(sat["13C"]["j_hz"] - 118) < 3
    assert abs(sat["29Si"]["abundance_pct"] - periodictable.Si[29].abundance) < 0.05
    assert abs(sat["13C"]["abundance_pct"] - periodictable.C[13].abundance) < 0.05
    for iso, s in sat.items():
        # one satellite pair at +-J/2, each with abundance/2 of the signal
        p = s["abundance_pct"] / 100
        assert [pos for pos, _ in s["lines"]] == pytest.approx([-s["j_hz"] / 2, s["j_hz"] / 2])
        assert all(w == pytest.approx(p / 2) for _, w in s["lines"])


def test_no_satellites_from_labelled_or_absent_isotopes():
    # neopentane has 13C satellites only: no silicon, tin or platinum nearby
    d, m = _run("CC(C)(C)C")
    assert {s["isotope"] for s in m[0].satellites} == {"13C"}
    # 1J(C,H) of an sp3 CH3 lies in the handbook range 120-135 Hz (Pretsch 13C-1H)
    assert 120 <= m[0].satellites[0]["j_hz"] <= 135


def test_multiplet_record_is_frozen():
    d, m = _run("CCOC(C)=O")
    x = next(iter(m.values()))
    assert isinstance(x, Multiplet)
    with pytest.raises(Exception):
        x.multiplicity = "s"


@pytest.mark.parametrize("smiles, heavy, multiplicity", [
    # Et3PO: CH3 dt (3J(P,H) about 17-20 Hz, 3J(H,H) about 7.5 Hz), CH2 dq (Pretsch 1H/31P tables and
    # SDBS-type spectra, recalled from memory). The three ethyl groups do not couple to one another, so
    # their magnetic inequivalence ([A3M2]3X) does not show (Günther ch. 5: only couplings between the
    # inequivalent nuclei, J(AA'), make an AA'XX'-type pattern second order).
    ("CCP(=O)(CC)CC", 0, "dt"),
    ("CCP(=O)(CC)CC", 1, "dq"),
    # triethyl phosphate: CH3 td (3J(H,H) 7.1, 4J(P,H) about 1 Hz; recalled from memory)
    ("CCOP(=O)(OCC)OCC", 0, "td"),
    # 3-pentanol: the two methyls are magnetically inequivalent but uncoupled: a triplet (common practice)
    ("CCC(O)CC", 0, "t"),
])
def test_uncoupled_magnetic_subsets_give_first_order_patterns(smiles, heavy, multiplicity):
    d = equivclass.analyze(smiles).to_dict()
    mol = Chem.AddHs(Chem.MolFromSmiles(smiles))
    hs = {n.GetIdx() for n in mol.GetAtomWithIdx(heavy).GetNeighbors() if n.GetAtomicNum() == 1}
    s = next(s for s in d["sets"] if hs & set(s["atoms"]))
    assert s["multiplicity"] == multiplicity, (s["multiplicity"], s.get("reason"))
    frag = d["fragments"][s["fragment"]]
    assert frag["magnetically_inequivalent"] and not frag["subsets_coupled"]


def test_coupled_magnetic_subsets_stay_second_order():
    """1-bromo-2-chloroethane is AA'XX' (Günther ch. 5): the geminal coupling joins the two magnetic
    subsets of each CH2, so no first-order field exists."""
    d = equivclass.analyze("ClCCBr").to_dict()
    frag = d["fragments"][0]
    assert frag["subsets_coupled"] and frag["first_order_above_mhz"] is None
