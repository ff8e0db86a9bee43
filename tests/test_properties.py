"""Invariance properties of the analysis (facts of symmetry, common practice):

* renumbering the input atoms changes no result (the answer belongs to the molecule, not the drawing);
* in an achiral medium the mirror image gives the same result (enantiomers have identical spectra);
* in a chiral medium enantiotopic nuclei become distinct (Mislow–Raban: ethanol CH2, glycerol CH2OH).

Results are compared in a numbering-free form: per set the isotope, size, number of magnetic subsets,
topicity, and the parent heavy atoms of its members mapped back to the original numbering.
Molecules: textbook structures written from memory, plus the first stereo-bearing entries of the NCI
set shipped with RDKit (Data/NCI/first_5K.smi).
"""
from __future__ import annotations

import os
import random

import pytest
from rdkit import Chem, RDConfig

import equivclass

OWN = [
    "CC(O)C(=O)O", "N[C@@H](C)C(=O)O", "O[C@H](C(=O)O)[C@@H](O)C(=O)O", "O[C@@H](C(=O)O)[C@H](O)C(=O)O",
    "C[C@@H]1CCCC[C@H]1C", "C[C@@H]1CCCC[C@@H]1C", "C[C@H](Cl)[C@@H](C)Cl", "C[C@H](Cl)[C@H](C)Cl",
    "Fc1ccc(Cl)cc1", "Clc1ccccc1Cl", "c1ccc2ccccc2c1", "CC(=O)N(C)C", "CNC(=O)c1ccccc1", "CC(=O)NCC",
    "F/C=C/F", "F/C=C\\F", "FC(F)=C", "C/C=C/C(=O)OC", "FC(F)=CCl", "CCOCC", "CC(C)(C)c1ccc(O)cc1",
    "C1CCOC1", "O=C1CCCCC1", "CCC(C)CC", "OCC(O)CO", "CC(C)C[C@H](N)C(=O)O", "FC(F)(F)c1ccccc1",
    "C[C@@H](O)c1ccccc1", "C1CC2CCC1CC2", "CC1(C)CCCC1O", "C[C@@H]1C[C@H](C)C[C@@H](C)C1",
    "OP(=O)(OCC)OCC", "C/C(=N/O)c1ccccc1",
    # allene axes, fused three-membered rings, a bridgehead amine, open E/Z and an open pseudo-asymmetric
    # centre: configurations the program chooses itself must not depend on the atom order
    "CC(F)=C=CCC=C=C(F)C", "CC=C=CCC=C=CC", "CC(C)C=C=CC", "C1CCCC2OC2C1", "C1CCC2OC2C1",
    "Cc1ccc2N3Cc4cc(C)ccc4N(C3)Cc2c1", "CC=CC(=O)O", "ClC=CC=CCl", "OC[C@@H](O)C(O)[C@@H](O)CO",
]


def _nci_with_stereo(count: int):
    path = os.path.join(RDConfig.RDDataDir, "NCI", "first_5K.smi")
    out = []
    with open(path) as fh:
        for line in fh:
            smi = line.split()[0]
            if "@" not in smi:
                continue
            m = Chem.MolFromSmiles(smi)
            if m is None or m.GetNumAtoms() > 25 or len(Chem.GetMolFrags(m)) > 1:
                continue
            out.append(smi)
            if len(out) >= count:
                break
    return out


MOLECULES = OWN + _nci_with_stereo(8)


def summary(report, old_of_new=None) -> tuple:
    """Numbering-free summary of a report; heavy indices mapped through `old_of_new` when given."""
    mol = report.mol
    back = old_of_new or (lambda i: i)

    def parent(i):
        a = mol.GetAtomWithIdx(i)
        return back(a.GetIdx() if a.GetAtomicNum() > 1 else a.GetNeighbors()[0].GetIdx())

    d = report.to_dict()
    sets = tuple(sorted(
        (s["isotope"], len(s["atoms"]), len(s["magnetic_subsets"]), s["topicity"]["within"],
         tuple(sorted(parent(i) for i in s["atoms"])),
         tuple(sorted(tuple(sorted(parent(i) for i in sub)) for sub in s["magnetic_subsets"])))
        for s in d["sets"]))
    frags = tuple(sorted((f["copies"], len(f["sets"]), f["magnetically_inequivalent"]) for f in d["fragments"]))
    return frags, sets


def _renumbered(mol: Chem.Mol, seed: int):
    order = list(range(mol.GetNumAtoms()))
    random.Random(seed).shuffle(order)
    return Chem.RenumberAtoms(mol, order), order


@pytest.mark.parametrize("smiles", MOLECULES)
def test_renumbering_changes_nothing(smiles):
    mol = Chem.MolFromSmiles(smiles)
    base = summary(equivclass.analyze(Chem.Mol(mol), amide_rotation_fast=False))
    for seed in (1, 2, 3):
        new, order = _renumbered(mol, seed)
        got = summary(equivclass.analyze(new), old_of_new=lambda i, o=order: o[i])
        assert got == base, f"{smiles} renumbered with seed {seed} ({order})"


def test_label_string_is_invariant_under_renumbering():
    failures = []
    for smiles in OWN:
        mol = Chem.MolFromSmiles(smiles)
        base = equivclass.analyze(Chem.Mol(mol)).to_dict()["label"]
        for seed in (1, 2, 3):
            got = equivclass.analyze(_renumbered(mol, seed)[0]).to_dict()["label"]
            if got != base:
                failures.append(f"{smiles}: {base!r} vs {got!r}")
    assert not failures, "; ".join(failures[:5])


def _mirror(mol: Chem.Mol) -> Chem.Mol:
    m = Chem.Mol(mol)
    for a in m.GetAtoms():
        if a.GetChiralTag() in (Chem.ChiralType.CHI_TETRAHEDRAL_CW, Chem.ChiralType.CHI_TETRAHEDRAL_CCW):
            a.InvertChirality()
    return m


@pytest.mark.parametrize("smiles", [s for s in MOLECULES if "@" in s])
def test_mirror_image_changes_nothing_in_achiral_medium(smiles):
    mol = Chem.MolFromSmiles(smiles)
    mirror = _mirror(mol)
    assert summary(equivclass.analyze(mirror)) == summary(equivclass.analyze(Chem.Mol(mol))), smiles


def test_mirror_helper_really_inverts():
    """L- and D-alanine differ as molecules (the mirror test is not a no-op)."""
    mol = Chem.MolFromSmiles("N[C@@H](C)C(=O)O")
    assert Chem.MolToSmiles(_mirror(mol)) == Chem.MolToSmiles(Chem.MolFromSmiles("N[C@H](C)C(=O)O"))
    assert Chem.MolToSmiles(_mirror(mol)) != Chem.MolToSmiles(mol)


def _h_sets(report):
    return sorted(len(s["atoms"]) for s in report.to_dict()["sets"] if s["isotope"] == "1H")


def test_chiral_medium_splits_enantiotopic_ethanol_ch2():
    """Ethanol CH2 protons are enantiotopic: one set in an achiral medium, two in a chiral one."""
    achiral = equivclass.analyze("CCO")
    chiral = equivclass.analyze("CCO", chiral_medium=True)
    assert _h_sets(achiral) == [1, 2, 3]
    assert _h_sets(chiral) == [1, 1, 1, 3]
    ch2 = next(s for s in achiral.to_dict()["sets"] if len(s["atoms"]) == 2)
    assert ch2["topicity"]["within"] == "enantiotopic"


def test_chiral_medium_splits_glycerol():
    """Glycerol: the two CH2OH groups are enantiotopic, the protons inside each CH2 diastereotopic."""
    achiral = equivclass.analyze("OCC(O)CO")
    chiral = equivclass.analyze("OCC(O)CO", chiral_medium=True)
    assert _h_sets(achiral) == [1, 1, 2, 2, 2]       # CH, 2-OH, two CH2 pairs, the terminal OH pair
    assert _h_sets(chiral) == [1] * 8                # every proton apart (the terminal OH pair too)


def test_homotopic_protons_stay_together_in_chiral_medium():
    """Homotopic nuclei (CH2Cl2, benzene) are related by rotations: no medium separates them."""
    assert _h_sets(equivclass.analyze("ClCCl", chiral_medium=True)) == [2]
    assert _h_sets(equivclass.analyze("c1ccccc1", chiral_medium=True)) == [6]
