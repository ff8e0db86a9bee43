"""Fixed configurations of a structure: tetrahedral parities, planar-bond geometry, stereoisomer choice.

A symmetry of the time-averaged structure must keep every configuration that does not change on the NMR
time scale (DESIGN.md §3): tetrahedral centres (including prochiral ones), C=C and C=N geometry, and the
C(=O)–N bond of amides while amide rotation is slow. Parities are read from RDKit chiral tags (relative to
each atom's bond order); centres without a tag are not stereogenic, so any fixed parity is a realisable one.
Double-bond geometry is read from bond stereo; in rings of fewer than eight atoms ring neighbours are cis.
"""
from __future__ import annotations

import itertools
from dataclasses import dataclass

from rdkit import Chem
from .atoms import atom_list, bond_list
from .permutations import parity as perm_parity

_MAIN_GROUP_TETRAHEDRAL = {5, 6, 7, 13, 14, 15, 16, 32, 33, 34, 50, 51, 52}
_LONE_PAIR_PYRAMIDAL = {15, 16, 33, 34, 51, 52}  # P, S, As, Se, Sb, Te invert slowly (common practice)
_CHALCOGENS = {8, 16}
MAX_STEREOISOMERS = 64
EMBED_TIMEOUT_S = 5   # per embedding attempt; a structure that will not embed falls back to its tags


@dataclass(frozen=True)
class Centre:
    """A tetrahedral (or pyramidal, lone pair implied) centre: ordered neighbours and their parity (±1)."""

    atom: int
    nbrs: tuple[int, ...]
    parity: int


@dataclass(frozen=True)
class PlanarBond:
    """A bond with fixed geometry: `cis` holds the pairs of substituents on the same side."""

    a: int
    b: int
    subs_a: tuple[int, ...]
    subs_b: tuple[int, ...]
    cis: frozenset
    kind: str  # "double" or "amide"


@dataclass(frozen=True)
class Configuration:
    centres: tuple[Centre, ...]
    planar: tuple[PlanarBond, ...]
    parity_source: str = "tags"    # "tags" or "geometry" (an embedded conformer)


def _is_tetrahedral_centre(atom: Chem.Atom) -> bool:
    z = atom.GetAtomicNum()
    if z not in _MAIN_GROUP_TETRAHEDRAL or atom.GetIsAromatic():
        return False
    deg = atom.GetDegree()
    if deg == 4:
        return all(b.GetBondType() != Chem.BondType.TRIPLE for b in atom.GetBonds()) and \
            sum(1 for b in atom.GetBonds() if b.GetBondType() == Chem.BondType.DOUBLE) <= 2 and \
            (z != 6 or all(b.GetBondType() == Chem.BondType.SINGLE for b in atom.GetBonds()))
    if deg == 3 and z == 7:
        return _bridgehead_amine(atom)
    if deg == 3 and z in _LONE_PAIR_PYRAMIDAL:
        for b in atom.GetBonds():
            if b.GetBondType() == Chem.BondType.DOUBLE:
                other = b.GetOtherAtom(atom)
                if not (other.GetAtomicNum() in (7, 8, 16) and other.GetDegree() == 1) or z == 15:
                    return False
            elif b.GetBondType() != Chem.BondType.SINGLE:
                return False
        return atom.GetFormalCharge() >= 0 and (z != 15 or atom.GetFormalCharge() == 0)
    return False


ATROPISOMER_MIN_ORTHO = 3   # ortho substituents (fused rings included) from which a biaryl axis may be slow


def hindered_biaryl_axes(mol: Chem.Mol) -> list[tuple[int, int, int]]:
    """(a, b, n) for each single bond joining two aromatic rings whose ortho positions carry n ≥ 3 non-H
    atoms (a fused ring counts as an ortho substituent, fluorine as half, being small): such axes may rotate slowly (atropisomers, as in
    2,2'-disubstituted 1,1'-binaphthyls and 2,2',6,6'-tetrasubstituted biphenyls; Eliel-Wilen ch. 14)."""
    out = []
    for b in bond_list(mol):
        if b.GetBondType() != Chem.BondType.SINGLE or b.IsInRing():
            continue
        a1, a2 = b.GetBeginAtom(), b.GetEndAtom()
        if not (a1.GetIsAromatic() and a2.GetIsAromatic()):
            continue
        n = 0
        for end, other in ((a1, a2), (a2, a1)):
            for ortho in end.GetNeighbors():
                if ortho.GetIdx() == other.GetIdx():
                    continue
                n += sum(0.5 if x.GetAtomicNum() == 9 else 1 for x in ortho.GetNeighbors()
                         if x.GetIdx() != end.GetIdx() and x.GetAtomicNum() > 1 and
                         not (x.GetIsAromatic() and x.IsInRing() and
                              mol.GetBondBetweenAtoms(x.GetIdx(), ortho.GetIdx()).GetIsAromatic() and
                              _same_ring(mol, x.GetIdx(), ortho.GetIdx(), end.GetIdx())))
        if n >= ATROPISOMER_MIN_ORTHO:
            out.append((a1.GetIdx(), a2.GetIdx(), int(n) if n == int(n) else n))
    return out


def _same_ring(mol: Chem.Mol, x: int, ortho: int, end: int) -> bool:
    """True when x continues the ring that holds the axis atom `end` and its ortho atom (not a substituent)."""
    return any(x in r and ortho in r and end in r for r in mol.GetRingInfo().AtomRings())


AXIS_PARITY = "equivclass_axis_parity"   # atom property: chosen configuration of an allene axis (±1)
ENUMERATED = "equivclass_enumerated"      # molecule property: stereo set by `stereoisomers`
HAS_AXES = "equivclass_has_axes"          # molecule property: some allene axis was chosen


def _stereogenic_axes(mol: Chem.Mol, ranks) -> list[int]:
    """Allene centres whose two ends each carry two constitutionally different substituents."""
    out = []
    for c in allene_axes(mol):
        a1, a2, b1, b2 = _allene_axis(mol.GetAtomWithIdx(c))
        if ranks[a1] != ranks[a2] and ranks[b1] != ranks[b2]:
            out.append(c)
    return out


def long_cumulenes(mol: Chem.Mol) -> list[tuple[int, ...]]:
    """Atom chains of three or more cumulated double bonds (butatrienes and longer), whose end-to-end
    cis/trans or axial geometry the configuration does not keep."""
    inner = {a.GetIdx() for a in atom_list(mol) if a.GetAtomicNum() == 6 and a.GetDegree() == 2 and
             all(b.GetBondType() == Chem.BondType.DOUBLE for b in a.GetBonds())}
    chains, seen = [], set()
    for start in sorted(inner):
        if start in seen:
            continue
        chain, stack = set(), [start]
        while stack:
            x = stack.pop()
            if x in chain:
                continue
            chain.add(x)
            stack.extend(n.GetIdx() for n in mol.GetAtomWithIdx(x).GetNeighbors() if n.GetIdx() in inner)
        seen |= chain
        if len(chain) >= 2:
            ends = {n.GetIdx() for x in chain for n in mol.GetAtomWithIdx(x).GetNeighbors()} - chain
            chains.append(tuple(sorted(chain | ends)))
    return chains


def allene_axes(mol: Chem.Mol) -> list[int]:
    """Central atoms of the stereogenic-capable allene axes of the molecule."""
    return [a.GetIdx() for a in atom_list(mol) if _allene_axis(a) is not None]


def _allene_axis(atom: Chem.Atom) -> tuple[int, ...] | None:
    """The four substituents (a1, a2, b1, b2) of an allene a1a2C=C=Cb1b2 centred on `atom`, or None.
    Their tetrahedral arrangement is the axial configuration, fixed like a stereocentre's
    (Eliel-Wilen ch. 14: axial chirality of allenes)."""
    if atom.GetAtomicNum() != 6 or atom.GetDegree() != 2 or \
            any(b.GetBondType() != Chem.BondType.DOUBLE for b in atom.GetBonds()):
        return None
    subs = []
    for end in atom.GetNeighbors():
        if end.GetAtomicNum() != 6 or _is_linear(end):
            return None
        s = [n.GetIdx() for n in end.GetNeighbors() if n.GetIdx() != atom.GetIdx()]
        if len(s) != 2:
            return None
        subs.extend(s)
    return tuple(subs)


def _bridgehead_amine(atom: Chem.Atom) -> bool:
    """A neutral three-coordinate N at the bridgehead of a bridged ring system (two rings through it
    sharing three or more atoms, e.g. Tröger's base) cannot invert, so its configuration is fixed
    (common practice; quinuclidine-type N is fixed but usually symmetric)."""
    if atom.GetFormalCharge() != 0 or any(b.GetBondType() != Chem.BondType.SINGLE or not b.IsInRing()
                                          for b in atom.GetBonds()):
        return False   # a bridgehead has all three bonds in rings (the one-atom N bridge of tropane inverts)
    idx = atom.GetIdx()
    rings = [set(r) for r in atom.GetOwningMol().GetRingInfo().AtomRings() if idx in r]
    return any(len(r1 & r2) >= 3 for i, r1 in enumerate(rings) for r2 in rings[i + 1:])


def _amide_bond(bond: Chem.Bond) -> tuple[int, int] | None:
    """(carbonyl C, N) of an amide, thioamide, lactam or carbamate C–N single bond; ureas rotate fast."""
    if bond.GetBondType() != Chem.BondType.SINGLE or bond.GetIsAromatic():
        return None
    for c, n in ((bond.GetBeginAtom(), bond.GetEndAtom()), (bond.GetEndAtom(), bond.GetBeginAtom())):
        if c.GetAtomicNum() != 6 or n.GetAtomicNum() != 7 or n.GetDegree() != 3 or n.GetIsAromatic():
            continue
        if n.GetFormalCharge() != 0 or c.GetIsAromatic():
            continue
        has_carbonyl = any(b.GetBondType() == Chem.BondType.DOUBLE and
                           b.GetOtherAtom(c).GetAtomicNum() in _CHALCOGENS for b in c.GetBonds())
        n_nitrogens = sum(1 for x in c.GetNeighbors() if x.GetAtomicNum() == 7)
        if has_carbonyl and n_nitrogens == 1:
            return c.GetIdx(), n.GetIdx()
    return None


def _small_ring_partner(mol: Chem.Mol, a: int, b: int, subs_a, subs_b):
    """Ring neighbours (x on a, y on b) that a ring of fewer than eight atoms forces cis."""
    for ring in mol.GetRingInfo().AtomRings():
        if len(ring) < 8 and a in ring and b in ring:
            xs = [x for x in subs_a if x in ring]
            ys = [y for y in subs_b if y in ring]
            if xs and ys:
                return xs[0], ys[0]
    return None


def _cis_pairs(subs_a, subs_b, x, y, x_cis_y: bool) -> frozenset:
    pairs = set()
    for p in subs_a:
        for q in subs_b:
            same_side = ((p == x) == (q == y)) == x_cis_y
            if same_side:
                pairs.add(frozenset((p, q)))
    return frozenset(pairs)


def _preferred_reference(mol: Chem.Mol, subs, ranks) -> int:
    """The substituent used as reference on an unspecified planar end: highest (Z, rank)."""
    return max(subs, key=lambda i: (mol.GetAtomWithIdx(i).GetAtomicNum(), ranks[i]))


def configuration(mol: Chem.Mol, amide_rotation_fast: bool = False) -> Configuration:
    """Read every fixed configuration of an explicit-H molecule."""
    ranks = list(Chem.CanonicalRankAtoms(mol, breakTies=False, includeChirality=False))
    ring_info = mol.GetRingInfo()
    centre_atoms = [a for a in atom_list(mol) if _is_tetrahedral_centre(a)]
    coords = None
    if mol.GetNumConformers() and mol.GetConformer().Is3D():
        coords = mol.GetConformer().GetPositions()
    elif any(ring_info.NumAtomRings(a.GetIdx()) >= 2 for a in centre_atoms):
        coords = _embedded_coordinates(mol)
    centres = []
    for atom in centre_atoms:
        idx = atom.GetIdx()
        nbrs = tuple(b.GetOtherAtomIdx(idx) for b in atom.GetBonds())
        tag = atom.GetChiralTag()
        if tag in (Chem.ChiralType.CHI_TETRAHEDRAL_CW, Chem.ChiralType.CHI_TETRAHEDRAL_CCW) or coords is None:
            # a tag wins over coordinates: an enumerated isomer may carry another isomer's geometry for its
            # ring fusions (tag and signed-volume conventions agree, tests/test_stereo_geometry.py)
            parity = -1 if tag == Chem.ChiralType.CHI_TETRAHEDRAL_CW else 1
        else:
            parity = _signed_volume(coords, idx, nbrs)
        centres.append(Centre(idx, nbrs, parity))
    for atom in atom_list(mol):
        axis = _allene_axis(atom)
        if axis is not None:
            if atom.HasProp(AXIS_PARITY):
                parity = atom.GetIntProp(AXIS_PARITY)        # chosen by `stereoisomers`
            elif coords is not None:
                parity = _signed_volume(coords, atom.GetIdx(), axis)
            else:
                parity = 1
            centres.append(Centre(atom.GetIdx(), axis, parity))
    planar = []
    for bond in bond_list(mol):
        a, b = bond.GetBeginAtomIdx(), bond.GetEndAtomIdx()
        kind = None
        if bond.GetBondType() == Chem.BondType.DOUBLE and not bond.GetIsAromatic():
            kind = "double"
        elif not amide_rotation_fast and _amide_bond(bond):
            kind = "amide"
            a, b = _amide_bond(bond)
        if kind is None:
            continue
        atom_a, atom_b = mol.GetAtomWithIdx(a), mol.GetAtomWithIdx(b)
        if any(_is_linear(x) for x in (atom_a, atom_b)):
            continue
        subs_a = tuple(n.GetIdx() for n in atom_a.GetNeighbors() if n.GetIdx() != b)
        subs_b = tuple(n.GetIdx() for n in atom_b.GetNeighbors() if n.GetIdx() != a)
        if not subs_a or not subs_b or len(subs_a) > 2 or len(subs_b) > 2 or set(subs_a) & set(subs_b):
            continue  # a common neighbour (π-bound metal, three-membered ring) fixes nothing more
        st = bond.GetStereo()
        stereo_atoms = list(bond.GetStereoAtoms())
        if kind == "double" and st in (Chem.BondStereo.STEREOCIS, Chem.BondStereo.STEREOTRANS) \
                and len(stereo_atoms) == 2:
            x, y = stereo_atoms
            if x not in subs_a:
                x, y = y, x
            cis = _cis_pairs(subs_a, subs_b, x, y, st == Chem.BondStereo.STEREOCIS)
        else:
            ring_pair = _small_ring_partner(mol, a, b, subs_a, subs_b)
            if ring_pair:
                cis = _cis_pairs(subs_a, subs_b, ring_pair[0], ring_pair[1], True)
            else:
                x = _preferred_reference(mol, subs_a, ranks)
                y = _preferred_reference(mol, subs_b, ranks)
                cis = _cis_pairs(subs_a, subs_b, x, y, True)
        planar.append(PlanarBond(a, b, subs_a, subs_b, cis, kind))
    return Configuration(tuple(centres), tuple(planar), "geometry" if coords is not None else "tags")


def _embedded_coordinates(mol: Chem.Mol):
    """Coordinates of one ETKDG conformer that keeps the molecule's stereo tags, or None.

    Fused, bridged and spiro ring systems fix the parity of every ring centre, tagged or not, so these
    are read from real geometry rather than chosen freely.
    """
    from rdkit.Chem import AllChem
    if any(a.GetDegree() > 4 or is_metal(a) for a in atom_list(mol)):
        return None   # force-field geometry of metal and hypervalent centres is not meaningful here
    fusions = _three_ring_fusions(mol)
    coords = _embed_once(mol, 0xEC)
    if coords is None or all(_cis_across(coords, *f) for f in fusions):
        return coords
    # an unspecified trans fusion: take the tags of this geometry, invert one fusion atom, embed again
    probe = _with_coordinates(mol, coords)
    Chem.AssignStereochemistryFrom3D(probe)
    fixed = Chem.Mol(mol)
    for x, a, b, y in fusions:
        if any(mol.GetAtomWithIdx(i).GetChiralTag() != Chem.ChiralType.CHI_UNSPECIFIED for i in (a, b)):
            continue   # a configuration given in the input is kept as given
        for i in (a, b):
            fixed.GetAtomWithIdx(i).SetChiralTag(probe.GetAtomWithIdx(i).GetChiralTag())
        if not _cis_across(coords, x, a, b, y):
            atom = fixed.GetAtomWithIdx(b)
            atom.SetChiralTag(Chem.ChiralType.CHI_TETRAHEDRAL_CW
                              if atom.GetChiralTag() == Chem.ChiralType.CHI_TETRAHEDRAL_CCW
                              else Chem.ChiralType.CHI_TETRAHEDRAL_CCW)
    again = _embed_once(fixed, 0xEC)
    if again is not None and all(_cis_across(again, *f) for f in fusions):
        return again
    return coords


def _with_coordinates(mol: Chem.Mol, coords) -> Chem.Mol:
    """A copy of the molecule whose only conformer holds `coords` (3D)."""
    m = Chem.Mol(mol)
    conf = Chem.Conformer(m.GetNumAtoms())
    for i, p in enumerate(coords):
        conf.SetAtomPosition(i, p.tolist())
    conf.Set3D(True)
    m.RemoveAllConformers()
    m.AddConformer(conf, assignId=True)
    return m


def _embed_once(mol: Chem.Mol, seed: int):
    """Coordinates of one ETKDG embedding that enforces the molecule's tags (random start as a fallback)."""
    from rdkit.Chem import AllChem
    params = AllChem.ETKDGv3()
    params.randomSeed = seed
    params.enforceChirality = True
    params.timeout = EMBED_TIMEOUT_S
    m = Chem.Mol(mol)
    try:
        if AllChem.EmbedMolecule(m, params) != 0:
            params.useRandomCoords = True
            if AllChem.EmbedMolecule(m, params) != 0:
                return None
    except Exception:
        return None
    return m.GetConformer().GetPositions()


def _three_ring_fusions(mol: Chem.Mol) -> list[tuple[int, int, int, int]]:
    """(x, a, b, y) for each bond a–b shared by a three-membered ring and a ring of at most seven atoms,
    x and y the substituents of a and b outside both rings. Such fusions are cis in practice (trans-fused
    bicyclo[n.1.0] systems with n ≤ 5 are not formed under ordinary conditions; common practice), so cis
    is assumed where the input leaves it open."""
    rings = mol.GetRingInfo().AtomRings()
    out = []
    for r3 in (r for r in rings if len(r) == 3):
        for r in rings:
            shared = set(r3) & set(r)
            if r is r3 or len(r) > 7 or len(shared) != 2:
                continue
            a, b = sorted(shared)
            both = set(r3) | set(r)
            x = next((n.GetIdx() for n in mol.GetAtomWithIdx(a).GetNeighbors() if n.GetIdx() not in both), None)
            y = next((n.GetIdx() for n in mol.GetAtomWithIdx(b).GetNeighbors() if n.GetIdx() not in both), None)
            if x is not None and y is not None:
                out.append((x, a, b, y))
    return out


def _cis_across(coords, x: int, a: int, b: int, y: int) -> bool:
    """True when substituents x (on a) and y (on b) lie on one side of the bond a–b: dihedral under 90°."""
    import numpy as np
    b0, b1, b2 = coords[a] - coords[x], coords[b] - coords[a], coords[y] - coords[b]
    n1, n2 = np.cross(b0, b1), np.cross(b1, b2)
    return float(np.dot(n1, n2)) > 0


def is_metal(atom: Chem.Atom) -> bool:
    """Alkali, alkaline-earth, transition, post-transition and f-block metals."""
    z = atom.GetAtomicNum()
    return z in (3, 4, 11, 12, 13, 19, 20, 31, 37, 38, 49, 50, 55, 56, 81, 82, 83) or 21 <= z <= 30 or \
        39 <= z <= 48 or 57 <= z <= 80 or z >= 87


def _signed_volume(coords, centre: int, nbrs) -> int:
    """Orientation (±1) of the ordered neighbours around a centre in 3D."""
    import numpy as np
    c = coords[centre]
    if len(nbrs) == 4:  # sign chosen so that +1 is the handedness of RDKit's CCW tag
        p0, p1, p2, p3 = (coords[n] for n in nbrs)
        vol = -np.linalg.det(np.array([p1 - p0, p2 - p0, p3 - p0]))
    else:
        vol = np.linalg.det(np.array([coords[n] - c for n in nbrs[:3]]))
    return 1 if vol > 0 else -1


def _is_linear(atom: Chem.Atom) -> bool:
    doubles = sum(1 for b in atom.GetBonds() if b.GetBondType() == Chem.BondType.DOUBLE)
    triples = sum(1 for b in atom.GetBonds() if b.GetBondType() == Chem.BondType.TRIPLE)
    return triples > 0 or (doubles >= 2 and atom.GetDegree() == 2)


@dataclass(frozen=True)
class StereoChoice:
    """The stereoisomers compatible with the input and a description of what was left unspecified."""

    isomers: tuple          # explicit-H molecules, first = the one analysed by default
    unspecified: tuple[str, ...]
    notes: tuple[str, ...] = ()


def unspecified_elements(mol: Chem.Mol) -> list:
    found = [si for si in stereo_elements(mol) if si.specified == Chem.StereoSpecified.Unspecified]
    return found + _pseudo_asymmetric_centres(mol, {si.centeredOn for si in found
                                                    if si.type == Chem.StereoType.Atom_Tetrahedral})


@dataclass(frozen=True)
class _OpenCentre:
    """An unspecified tetrahedral centre found here rather than by RDKit (same fields as its StereoInfo)."""

    centeredOn: int
    type: object = Chem.StereoType.Atom_Tetrahedral
    specified: object = Chem.StereoSpecified.Unspecified
    controllingAtoms: tuple = ()


def _pseudo_asymmetric_centres(mol: Chem.Mol, known: set, loose: bool = False) -> list:
    """Unspecified pseudo-asymmetric centres (r/s): a carbon whose two constitutionally equal branches have
    opposite configurations (C3 of ribitol and xylitol; Eliel-Wilen ch. 8). RDKit does not list them while
    they are unspecified."""
    tagged = [a for a in atom_list(mol) if a.GetChiralTag() != Chem.ChiralType.CHI_UNSPECIFIED]
    if len(tagged) < 2 and not loose:
        return []
    plain = list(Chem.CanonicalRankAtoms(mol, breakTies=False, includeChirality=False))
    chiral = list(Chem.CanonicalRankAtoms(mol, breakTies=False, includeChirality=True))
    out = []
    for a in atom_list(mol):
        if a.GetIdx() in known or a.GetAtomicNum() != 6 or a.GetDegree() != 4 or \
                a.GetChiralTag() != Chem.ChiralType.CHI_UNSPECIFIED:
            continue
        nbrs = [n.GetIdx() for n in a.GetNeighbors()]
        ranks = [plain[i] for i in nbrs]
        pairs = [(i, j) for x, i in enumerate(nbrs) for j in nbrs[x + 1:] if plain[i] == plain[j]]
        if len(pairs) == 1 and len(set(ranks)) == 3 and (loose or chiral[pairs[0][0]] != chiral[pairs[0][1]]):
            out.append(_OpenCentre(a.GetIdx()))
    return out


def stereo_elements(mol: Chem.Mol) -> list:
    """RDKit's potential tetrahedral centres and cis/trans double bonds; the cumulated bonds of an
    allene are not cis/trans elements (the axis is read by `configuration`)."""
    out = []
    for si in Chem.FindPotentialStereo(mol):
        if si.type == Chem.StereoType.Bond_Double:
            bond = mol.GetBondWithIdx(si.centeredOn)
            if _is_linear(bond.GetBeginAtom()) or _is_linear(bond.GetEndAtom()):
                continue
        elif si.type != Chem.StereoType.Atom_Tetrahedral:
            continue
        out.append(si)
    return out


def _describe(mol: Chem.Mol, si) -> str:
    if si.type == "allene axis":
        return f"allene axis C{si.centeredOn}"
    if si.type == Chem.StereoType.Atom_Tetrahedral:
        atom = mol.GetAtomWithIdx(si.centeredOn)
        return f"stereocentre {atom.GetSymbol()}{si.centeredOn}"
    bond = mol.GetBondWithIdx(si.centeredOn)
    return f"double bond {bond.GetBeginAtom().GetSymbol()}{bond.GetBeginAtomIdx()}=" \
           f"{bond.GetEndAtom().GetSymbol()}{bond.GetEndAtomIdx()}"


def isomeric_smiles(mol: Chem.Mol) -> str:
    """Canonical isomeric SMILES without explicit H. For isomers made by `stereoisomers`, stereo is
    perceived again first, so that double-bond geometry set as cis/trans on the bond is written (it is
    not written otherwise) and tags on non-stereogenic centres are dropped."""
    if not mol.HasProp(ENUMERATED):
        return Chem.MolToSmiles(Chem.RemoveHs(mol, sanitize=False))
    return _round_trip(_perceived_smiles(mol, markers=False))


def _round_trip(text: str) -> str:
    """RDKit's canonical SMILES of a SMILES string (written from its own parse), or the text itself."""
    again = Chem.MolFromSmiles(text, sanitize=False)
    if again is None:
        return text
    try:
        again.UpdatePropertyCache(strict=False)
        return Chem.MolToSmiles(again)
    except Exception:
        return text


def _isomer_key(mol: Chem.Mol) -> str:
    """Canonical key of an enumerated isomer (stereo re-perceived, axes as markers, round trip)."""
    return _round_trip(_perceived_smiles(mol, markers=True))


def _perceived_smiles(mol: Chem.Mol, markers: bool) -> str:
    """SMILES of an enumerated isomer with its stereo re-perceived (one writer for every key). A chosen
    allene axis is written as an isotope marker on its centre (its parity relative to each end's
    substituents in constitutional rank order), so that RDKit canonicalises axes and tags together and a
    centre made stereogenic only by two different axes keeps its tag."""
    axes = [a.GetIdx() for a in atom_list(mol) if a.HasProp(AXIS_PARITY)] \
        if markers and mol.HasProp(HAS_AXES) else []
    m = Chem.RemoveHs(mol, sanitize=False)
    if axes:
        ranks = list(Chem.CanonicalRankAtoms(mol, breakTies=False, includeChirality=False))
        for c in axes:
            nbrs = _allene_axis(mol.GetAtomWithIdx(c))
            order = sorted(nbrs[:2], key=lambda i: ranks[i]) + sorted(nbrs[2:], key=lambda i: ranks[i])
            p = mol.GetAtomWithIdx(c).GetIntProp(AXIS_PARITY) * perm_parity(nbrs, order)
            m.GetAtomWithIdx(c).SetIsotope(901 if p > 0 else 902)   # key only, never shown
    frags = Chem.GetMolFrags(m, asMols=True, sanitizeFrags=False) if len(Chem.GetMolFrags(m)) > 1 else (m,)
    return ".".join(sorted(_perceived_fragment(f) for f in frags))   # perception loses bond stereo in salts


def _perceived_fragment(m: Chem.Mol) -> str:
    probe = Chem.Mol(m)
    Chem.AssignStereochemistry(probe, cleanIt=True, force=True)   # drops tags of non-stereogenic centres
    unspecified = Chem.ChiralType.CHI_UNSPECIFIED
    for i in range(m.GetNumAtoms()):
        a = m.GetAtomWithIdx(i)
        if a.GetChiralTag() != unspecified and probe.GetAtomWithIdx(i).GetChiralTag() == unspecified:
            a.SetChiralTag(unspecified)
    Chem.AssignStereochemistry(m, cleanIt=False, force=True)      # keeps the cis/trans set on bonds
    return Chem.MolToSmiles(m)


def _mirrored(iso: Chem.Mol) -> Chem.Mol:
    """The mirror image: every tetrahedral tag and chosen allene axis inverted."""
    m = Chem.Mol(iso)
    for a in m.GetAtoms():
        tag = a.GetChiralTag()
        if tag == Chem.ChiralType.CHI_TETRAHEDRAL_CW:
            a.SetChiralTag(Chem.ChiralType.CHI_TETRAHEDRAL_CCW)
        elif tag == Chem.ChiralType.CHI_TETRAHEDRAL_CCW:
            a.SetChiralTag(Chem.ChiralType.CHI_TETRAHEDRAL_CW)
        if a.HasProp(AXIS_PARITY):
            a.SetIntProp(AXIS_PARITY, -a.GetIntProp(AXIS_PARITY))
    return m


def _larger(mol: Chem.Mol, candidates, ranks) -> int:
    """The bulkier of a double-bond end's substituents (heavier atom, then more heavy neighbours, then
    the canonical rank, which does not depend on atom order), so that "trans" of the two chosen atoms is
    the usual E-like geometry."""
    real = [i for i in candidates if 0 <= i < mol.GetNumAtoms()]
    return max(real, key=lambda i: (mol.GetAtomWithIdx(i).GetAtomicNum(),
                                    sum(1 for n in mol.GetAtomWithIdx(i).GetNeighbors()
                                        if n.GetAtomicNum() > 1), ranks[i]))


def stereoisomers(mol: Chem.Mol, limit: int = MAX_STEREOISOMERS,
                  merge_enantiomers: bool = True) -> StereoChoice:
    """Assign every unspecified stereo element of an explicit-H molecule, distinct isomers only.

    Isomers are told apart by canonical isomeric SMILES; in an achiral medium an enantiomer is the same
    spectrum and is listed once (`merge_enantiomers`). Unspecified centres that lie in two or more rings
    (ring fusions, bridgeheads, cages) are not enumerated: a cage fixes most of them, so they take the
    configuration of one embedded conformer, which is kept on the molecule for `configuration` to read.
    """
    elems = unspecified_elements(mol)
    plain = None
    if allene_axes(mol) and not (mol.GetNumConformers() and mol.GetConformer().Is3D()):   # 3D input fixes axes
        plain = list(Chem.CanonicalRankAtoms(mol, breakTies=False, includeChirality=False))
        axes = [_OpenCentre(c, type="allene axis") for c in _stereogenic_axes(mol, plain)]
        if axes:   # centres that two different axes can make stereogenic are tried too (keys sort them out)
            known = {si.centeredOn for si in elems if si.type == Chem.StereoType.Atom_Tetrahedral}
            elems += _pseudo_asymmetric_centres(mol, known, loose=True) + axes
    if not elems:
        return StereoChoice((mol,), ())
    if plain is None:
        plain = list(Chem.CanonicalRankAtoms(mol, breakTies=False, includeChirality=False))
    ring_info = mol.GetRingInfo()
    poly = [si for si in elems if si.type == Chem.StereoType.Atom_Tetrahedral and
            ring_info.NumAtomRings(si.centeredOn) >= 2]
    rest = [si for si in elems if si not in poly]
    notes = []
    if poly:
        embedded = _with_embedded_configuration(mol, [si.centeredOn for si in poly])
        if embedded is not None:
            mol = embedded
            notes.append("ring-fusion/bridgehead centres " +
                         ", ".join(f"{mol.GetAtomWithIdx(si.centeredOn).GetSymbol()}{si.centeredOn}"
                                   for si in poly) +
                         " unspecified: configuration read from one embedded conformer (where the ring "
                         "system allows another, it is not analysed)")
        else:
            rest = elems
    descr = tuple(_describe(mol, si) for si in rest)
    if not rest:
        return StereoChoice((mol,), (), tuple(notes))
    seen, out = set(), []
    for combo in itertools.product((0, 1), repeat=len(rest)):
        n_cis = sum(bit for si, bit in zip(rest, combo) if si.type == Chem.StereoType.Bond_Double)
        iso = Chem.Mol(mol)
        iso.SetBoolProp(ENUMERATED, True)
        for si, bit in zip(rest, combo):
            if si.type == "allene axis":
                iso.GetAtomWithIdx(si.centeredOn).SetIntProp(AXIS_PARITY, 1 if bit else -1)
                iso.SetBoolProp(HAS_AXES, True)
            elif si.type == Chem.StereoType.Atom_Tetrahedral:
                iso.GetAtomWithIdx(si.centeredOn).SetChiralTag(
                    Chem.ChiralType.CHI_TETRAHEDRAL_CW if bit else Chem.ChiralType.CHI_TETRAHEDRAL_CCW)
            else:
                bond = iso.GetBondWithIdx(si.centeredOn)
                ca = list(si.controllingAtoms)
                bond.SetStereoAtoms(_larger(iso, ca[:2], plain), _larger(iso, ca[2:], plain))
                bond.SetStereo(Chem.BondStereo.STEREOCIS if bit else Chem.BondStereo.STEREOTRANS)
        key = _isomer_key(iso)
        if key in seen:
            continue
        seen.add(key)
        if merge_enantiomers:
            mirror_iso = _mirrored(iso)
            mirror = _isomer_key(mirror_iso)
            seen.add(mirror)
            if mirror < key:   # of an enantiomer pair, report the one whose key sorts first
                iso, key = mirror_iso, mirror
        out.append((n_cis, key, iso))
        if len(out) >= limit:
            break
    out.sort(key=lambda t: (t[0], t[1]))   # E-like geometries first, then an order independent of numbering
    return StereoChoice(tuple(t[2] for t in out) or (mol,), descr, tuple(notes))


def with_conformer(mol: Chem.Mol):
    """The molecule with one embedded 3D conformer that keeps its stereo tags (itself if it has one;
    None if embedding fails). Configurations and ring geometry are then read from the same atoms."""
    if mol.GetNumConformers() and mol.GetConformer().Is3D():
        return mol
    return _with_embedded_configuration(mol, [])


def _with_embedded_configuration(mol: Chem.Mol, atoms):
    """A copy carrying one ETKDG conformer, with chiral tags of `atoms` read from it (None if it fails)."""
    coords = _embedded_coordinates(mol)
    if coords is None:
        return None
    m = _with_coordinates(mol, coords)
    probe = Chem.Mol(m)
    Chem.AssignStereochemistryFrom3D(probe)
    for a in atoms:
        m.GetAtomWithIdx(a).SetChiralTag(probe.GetAtomWithIdx(a).GetChiralTag())
    return m
