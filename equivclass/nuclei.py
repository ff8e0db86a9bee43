"""Active nuclei of a structure: which atoms are observed, as which isotope, and whether dilute.

An atom is active when its element has a requested isotope (unlabelled atoms are read as that isotope)
or when the input labels it with a magnetic isotope ([2H], [13C], [15N] are honoured whatever is
requested). A requested isotope of low natural abundance on an unlabelled atom (13C, 29Si, 195Pt …) is
dilute: an isolated spin that gives satellites, never a coupling partner (DESIGN.md §3).
"""
from __future__ import annotations

from dataclasses import dataclass

from rdkit import Chem
from .atoms import atom_list

from . import nucdata
from .errors import InputError


@dataclass(frozen=True)
class Nucleus:
    atom: int
    isotope: nucdata.Isotope
    labelled: bool
    dilute: bool


def active_nuclei(mol: Chem.Mol, requested) -> tuple[Nucleus, ...]:
    by_element = {}
    for iso in requested:
        by_element.setdefault(iso.atomic_number, []).append(iso)
    out = []
    for atom in atom_list(mol):
        z, mass = atom.GetAtomicNum(), atom.GetIsotope()
        if mass:
            name = f"{mass}{atom.GetSymbol()}"
            try:
                iso = nucdata.isotope(name)
            except InputError:
                continue  # a spin-0 isotope such as 12C or 16O
            if iso.spin > 0:
                out.append(Nucleus(atom.GetIdx(), iso, True, False))
            continue
        for iso in by_element.get(z, ()):
            out.append(Nucleus(atom.GetIdx(), iso, False, nucdata.is_dilute(iso)))
            break
    return tuple(out)
