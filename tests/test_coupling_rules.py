"""Coupling estimates against the typical ranges of the handbook tables.

Ranges as recalled from memory of H. Günther, NMR Spectroscopy, 3rd ed., ch. 4 (H–H couplings) and of
E. Pretsch et al., Structure Determination of Organic Compounds (H–H, H–F, H–P tables).
"""
import pytest

import equivclass


def _j(smiles, a_elem_parent, b_elem_parent, **opts):
    """All |J| between protons whose parents are the given heavy-atom indices."""
    r = equivclass.analyze(smiles, **opts)
    mol = r.mol

    def parent(h):
        return mol.GetAtomWithIdx(h).GetNeighbors()[0].GetIdx()
    out = []
    for c in r.couplings:
        a, b = c.atoms
        if mol.GetAtomWithIdx(a).GetAtomicNum() != 1 or mol.GetAtomWithIdx(b).GetAtomicNum() != 1:
            continue
        if {parent(a), parent(b)} == {a_elem_parent, b_elem_parent} or \
                (a_elem_parent == b_elem_parent and parent(a) == parent(b) == a_elem_parent):
            out.append(c.j_hz)
    return out


def test_cyclopropane_geminal_and_vicinal():
    # Günther ch. 4: cyclopropane 2J about -4 to -9 Hz, 3J(cis) 7-13 > 3J(trans) 4-9 Hz
    gem = _j("OC(=O)C1CC1", 4, 4)
    assert gem and all(-9 <= j <= -3 for j in gem)
    vic = sorted(_j("OC(=O)C1CC1", 3, 4))
    assert min(vic) >= 4 and max(vic) <= 13 and max(vic) > min(vic)


def test_oxirane_couplings_are_small():
    # Günther ch. 4: oxirane 2J +4 to +6.5, 3J(cis) 2-5, 3J(trans) 1-3.5 Hz
    gem = _j("CC1CO1", 2, 2)
    assert gem and all(4 <= j <= 6.5 for j in gem)
    vic = _j("CC1CO1", 1, 2)
    assert vic and all(1 <= j <= 5 for j in vic)


def test_allene_four_bond_coupling_is_large():
    # Günther ch. 4: 4J(H,H) across an allene about -6 to -7 Hz (much larger than allylic 4J)
    vic = _j("CC=C=C", 1, 3)
    assert vic and all(-7.5 <= j <= -5.5 for j in vic)


@pytest.mark.parametrize("smiles,p1,p2,lo,hi", [
    # Pretsch H-H tables: furan J25 1.3-2, J24 0.5-1; thiophene J25 2.5-3.5, J24 1-1.5; pyridine J26 ~0
    ("c1ccoc1", 2, 4, 1.2, 2.0),      # furan H2-H5 (C2 and C4 flank the oxygen O3)
    ("c1ccoc1", 0, 2, 0.4, 1.1),      # furan H2-H4
    ("c1ccsc1", 2, 4, 2.4, 3.6),      # thiophene H2-H5
    ("c1ccsc1", 0, 2, 0.9, 1.6),      # thiophene H2-H4
    ("c1ccncc1", 0, 1, 7.0, 9.0),     # pyridine J34 (C0 = C4 ... C1 = C3)
    ("c1ccncc1", 2, 4, 0.0, 0.5),     # pyridine J26 below threshold: no coupling listed
])
def test_heteroaromatic_couplings(smiles, p1, p2, lo, hi):
    js = _j(smiles, p1, p2)
    if hi <= 0.5:
        assert not js or all(abs(j) <= hi for j in js)
    else:
        assert js and all(lo <= abs(j) <= hi for j in js)


def test_ring_vicinal_couplings_follow_karplus():
    # trans-4-tert-butylcyclohexanol (locked chair): H1 axial, so 3J(H1,H2ax) 10-13 Hz and
    # 3J(H1,H2eq) 2-5 Hz (Günther ch. 4, Karplus relation; common practice for assigning axial H)
    js = sorted(abs(j) for j in _j("O[C@H]1CC[C@H](C(C)(C)C)CC1", 1, 2))
    assert js[0] <= 5.5 and js[-1] >= 9.5
