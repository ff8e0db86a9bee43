"""Vicinal H–C–C–H couplings from dihedral angles (generalised Karplus equation).

Equation of Haasnoot, de Leeuw & Altona (Tetrahedron 1980, 36, 2783), parameters and Huggins
electronegativities in ``data/karplus.csv``:

    3J = P1 cos²φ + P2 cos φ + P3 + Σ_i Δχ_i [P4 + P5 cos²(ξ_i φ + P6 |Δχ_i|)]
    Δχ_i = χ(S_i) − χ(H) − P7 Σ_β (χ(β) − χ(H))

S_i are the non-hydrogen substituents on the two carbons (other than the C–C bond itself); ξ_i = −1
when S_i lies +120° from the coupled proton on its own carbon (looking along the C–C bond, the sense
that puts it antiperiplanar to the other proton at φ = +60°), +1 otherwise, so that a substituent
antiperiplanar to a coupled proton lowers a gauche coupling.

* Rings (fixed geometry): dihedrals measured on RDKit ETKDG conformers (fixed seed) after MMFF
  optimisation, Boltzmann-weighted at 298 K over distinct conformers (both chairs of a ring are
  sampled, so ring inversion is averaged).
* Chains (free rotation): equal-weight average over the three staggered rotamers and both
  arrangements of the far carbon's substituents.

Never raises for a valid molecule: when embedding or the force field fails the result is empty and
the caller keeps its table value.
"""

from __future__ import annotations

import functools
import math

from rdkit import Chem
from rdkit.Chem import AllChem, rdMolTransforms
from equivclass.couplings import huggins_chi
from equivclass.tables import table_rows

__all__ = ["haasnoot_j", "vicinal_j_from_geometry", "ring_vicinal_couplings", "rotamer_average_vicinal",
           "vicinal_fragment"]

_RT_KCAL = 0.0019872 * 298.15  # kcal/mol at 298.15 K
EMBED_TIMEOUT_S = 1            # per embedding attempt; past it the caller keeps its table values
_BASIS_RING = "Karplus (Haasnoot-de Leeuw-Altona) on {n} MMFF conformer(s), Boltzmann 298 K"
_BASIS_CHAIN = "Karplus (Haasnoot-de Leeuw-Altona), equal-weight staggered rotamers"


def _rows():
    return table_rows("karplus.csv")


@functools.lru_cache(maxsize=1)
def _tables() -> tuple[dict[str, float], dict[str, float]]:
    """(equation parameters, Huggins electronegativities), both from data/karplus.csv."""
    params = {r["key"]: float(r["value"]) for r in _rows() if r["kind"] == "param"}
    return params, huggins_chi()


def haasnoot_j(phi_deg: float, substituents: list[tuple[float, int]] = ()) -> float:
    """3J(H,H) in Hz at dihedral ``phi_deg`` with substituents [(Δχ, ξ)] (Haasnoot et al. 1980)."""
    p, _ = _tables()
    phi = math.radians(phi_deg)
    j = p["P1"] * math.cos(phi) ** 2 + p["P2"] * math.cos(phi) + p["P3"]
    for dchi, xi in substituents:
        j += dchi * (p["P4"] + p["P5"] * math.cos(xi * phi + math.radians(p["P6"] * abs(dchi))) ** 2)
    return j


def _dchi(mol: Chem.Mol, sub: int, carbon: int) -> float:
    """Group electronegativity difference Δχ of substituent atom ``sub`` on ``carbon`` (with β term)."""
    p, chi = _tables()
    h = chi["H"]
    atom = mol.GetAtomWithIdx(sub)
    alpha = chi.get(atom.GetSymbol(), h) - h
    beta = sum(chi.get(nb.GetSymbol(), h) - h for nb in atom.GetNeighbors() if nb.GetIdx() != carbon)
    return alpha - p["P7"] * beta


def _wrap(angle: float) -> float:
    return (angle + 180.0) % 360.0 - 180.0


def vicinal_fragment(mol: Chem.Mol, h1: int, h2: int) -> tuple[int, int] | None:
    """The carbons (c1, c2) of an H–C(sp3)–C(sp3)–H path h1…h2, or None."""
    try:
        a1, a2 = mol.GetAtomWithIdx(h1), mol.GetAtomWithIdx(h2)
    except (RuntimeError, IndexError):
        return None
    if a1.GetAtomicNum() != 1 or a2.GetAtomicNum() != 1 or a1.GetDegree() != 1 or a2.GetDegree() != 1:
        return None
    c1, c2 = a1.GetNeighbors()[0], a2.GetNeighbors()[0]
    if c1.GetAtomicNum() != 6 or c2.GetAtomicNum() != 6 or c1.GetIdx() == c2.GetIdx():
        return None
    if mol.GetBondBetweenAtoms(c1.GetIdx(), c2.GetIdx()) is None:
        return None
    if c1.GetDegree() != 4 or c2.GetDegree() != 4:
        return None
    return c1.GetIdx(), c2.GetIdx()


def _substituents(mol: Chem.Mol, c: int, other: int) -> list[int]:
    return [nb.GetIdx() for nb in mol.GetAtomWithIdx(c).GetNeighbors()
            if nb.GetIdx() != other and nb.GetAtomicNum() > 1]


def vicinal_j_from_geometry(mol: Chem.Mol, h1: int, h2: int, dihedral) -> float | None:
    """3J(h1,h2) with dihedral angles given by ``dihedral(a, b, c, d) -> degrees``."""
    cc = vicinal_fragment(mol, h1, h2)
    if cc is None:
        return None
    c1, c2 = cc
    phi = dihedral(h1, c1, c2, h2)
    subs = []
    for cs, co, hs, ho in ((c1, c2, h1, h2), (c2, c1, h2, h1)):
        ref = dihedral(hs, cs, co, ho)
        for s in _substituents(mol, cs, co):
            omega = _wrap(dihedral(s, cs, co, ho) - ref)
            subs.append((_dchi(mol, s, cs), -1 if omega > 0 else 1))
    return haasnoot_j(phi, subs)


def rotamer_average_vicinal(mol: Chem.Mol, h1: int, h2: int) -> tuple[float, str] | None:
    """Free-rotation 3J(h1,h2): the Haasnoot equation averaged over the three staggered rotamers
    (φ = 60°, 180°, 300°) and both arrangements of the far carbon's other substituents, equal weights.
    None when h1…h2 is not an H–C(sp3)–C(sp3)–H path."""
    try:
        cc = vicinal_fragment(mol, h1, h2)
        if cc is None:
            return None
        c1, c2 = cc
        front = [h1] + [nb.GetIdx() for nb in mol.GetAtomWithIdx(c1).GetNeighbors()
                        if nb.GetIdx() not in (h1, c2)]
        back_rest = [nb.GetIdx() for nb in mol.GetAtomWithIdx(c2).GetNeighbors() if nb.GetIdx() not in (h2, c1)]
        values = []
        for order in (back_rest, back_rest[::-1]):
            back = [h2] + order
            for theta in (60.0, 180.0, 300.0):
                angle = {a: 120.0 * k for k, a in enumerate(front)}
                angle.update({a: theta + 120.0 * k for k, a in enumerate(back)})

                def dihedral(a, b, c, d, angle=angle):
                    # Newman projection: dihedral(front X, c1, c2, back Y) = angle(Y) - angle(X)
                    if a in angle and d in angle and b == c1:
                        return _wrap(angle[d] - angle[a])
                    return _wrap(angle[a] - angle[d])  # reversed path (back atom first)

                values.append(vicinal_j_from_geometry(mol, h1, h2, dihedral))
        return sum(values) / len(values), _BASIS_CHAIN
    except Exception:  # never fail a valid molecule: the caller keeps its table value
        return None


def _only_in_3_ring(mol: Chem.Mol, bond: Chem.Bond) -> bool:
    ri = mol.GetRingInfo()
    sizes = [len(r) for r in ri.BondRings() if bond.GetIdx() in r]
    return bool(sizes) and min(sizes) == 3


def ring_pairs(mol: Chem.Mol, pairs) -> list[tuple[int, int, int, int]]:
    """(h1, h2, c1, c2) of the pairs whose vicinal bond lies in a non-aromatic ring other than a
    three-membered one: the pairs the Karplus route estimates."""
    out = []
    for h1, h2 in pairs:
        cc = vicinal_fragment(mol, h1, h2)
        if cc is None:
            continue
        bond = mol.GetBondBetweenAtoms(*cc)
        # three-membered rings are outside the equation's scope (bent bonds): keep the table value
        if bond.IsInRing() and not bond.GetIsAromatic() and not _only_in_3_ring(mol, bond):
            out.append((h1, h2, *cc))
    return out


def _signed_volume(conf, centre: int, around) -> float:
    """(p1 - p0) . ((p2 - p0) x (p3 - p0)) of the four neighbours ``around`` of ``centre``."""
    p = [conf.GetAtomPosition(i) for i in around]
    u, v, w = p[1] - p[0], p[2] - p[0], p[3] - p[0]
    return u.DotProduct(v.CrossProduct(w))


def _labelled_faces(mol: Chem.Mol, seed: int):
    """A conformer-free copy whose tetrahedral ring atoms carry the configuration of a reference
    geometry (the molecule's own 3D conformer if it has one, else one ETKDG embedding), plus the ring
    CH2 groups whose two hydrogens are told apart by face, as [(hydrogen a, hydrogen b, neighbours,
    reference signed volume)]; None if no geometry can be made.

    Which CH2 hydrogen lies on which face must match the reference. Chiral constraints on CH2
    carbons make ETKDG return mostly twist-boats (BENCHMARKS.md), so those carbons are left free
    and in each new conformer the two hydrogens trade places where their face is wrong (the same
    geometry, relabelled). Other ring centres keep their tags as constraints."""
    m = Chem.Mol(mol)
    if not (m.GetNumConformers() and m.GetConformer().Is3D()):
        m.RemoveAllConformers()
        params = AllChem.ETKDGv3()
        params.randomSeed = int(seed)
        params.numThreads = 1
        if AllChem.EmbedMolecule(m, params) != 0:
            return None
    keep = {a.GetIdx(): a.GetChiralTag() for a in m.GetAtoms()}
    ref = m.GetConformer()
    Chem.AssignAtomChiralTagsFromStructure(m, confId=ref.GetId(), replaceExistingTags=True)
    faces = []
    for a in m.GetAtoms():  # faces matter only at ring atoms; elsewhere keep the input's own tags
        if not (a.IsInRing() and a.GetDegree() == 4):
            a.SetChiralTag(keep[a.GetIdx()])
            continue
        hs = [n for n in a.GetNeighbors() if n.GetAtomicNum() == 1]
        if len(hs) == 2:      # CH2, and CHD too: the two swap places as well as any H pair
            around = tuple(n.GetIdx() for n in a.GetNeighbors())
            faces.append((hs[0].GetIdx(), hs[1].GetIdx(), a.GetIdx(), around,
                          _signed_volume(ref, a.GetIdx(), around)))
            a.SetChiralTag(Chem.ChiralType.CHI_UNSPECIFIED)
    m.RemoveAllConformers()
    return m, faces


def _match_faces(conf, faces) -> None:
    """Swap the two hydrogens of every listed CH2 whose face differs from the reference."""
    for ha, hb, centre, around, sign in faces:
        if _signed_volume(conf, centre, around) * sign < 0:
            pa, pb = conf.GetAtomPosition(ha), conf.GetAtomPosition(hb)
            conf.SetAtomPosition(ha, pb)
            conf.SetAtomPosition(hb, pa)


#: Bonds kept around the ring systems when a molecule is cut down for conformer search.
REGION_DEPTH = 2


def _ring_systems(mol: Chem.Mol) -> list[set[int]]:
    """Atom sets of fused or spiro ring systems (rings sharing at least one atom)."""
    systems: list[set[int]] = []
    for ring in mol.GetRingInfo().AtomRings():
        merged = set(ring)
        for s in [s for s in systems if s & merged]:
            merged |= s
            systems.remove(s)
        systems.append(merged)
    return systems


def ring_region(mol: Chem.Mol, atoms, depth: int = REGION_DEPTH):
    """The ring systems holding ``atoms`` with ``depth`` bonds of surroundings, as (sub-molecule, index map).

    Ring conformations depend on the ring atoms and their near substituents; distant chains only
    cost embedding and force-field time.  Kept: the ring systems of ``atoms``, every heavy atom
    within ``depth`` bonds, whole ring systems, multiple-bond partners, charged partners and all
    neighbours of charged atoms and of C=C / C=N ends among the kept atoms, and the hydrogens of
    kept atoms.  Each single bond to a dropped heavy atom ends in a hydrogen placed
    where that atom was.  Returns None when nothing would be dropped or the cut fails.
    """
    systems = _ring_systems(mol)
    keep = set()
    for s in systems:
        if s & set(atoms):
            keep |= s
    frontier = set(keep)
    for _ in range(depth):
        frontier = {nb.GetIdx() for a in frontier for nb in mol.GetAtomWithIdx(a).GetNeighbors()
                    if nb.GetAtomicNum() > 1} - keep
        keep |= frontier
    changed = True
    while changed:
        changed = False
        for a in list(keep):
            atom = mol.GetAtomWithIdx(a)
            for b in atom.GetBonds():
                other = b.GetOtherAtomIdx(a)
                if other in keep:
                    continue
                far = mol.GetAtomWithIdx(other)
                bridging = sum(1 for nb in far.GetNeighbors() if nb.GetIdx() in keep) > 1
                # multiple-bond partners, charged partners (the cut keeps the net charge) and the
                # substituents of a kept double bond (its E/Z) stay
                double_end = any(x.GetBondType() == Chem.BondType.DOUBLE and not x.GetIsAromatic()
                                 and x.GetOtherAtom(atom).GetAtomicNum() in (6, 7)
                                 for x in atom.GetBonds())
                if b.GetBondType() != Chem.BondType.SINGLE or bridging or far.GetAtomicNum() == 1 \
                        or far.GetFormalCharge() != 0 or atom.GetFormalCharge() != 0 or double_end:
                    keep.add(other)
                    changed = True
            if atom.IsInRing():
                for s in systems:
                    if a in s and not s <= keep:
                        keep |= s
                        changed = True
    caps = {nb.GetIdx() for a in keep for nb in mol.GetAtomWithIdx(a).GetNeighbors()} - keep
    kept = sorted(keep | caps)
    if len(kept) == mol.GetNumAtoms():
        return None
    try:
        rw = Chem.RWMol(mol)
        for c in caps:
            atom = rw.GetAtomWithIdx(c)
            atom.SetAtomicNum(1)
            atom.SetFormalCharge(0)
            atom.SetIsotope(0)
            atom.SetNumRadicalElectrons(0)
            atom.SetChiralTag(Chem.ChiralType.CHI_UNSPECIFIED)
            atom.SetIsAromatic(False)
            atom.SetNoImplicit(True)
            atom.SetNumExplicitHs(0)
        for a in sorted(set(range(mol.GetNumAtoms())) - set(kept), reverse=True):
            rw.RemoveAtom(a)
        sub = rw.GetMol()
        Chem.SanitizeMol(sub)
    except Exception:       # an unusual cut: the caller embeds the whole molecule
        return None
    return sub, {old: new for new, old in enumerate(kept)}


def _optimised(m: Chem.Mol, cids) -> list:
    """MMFF (else UFF) energies after optimising the conformers ``cids`` of ``m``; Nones if neither
    force field applies."""
    try:
        props = AllChem.MMFFGetMoleculeProperties(m)
        out = []
        for cid in cids:
            ff = AllChem.MMFFGetMoleculeForceField(m, props, confId=cid) if props is not None \
                else AllChem.UFFGetMoleculeForceField(m, confId=cid)
            ff.Minimize(maxIts=300)
            out.append(ff.CalcEnergy())
        return out
    except Exception:
        return [None] * len(cids)


#: Conformers per embedding batch; a second batch follows unless the first found its lowest
#: minimum twice (ETKDG gives a cyclohexane chair in only about one conformer in five).
CONFORMER_BATCH = 8
#: Energy scatter (kcal/mol) within which an optimised conformer counts as the same minimum again.
RECUR_KCAL = 0.5
#: Regions with more atoms (hydrogens included) than this get one batch only: embedding and
#: optimising a second batch of a steroid-sized region costs about a second.
SECOND_BATCH_MAX_ATOMS = 50


def _distinct_conformers(m: Chem.Mol, faces, work, index, n_conformers: int, seed: int,
                         dedupe_deg: float):
    """[(conformer id, energy, dihedrals)] of the distinct optimised ETKDG conformers of ``m``.

    Conformers whose measured dihedrals all agree within ``dedupe_deg`` and whose energies agree
    within 0.05 kcal/mol count once. Batches of CONFORMER_BATCH are embedded until the lowest
    minimum has been reached twice or ``n_conformers`` have been tried (one batch for regions of
    more than SECOND_BATCH_MAX_ATOMS atoms).
    """
    params = AllChem.ETKDGv3()
    params.numThreads = 1
    params.enforceChirality = True
    params.timeout = EMBED_TIMEOUT_S     # a strained cage must not hold up the analysis
    params.maxIterations = 200
    params.clearConfs = False
    kept: list[tuple[int, float | None, list[float]]] = []
    tried: list[tuple[float | None, list[float]]] = []
    seen = 0
    for batch in range(max(1, math.ceil(n_conformers / CONFORMER_BATCH))):
        params.randomSeed = seed + batch
        AllChem.EmbedMultipleConfs(m, numConfs=min(CONFORMER_BATCH, n_conformers - seen),
                                   params=params)
        cids = [c.GetId() for c in m.GetConformers()]
        if len(cids) == seen:
            break
        for cid in cids[seen:]:
            _match_faces(m.GetConformer(cid), faces)
        for cid, e in zip(cids[seen:], _optimised(m, cids[seen:])):
            conf = m.GetConformer(cid)
            dih = [rdMolTransforms.GetDihedralDeg(conf, index[h1], index[c1], index[c2], index[h2])
                   for h1, h2, c1, c2 in work]
            tried.append((e, dih))
            if not any((e is None or e2 is None or abs(e - e2) < 0.05) and
                       all(abs(_wrap(x - y)) < dedupe_deg for x, y in zip(dih, d2)) for _, e2, d2 in kept):
                kept.append((cid, e, dih))
        seen = len(cids)
        if any(e is None for e, _ in tried) or m.GetNumAtoms() > SECOND_BATCH_MAX_ATOMS:
            break
        # the lowest minimum found again (same ring dihedrals, energy within the optimiser's
        # scatter of RECUR_KCAL) means the sample has settled
        e0, d0 = min(tried, key=lambda t: t[0])
        if sum(1 for e, d in tried if e - e0 < RECUR_KCAL and
               all(abs(_wrap(x - y)) < dedupe_deg for x, y in zip(d, d0))) >= 2:
            break
    return kept


def ring_vicinal_couplings(mol: Chem.Mol, pairs, n_conformers: int = 16, seed: int = 20240611,
                           dedupe_deg: float = 10.0) -> dict[tuple[int, int], tuple[float, str]]:
    """3J for vicinal H–C–C–H pairs across non-aromatic ring bonds, {(h1, h2): (j_hz, basis)}.

    The conformers are those of the ring region (``ring_region``) when that is smaller than the
    molecule. Ring faces of every hydrogen follow the molecule's own 3D conformer when it has one (pass the
    geometry the configurations were read from, so that the faces match the shift sets), else one
    embedding with ``seed``. ETKDG conformers (fixed ``seed``, faces enforced) are MMFF-optimised; conformers whose measured dihedrals all
    agree within ``dedupe_deg`` and whose energies agree within 0.05 kcal/mol count once; the rest are
    Boltzmann-weighted at 298 K. Pairs that are not such ring pairs are left out. Returns {} when the
    molecule cannot be embedded.
    """
    try:
        work = ring_pairs(mol, list(pairs))
        if not work:
            return {}
        region = ring_region(mol, {c for _, _, c1, c2 in work for c in (c1, c2)})
        source, index = region if region else (mol, {a: a for a in range(mol.GetNumAtoms())})
        labelled = _labelled_faces(source, seed)
        if labelled is None:
            return {}
        m, faces = labelled
        kept = _distinct_conformers(m, faces, work, index, int(n_conformers), int(seed), dedupe_deg)
        if not kept:
            return {}
        if all(e is not None for _, e, _ in kept):
            e0 = min(e for _, e, _ in kept)
            weights = [math.exp(-(e - e0) / _RT_KCAL) for _, e, _ in kept]
        else:
            weights = [1.0] * len(kept)
        total = sum(weights)
        basis = _BASIS_RING.format(n=len(kept))
        out: dict[tuple[int, int], tuple[float, str]] = {}
        for h1, h2, _, _ in work:
            acc = 0.0
            for (cid, _, _), w in zip(kept, weights):
                conf = m.GetConformer(cid)
                j = vicinal_j_from_geometry(
                    mol, h1, h2, lambda a, b, c, d, conf=conf: rdMolTransforms.GetDihedralDeg(
                        conf, index[a], index[b], index[c], index[d]))
                acc += w * j
            out[(h1, h2)] = (round(acc / total, 2), basis)
        return out
    except Exception:  # never fail a valid molecule: the caller keeps its table value
        return {}
