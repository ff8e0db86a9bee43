"""The configurations the symmetry search keeps are the geometric ones.

Independent reference: RDKit's ETKDG distance-geometry embedding (fixed seeds) of the analysed
molecule. For every tagged tetrahedral centre of `stereo.configuration`, the sign of the signed volume
of its first three neighbours (in `Centre.nbrs` order) times `Centre.parity` must be one constant within
each molecule and kind of centre (what the symmetry search needs), and ideally one for the whole
program (one global handedness convention). For every double bond with specified
geometry, each `cis` pair of substituents must have a dihedral angle below 90° (same side) and each
other pair above 90°. Structures are textbook compounds; their SMILES are written from memory.
"""
from __future__ import annotations

import numpy as np
import pytest
from rdkit import Chem
from rdkit.Chem import AllChem, rdMolTransforms

import equivclass
from equivclass.stereo import configuration
from equivclass.structure import read_structure

MOLECULES = [
    ("L-alanine", "N[C@@H](C)C(=O)O"),
    ("L-threonine", "C[C@@H](O)[C@H](N)C(=O)O"),
    ("L-isoleucine", "CC[C@H](C)[C@H](N)C(=O)O"),
    ("D-glucose (pyranose)", "OC[C@H]1OC(O)[C@H](O)[C@@H](O)[C@@H]1O"),
    ("(-)-menthol", "CC(C)[C@@H]1CC[C@@H](C)C[C@H]1O"),
    ("(R)-carvone", "CC(=C)[C@@H]1CC=C(C)C(=O)C1"),
    ("(1R,2S)-ephedrine", "CN[C@@H](C)[C@H](O)c1ccccc1"),
    ("meso-tartaric acid", "O[C@H](C(=O)O)[C@@H](O)C(=O)O"),
    ("L-tartaric acid", "O[C@@H](C(=O)O)[C@H](O)C(=O)O"),
    ("trans-1,2-dimethylcyclopropane", "C[C@@H]1C[C@H]1C"),
    ("cis-1,2-dimethylcyclohexane", "C[C@@H]1CCCC[C@H]1C"),
    ("(R)-2-bromobutane", "CC[C@@H](C)Br"),
    ("bromochlorofluoromethane", "F[C@H](Cl)Br"),
    ("(R)-1-phenylethanol", "C[C@@H](O)c1ccccc1"),
    ("(S)-nicotine", "CN1CCC[C@H]1c1cccnc1"),
    ("(R)-limonene", "CC1=CC[C@@H](CC1)C(C)=C"),
    ("(R)-glyceraldehyde", "OC[C@@H](O)C=O"),
    ("(+)-camphor", "CC1(C)[C@@H]2CC[C@@]1(C)C(=O)C2"),
    ("cholesterol", "C[C@H](CCCC(C)C)[C@H]1CC[C@H]2[C@@H]3CC=C4C[C@@H](O)CC[C@]4(C)[C@H]3CC[C@]12C"),
    ("(S)-methyl p-tolyl sulfoxide", "C[S@@](=O)c1ccc(C)cc1"),
    ("(R)-methylphenylpropylphosphine", "CCC[P@](C)c1ccccc1"),
    ("chiral silane", "C[Si@](CC)(c1ccccc1)c1cccc2ccccc12"),
    ("(E)-2-butene", "C/C=C/C"),
    ("(Z)-2-butene", "C/C=C\\C"),
    ("(E)-stilbene", "c1ccccc1/C=C/c1ccccc1"),
    ("maleic acid", "OC(=O)/C=C\\C(=O)O"),
    ("fumaric acid", "OC(=O)/C=C/C(=O)O"),
    ("(Z)-1,2-difluoroethene", "F/C=C\\F"),
    ("(E)-1-chloro-2-fluoroethene", "F/C=C/Cl"),
    ("methyl (E)-crotonate", "C/C=C/C(=O)OC"),
    ("sorbic acid (2E,4E)", "C/C=C/C=C/C(=O)O"),
    ("(E)-cinnamaldehyde", "O=C/C=C/c1ccccc1"),
    ("geranial", "CC(C)=CCC/C(C)=C/C=O"),
    ("oleic acid", "CCCCCCCC/C=C\\CCCCCCCC(=O)O"),
    ("(E)-acetophenone oxime", "C/C(=N\\O)c1ccccc1"),
    ("(2R,3Z)-pent-3-en-2-ol", "C[C@@H](O)/C=C\\C"),
]

SEEDS = (11, 2024)


def _embedded(mol):
    m = Chem.Mol(mol)
    assert AllChem.EmbedMolecule(m, randomSeed=SEEDS[0]) == 0 or \
        AllChem.EmbedMolecule(m, randomSeed=SEEDS[1], useRandomCoords=True) == 0
    return m


def _signed_volume_sign(pos, c, nbrs) -> int:
    v = np.array([pos[x] - pos[c] for x in nbrs[:3]])
    return 1 if np.linalg.det(v) > 0 else -1


def _relations(name, smiles):
    mol = read_structure(smiles).mol
    conf = configuration(mol)
    m = _embedded(mol)
    pos = m.GetConformer().GetPositions()
    out = []
    for c in conf.centres:
        if mol.GetAtomWithIdx(c.atom).GetChiralTag() == Chem.ChiralType.CHI_UNSPECIFIED:
            continue
        out.append((name, c.atom, len(c.nbrs), _signed_volume_sign(pos, c.atom, c.nbrs) * c.parity))
    return out


def test_every_listed_stereocentre_is_seen():
    """The list has real stereo: each tagged input centre becomes a tagged Centre."""
    n_tagged = 0
    for name, smi in MOLECULES:
        src = Chem.MolFromSmiles(smi)
        want = sum(a.GetChiralTag() != Chem.ChiralType.CHI_UNSPECIFIED for a in src.GetAtoms())
        got = len(_relations(name, smi))
        assert got == want, name
        n_tagged += got
    assert n_tagged >= 30


POLYCYCLIC_SULFOXIDE = ("decalinyl methyl sulfoxide", "C[S@@](=O)[C@H]1CC[C@H]2CCCC[C@@H]2C1")


def test_parity_matches_signed_volume_within_each_molecule():
    """What the symmetry search needs: inside one molecule, one relation per kind of centre.

    Centres are only ever mapped onto centres of the same degree (the graph colouring includes the
    degree), so a relation constant per molecule and neighbour count makes every parity test exact.
    """
    for name, smi in [*MOLECULES, POLYCYCLIC_SULFOXIDE]:
        by_kind = {}
        for _, atom, k, sign in _relations(name, smi):
            by_kind.setdefault(k, set()).add(sign)
        for k, signs in by_kind.items():
            assert len(signs) == 1, f"{name}: parities of {k}-neighbour centres disagree with geometry"


def test_parity_convention_is_one_for_the_whole_program():
    rel = [r for name, smi in [*MOLECULES, POLYCYCLIC_SULFOXIDE] for r in _relations(name, smi)]
    signs = [r[3] for r in rel]
    usual = max(set(signs), key=signs.count)
    odd = [f"{n} atom {a} ({k} neighbours)" for n, a, k, s in rel if s != usual]
    assert not odd, "parity and geometry disagree at: " + ", ".join(odd)


def test_relation_holds_on_a_second_embedding():
    """Geometry from a different seed gives the same relation at every centre (not one lucky conformer)."""
    first = {(n, a): s for name, smi in MOLECULES for n, a, k, s in _relations(name, smi)}
    for name, smi in MOLECULES:
        mol = read_structure(smi).mol
        m = Chem.Mol(mol)
        assert AllChem.EmbedMolecule(m, randomSeed=SEEDS[1]) == 0
        pos = m.GetConformer().GetPositions()
        for c in configuration(mol).centres:
            if mol.GetAtomWithIdx(c.atom).GetChiralTag() != Chem.ChiralType.CHI_UNSPECIFIED:
                assert _signed_volume_sign(pos, c.atom, c.nbrs) * c.parity == first[(name, c.atom)], name


def test_enantiomers_have_opposite_parities():
    """Mirror-image SMILES give the opposite parity at every centre (common practice)."""
    for smi, mirror in (("N[C@@H](C)C(=O)O", "N[C@H](C)C(=O)O"), ("C[S@@](=O)c1ccccc1", "C[S@](=O)c1ccccc1")):
        a = {c.atom: c for c in configuration(read_structure(smi).mol).centres}
        b = {c.atom: c for c in configuration(read_structure(mirror).mol).centres}
        tagged = [i for i in a if read_structure(smi).mol.GetAtomWithIdx(i).GetChiralTag() !=
                  Chem.ChiralType.CHI_UNSPECIFIED]
        assert tagged
        for i in tagged:
            assert a[i].nbrs == b[i].nbrs and a[i].parity == -b[i].parity


@pytest.mark.parametrize("name, smiles", [m for m in MOLECULES if "/" in m[1] or "\\" in m[1]])
def test_double_bond_cis_pairs_are_on_one_side(name, smiles):
    mol = read_structure(smiles).mol
    conf = configuration(mol)
    m = _embedded(mol)
    c = m.GetConformer()
    checked = 0
    for p in conf.planar:
        if p.kind != "double":
            continue
        bond = mol.GetBondBetweenAtoms(p.a, p.b)
        if bond.GetStereo() == Chem.BondStereo.STEREONONE:
            continue
        for x in p.subs_a:
            for y in p.subs_b:
                dih = abs(rdMolTransforms.GetDihedralDeg(c, x, p.a, p.b, y))
                if frozenset((x, y)) in p.cis:
                    assert dih < 90, f"{name}: atoms {x},{y} called cis but dihedral {dih:.0f}°"
                else:
                    assert dih > 90, f"{name}: atoms {x},{y} called trans but dihedral {dih:.0f}°"
                checked += 1
    assert checked >= 1, f"{name}: no specified double bond found"


def test_known_geometries_by_element():
    """Textbook: in maleic acid the carboxyl carbons are cis, in fumaric acid trans."""
    for smi, want_cis in (("OC(=O)/C=C\\C(=O)O", True), ("OC(=O)/C=C/C(=O)O", False)):
        mol = read_structure(smi).mol
        p = next(p for p in configuration(mol).planar if p.kind == "double")
        carboxyl = [i for i in (*p.subs_a, *p.subs_b) if mol.GetAtomWithIdx(i).GetAtomicNum() == 6]
        assert (frozenset(carboxyl) in p.cis) == want_cis


@pytest.mark.parametrize("smiles", ["C1CCC2OC2C1", "C1CCC2CC2C1", "C1CC2OC2C1"])
def test_unspecified_three_ring_fusion_is_cis(smiles):
    """A three-membered ring fused to a five- or six-membered ring can only be cis-fused (common
    practice: trans-bicyclo[4.1.0]heptane and smaller cannot close), so the two fusion H must be cis:
    the oxirane/cyclopropane cis rule or a Karplus value, never the trans rule."""
    d = equivclass.analyze(smiles).to_dict()
    fusion = [a.GetIdx() for a in Chem.MolFromSmiles(smiles).GetAtoms()
              if a.IsInRingSize(3) and a.GetDegree() == 3]
    hs = {a: s["index"] for s in d["sets"] for a in s["atoms"]}
    mol = Chem.AddHs(Chem.MolFromSmiles(smiles))
    fusion_h = [n.GetIdx() for c in fusion for n in mol.GetAtomWithIdx(c).GetNeighbors() if n.GetAtomicNum() == 1]
    assert len(fusion_h) == 2
    rules = [cp["j_basis"] for s in d["sets"] if s["index"] == hs[fusion_h[0]] for cp in s["couplings"]
             if cp["to_set"] == hs[fusion_h[1]]]
    assert rules and not any("trans" in r for r in rules), rules
    assert not any("no conformer" in w for w in d["warnings"]), d["warnings"]
