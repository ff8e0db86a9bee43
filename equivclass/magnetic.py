"""Magnetic equivalence: a chemical set splits where its members couple differently to an outside nucleus.

Members a, b of one chemical set are magnetically equivalent when, for every active nucleus n outside the
set, the ordered pairs (a, n) and (b, n) lie in one orbit of G or J(a, n) and J(b, n) are both zero
(DESIGN.md §3). The relation is transitive, so the subsets are its classes. Every split carries a witness:
the partner nucleus and the two coupling paths that are not related by symmetry.
"""
from __future__ import annotations

from dataclasses import dataclass

from rdkit import Chem

from .couplings import Coupling
from .symmetry import Graph, find_symmetry


@dataclass(frozen=True)
class Witness:
    atoms: tuple[int, int]
    partner: int
    paths: tuple            # (Coupling | None, Coupling | None) for (a, partner) and (b, partner)
    reason: str


@dataclass(frozen=True)
class MagneticSplit:
    subsets: tuple[tuple[int, ...], ...]
    witnesses: tuple[Witness, ...]


def _name(mol: Chem.Mol, i: int) -> str:
    return f"{mol.GetAtomWithIdx(i).GetSymbol()}{i}"


def _describe(mol, a, b, n, ja: Coupling | None, jb: Coupling | None) -> str:
    def part(x, c):
        if c is None:
            return f"{_name(mol, x)}–{_name(mol, n)} not coupled"
        return f"{_name(mol, x)}–{_name(mol, n)} over {c.n_bonds} bonds (J ≈ {abs(c.j_hz):.1f} Hz)"
    if ja is not None and jb is not None and ja.n_bonds == jb.n_bonds and ja.j_hz == jb.j_hz:
        return (f"{_name(mol, a)}–{_name(mol, n)} and {_name(mol, b)}–{_name(mol, n)} both over "
                f"{ja.n_bonds} bonds (J ≈ {abs(ja.j_hz):.1f} Hz), but no symmetry operation maps one pair "
                f"onto the other, so the couplings are not equal by symmetry")
    return f"{part(a, ja)} but {part(b, jb)}"


def split_all(mol: Chem.Mol, g: Graph, sets, partners, jmap: dict, chiral_medium: bool,
              known=()) -> list[MagneticSplit]:
    """Magnetic subsets of every chemical set in `sets`, refined until stable.

    A subset splits when its members couple differently to any nucleus outside the subset — also to a
    member of another subset of the same chemical set, so para-disubstituted benzenes with identical
    substituents come out AA′A″A‴ (Günther, NMR Spectroscopy, ch. 6), while a lone set with no outside
    partner (benzene, 1,2-dichloroethane) stays one subset. ``known``: elements of G already found
    (atom images), tried before any new search.
    """
    signs = (1,) if chiral_medium else (1, -1)
    known = list(known)
    subsets = [[list(m)] for m in sets]
    witnesses = [[] for _ in sets]
    changed = True
    while changed:
        changed = False
        for k in range(len(sets)):
            new_groups = []
            for sub in subsets[k]:
                if len(sub) < 2:
                    new_groups.append(sub)
                    continue
                inside = set(sub)
                outside = [n for n in partners if n not in inside]
                parts, found = _split_one(mol, g, sub, outside, jmap, signs, known)
                new_groups.extend(parts)
                if len(parts) > 1:
                    changed = True
                    witnesses[k].extend(found)
            subsets[k] = new_groups
    return [MagneticSplit(tuple(tuple(sorted(s)) for s in sorted(subs, key=min)), tuple(w))
            for subs, w in zip(subsets, witnesses)]


def _split_one(mol, g, members, outside, jmap, signs, known):
    parts: list[list[int]] = []
    witnesses = []
    for m in members:
        placed, first_witness = False, None
        for part in parts:
            w = _first_difference(mol, g, part[0], m, outside, jmap, signs, known)
            if w is None:
                part.append(m)
                placed = True
                break
            first_witness = first_witness or w
        if not placed:
            parts.append([m])
            if first_witness is not None:
                witnesses.append(first_witness)
    return parts, witnesses


def _first_difference(mol, g, a, b, outside, jmap, signs, known):
    """The first partner n for which (a, n) and (b, n) are not symmetry-related (None if none).

    Elements of G in ``known`` are tried first; new ones found by search are added to it.
    """
    settled = set()
    for n in outside:
        if n in settled:
            continue
        ja, jb = jmap.get(frozenset((a, n))), jmap.get(frozenset((b, n)))
        if ja is None and jb is None:
            continue
        if ja is None or jb is None:
            return Witness((a, b), n, (ja, jb), _describe(mol, a, b, n, ja, jb))
        img = next((k for k in known if k[a] == b and k[n] == n), None)
        if img is None:
            for sign in signs:
                img = find_symmetry(g, {a: b, n: n}, sign)
                if img is not None:
                    known.append(img)
                    break
        if img is None:
            return Witness((a, b), n, (ja, jb), _describe(mol, a, b, n, ja, jb))
        settled.update(x for x in outside if img[x] == x)
    return None
