"""Lists of a molecule's atoms and bonds, built by index.

RDKit's ``mol.GetAtoms()`` and ``mol.GetBonds()`` are Python sequence wrappers whose iteration costs
about twice as much as indexing; the stages walk every atom several times per molecule. Imports RDKit
types only.
"""
from __future__ import annotations

from rdkit import Chem


def atom_list(mol: Chem.Mol) -> list[Chem.Atom]:
    """The atoms of ``mol`` in index order."""
    get = mol.GetAtomWithIdx
    return [get(i) for i in range(mol.GetNumAtoms())]


def bond_list(mol: Chem.Mol) -> list[Chem.Bond]:
    """The bonds of ``mol`` in index order."""
    get = mol.GetBondWithIdx
    return [get(i) for i in range(mol.GetNumBonds())]
