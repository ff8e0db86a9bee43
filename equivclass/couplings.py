"""Scalar couplings J between active nuclei, estimated from the bonds that connect them.

J(a, b) is looked up in `data/couplings.csv` by the class of the shortest bond path between a and b
(count, bond types, cis/trans across a double bond, aromatic ortho/meta/para and ring type, geminal or
vicinal, the kind of phosphorus). Alkene H–H couplings with heteroatom substituents follow the
substituents' electronegativities instead (`data/alkene_couplings.csv`; rule names gain "_hetero"). Where several shortest paths exist the largest |J| is used, so that
symmetry-related pairs always get the same estimate. Couplings below the threshold, beyond five bonds,
to exchange-decoupled protons, or to dilute isotopes at natural abundance are zero.
"""
from __future__ import annotations

import functools
from dataclasses import dataclass

from rdkit import Chem
from .atoms import atom_list

from . import nucdata
from .tables import table_rows
from .stereo import Configuration

MAX_BONDS = 5
DEFAULT_THRESHOLD_HZ = 0.3


@dataclass(frozen=True)
class Coupling:
    a: int
    b: int
    j_hz: float
    basis: str
    n_bonds: int


@functools.lru_cache(maxsize=1)
def coupling_table() -> dict[str, tuple[float, str]]:
    return {r["rule"]: (float(r["j_hz"]), r["source"]) for r in table_rows("couplings.csv")}


def _shortest_paths(adj, a: int, b: int, dist_from_a: dict, limit: int = 8):
    """All shortest bond paths a → b (at most `limit`), from BFS distances measured from a."""
    paths = []

    def walk(node, tail):
        if len(paths) >= limit:
            return
        if node == a:
            paths.append([a] + tail)
            return
        d = dist_from_a[node]
        for j in adj[node]:
            if dist_from_a.get(j) == d - 1:
                walk(j, [node] + tail)

    walk(b, [])
    return paths


def _bfs(adj, start: int, depth: int) -> dict[int, int]:
    dist, frontier = {start: 0}, [start]
    for d in range(1, depth + 1):
        nxt = []
        for i in frontier:
            for j in adj[i]:
                if j not in dist:
                    dist[j] = d
                    nxt.append(j)
        frontier = nxt
    return dist


def _aromatic_ring(mol: Chem.Mol, atoms):
    """The smallest aromatic ring that holds all `atoms`, or None."""
    best = None
    for ring in mol.GetRingInfo().AtomRings():
        if all(x in ring for x in atoms) and all(mol.GetAtomWithIdx(x).GetIsAromatic() for x in ring):
            if best is None or len(ring) < len(best):
                best = ring
    return best


def _ring_positions(mol: Chem.Mol, ring, atoms):
    """Heteroaromatic ring kind and the ring positions (1 = the heteroatom) of `atoms`."""
    hetero = [x for x in ring if mol.GetAtomWithIdx(x).GetAtomicNum() != 6]
    if not hetero:
        return "benzene", None
    h = hetero[0]
    kinds = {7: "pyridine" if len(ring) == 6 else "pyrrole", 8: "furan", 16: "thiophene"}
    kind = kinds.get(mol.GetAtomWithIdx(h).GetAtomicNum(), "other")
    if len(hetero) > 1:
        kind = "other"
    k = ring.index(h)
    order = list(ring[k:]) + list(ring[:k])
    n = len(ring)
    forward = tuple(sorted(order.index(x) + 1 for x in atoms))
    backward = tuple(sorted((n - order.index(x)) % n + 1 for x in atoms))
    return kind, min(forward, backward)   # numbered from the heteroatom the way that gives low locants


def _phosphorus_kind(atom: Chem.Atom) -> str:
    if atom.GetFormalCharge() > 0 and atom.GetDegree() == 4:
        return "phosphonium"
    if atom.GetDegree() + atom.GetTotalNumHs() >= 4 or any(
            b.GetBondType() == Chem.BondType.DOUBLE for b in atom.GetBonds()):
        return "p5"
    return "p3"


def _is_cis(config_planar: dict, x: int, a: int, b: int, y: int):
    p = config_planar.get(frozenset((a, b)))
    if p is None:
        return None
    return frozenset((x, y)) in p.cis


def _n_fluorines(atom: Chem.Atom) -> int:
    return sum(1 for n in atom.GetNeighbors() if n.GetAtomicNum() == 9)


def classify(mol: Chem.Mol, path, planar: dict) -> str | None:
    """The rule name of data/couplings.csv that a bond path a…b belongs to, or None (no estimate)."""
    atoms = [mol.GetAtomWithIdx(i) for i in path]
    za, zb = atoms[0].GetAtomicNum(), atoms[-1].GetAtomicNum()
    pair = "".join(sorted((_sym(za), _sym(zb))))
    nb = len(path) - 1
    inner = atoms[1:-1]
    bond = lambda i, j: mol.GetBondBetweenAtoms(path[i], path[j])  # noqa: E731
    if pair == "HH":
        return _classify_hh(mol, path, atoms, inner, nb, bond, planar)
    if pair == "FH":
        return _classify_hf(mol, path, atoms, inner, nb, bond, planar)
    if pair == "FF":
        return _classify_ff(mol, path, atoms, inner, nb, bond, planar)
    if pair == "HP":
        return _classify_hp(mol, path, atoms, inner, nb, bond)
    if pair == "FP":
        p = atoms[0] if za == 15 else atoms[-1]
        if nb == 1:
            return "PF1_p3" if _phosphorus_kind(p) == "p3" else "PF1_p5"
        if nb == 2 and inner[0].GetAtomicNum() == 6:
            return "PF2_pcf"
        return None
    if pair == "CF":
        return _classify_cf(atoms, inner, nb)
    if pair == "CP":
        return _classify_cp(atoms, inner, nb)
    if nb == 1 and pair in ("CH", "CC"):
        c = atoms[0] if za == 6 else atoms[-1]
        if pair == "CC":
            return "CC1_single" if bond(0, 1).GetBondType() == Chem.BondType.SINGLE else "CC1_multiple"
        hyb = c.GetHybridization()
        if hyb == Chem.HybridizationType.SP3 and sum(
                1 for n in c.GetNeighbors() if n.GetAtomicNum() in (9, 17, 35, 53)) >= 2:
            return "CH1_sp3_halo"
        return {Chem.HybridizationType.SP3: "CH1_sp3", Chem.HybridizationType.SP: "CH1_sp"}.get(
            hyb, "CH1_sp2")
    return None


def _classify_cf(atoms, inner, nb):
    """13C–19F by bond count: the carbon that carries the fluorine decides CF3, CF2, aryl or alkyl."""
    f = atoms[0] if atoms[0].GetAtomicNum() == 9 else atoms[-1]
    cf = f.GetNeighbors()[0]
    nf = _n_fluorines(cf)
    kind = "cf3" if nf >= 3 else ("aryl" if cf.GetIsAromatic() else None)
    if nb == 1:
        return "CF1_cf3" if nf >= 3 else ("CF1_cf2" if nf == 2 else ("CF1_aryl" if cf.GetIsAromatic()
                                                                     else "CF1_cf"))
    if nb in (2, 3):
        if kind == "aryl" and not all(x.GetIsAromatic() for x in inner):
            kind = None
        return f"CF{nb}_{kind or 'alkyl'}"
    if nb == 4 and kind is not None:
        return f"CF4_{kind}" if kind == "cf3" or all(x.GetIsAromatic() for x in inner) else None
    return None


def _classify_cp(atoms, inner, nb):
    """13C–31P by bond count and the kind of phosphorus (phosphine, phosphonium, P=O)."""
    p = atoms[0] if atoms[0].GetAtomicNum() == 15 else atoms[-1]
    c = atoms[-1] if p is atoms[0] else atoms[0]
    kind = _phosphorus_kind(p)
    seq = inner if p is atoms[0] else inner[::-1]     # from P towards C
    via_oxygen = bool(seq) and seq[0].GetAtomicNum() == 8
    if nb == 1:
        if kind == "p5":
            return "CP1_p5_aryl" if c.GetIsAromatic() else "CP1_p5_alkyl"
        return f"CP1_{kind}"
    if nb == 2:
        return "CP2_poc" if via_oxygen else ("CP2_p3" if kind == "p3" else "CP2_p5")
    if nb == 3:
        return "CP3_pocc" if via_oxygen else ("CP3_p3" if kind == "p3" else "CP3_p5")
    return None


def _sym(z: int) -> str:
    return {1: "H", 6: "C", 9: "F", 15: "P"}.get(z, "?")


def _classify_hh(mol, path, atoms, inner, nb, bond, planar):
    if nb == 2:
        c = inner[0]
        three = _three_ring_kind(mol, c.GetIdx())
        if three:
            return f"HH2_{three}"
        if c.GetAtomicNum() == 7 and any(n.GetAtomicNum() == 6 and _is_carbonyl(n) for n in c.GetNeighbors()):
            return "HH2_amide"
        if c.GetAtomicNum() == 6 and c.GetHybridization() == Chem.HybridizationType.SP2:
            return "HH2_sp2"
        if c.GetAtomicNum() == 6:
            ring_info = mol.GetRingInfo()
            if ring_info.IsAtomInRingOfSize(c.GetIdx(), 5) and any(
                    n.GetAtomicNum() == 8 and n.IsInRingSize(5) and
                    any(c.GetIdx() in r and n.GetIdx() in r and len(r) == 5 for r in ring_info.AtomRings())
                    for n in c.GetNeighbors()):
                return "HH2_ring5_oxygen"
            if any(n.GetAtomicNum() == 6 and (_is_carbonyl(n) or any(
                    b.GetBondType() == Chem.BondType.TRIPLE and b.GetOtherAtom(n).GetAtomicNum() == 7
                    for b in n.GetBonds())) for n in c.GetNeighbors()):
                return "HH2_sp3_carbonyl"
            return "HH2_sp3"
        return "HH2_other"
    if nb == 3:
        b12 = bond(1, 2)
        if b12.GetIsAromatic():
            ring = _aromatic_ring(mol, path[1:3])
            if ring is None:
                return "HH3_other"
            kind, pos = _ring_positions(mol, ring, path[1:3])
            if kind == "benzene":
                return "HH3_benzene_ortho" if len(ring) == 6 else "HH3_aromatic5_other"
            if kind in ("pyridine", "furan", "thiophene", "pyrrole"):
                tag = "23" if 2 in pos else "34"
                return f"HH3_{kind}_{tag}"
            key = _two_hetero_ring_rule(mol, ring, path[1:3])
            if key is not None:
                return key
            return "HH3_benzene_ortho" if len(ring) == 6 else "HH3_aromatic5_other"
        if b12.GetBondType() == Chem.BondType.DOUBLE:
            ring_size = _small_ring_size(mol, path[1], path[2])
            if ring_size:
                return f"HH3_ring_alkene_{ring_size}"
            cis = _is_cis(planar, path[0], path[1], path[2], path[3])
            if cis is False:
                both = all(any(n.GetAtomicNum() > 1 and n.GetIdx() not in path for n in c.GetNeighbors())
                           for c in inner)
                return "HH3_alkene_trans_disubstituted" if both else "HH3_alkene_trans"
            return "HH3_alkene_cis"
        c1, c2 = inner
        if {c1.GetAtomicNum(), c2.GetAtomicNum()} == {6, 8}:
            return "HH3_hcoh"
        if c1.GetAtomicNum() == 7 or c2.GetAtomicNum() == 7:
            c = c2 if c1.GetAtomicNum() == 7 else c1
            if c.GetAtomicNum() == 6 and c.GetHybridization() == Chem.HybridizationType.SP3:
                return {3: "HH3_amide_nh_ch3", 2: "HH3_amide_nh_ch2", 1: "HH3_amide_nh_ch"}.get(
                    c.GetTotalNumHs(includeNeighbors=True), "HH3_amide_nh")
            return "HH3_amide_nh"
        if c1.GetAtomicNum() == 6 and c2.GetAtomicNum() == 6:
            sp2 = [c for c in inner if c.GetHybridization() == Chem.HybridizationType.SP2]
            if any(_is_carbonyl(c) for c in sp2):
                other = c2 if _is_carbonyl(c1) else c1
                if other.GetHybridization() == Chem.HybridizationType.SP2 and not other.GetIsAromatic() \
                        and not _is_carbonyl(other):
                    return "HH3_cho_conj"
                if other.GetTotalNumHs(includeNeighbors=True) == 3:
                    return "HH3_cho_methyl"
                return "HH3_cho"
            if sp2:
                ring = _endocyclic_alkene_ring(mol, c1, c2)
                if ring:
                    return f"HH3_allylic_ring{ring}"
                sp3 = c2 if c1.GetHybridization() == Chem.HybridizationType.SP2 else c1
                if any(n.GetAtomicNum() == 8 for n in sp3.GetNeighbors()):
                    return "HH3_allylic_vicinal_oxygen"
                return "HH3_allylic_vicinal"
            return _methyl_methine_rule(c1, c2) or "HH3_sp3"
        return "HH3_other"
    if nb == 4:
        if _is_cumulated(bond(1, 2), bond(2, 3)):
            return "HH4_allene"
        if all(x.GetIsAromatic() for x in inner):
            ring = _aromatic_ring(mol, path[1:4])
            if ring is not None:
                kind, pos = _ring_positions(mol, ring, (path[1], path[3]))
                if kind == "benzene":
                    return "HH4_benzene_meta" if len(ring) == 6 else None
                if kind in ("pyridine", "furan", "thiophene", "pyrrole"):
                    key = f"HH4_{kind}_{pos[0]}{pos[1]}"
                    return key if key in coupling_table() else None
            return None
        for i in (1, 2):
            if bond(i, i + 1).GetBondType() == Chem.BondType.DOUBLE and not bond(i, i + 1).GetIsAromatic():
                return "HH4_allylic"
            if bond(i, i + 1).GetBondType() == Chem.BondType.TRIPLE:
                return "HH4_propargylic"
        return None
    if nb == 5:
        if _is_cumulated(bond(2, 3), bond(3, 4)) or _is_cumulated(bond(1, 2), bond(2, 3)):
            return "HH5_allene"
        if all(x.GetIsAromatic() for x in inner):
            ring = _aromatic_ring(mol, path[1:5])
            if ring is not None and len(ring) == 6 and _ring_positions(mol, ring, ())[0] == "benzene":
                return "HH5_benzene_para"
            return None
        if bond(2, 3).GetBondType() == Chem.BondType.DOUBLE and not bond(2, 3).GetIsAromatic():
            return "HH5_homoallylic"
        if bond(2, 3).GetBondType() == Chem.BondType.TRIPLE:
            return "HH5_homopropargylic"
    return None


_TWO_HETERO_RINGS = {
    (6, ("N", "N"), (1, 2)): "pyridazine", (6, ("N", "N"), (1, 3)): "pyrimidine",
    (6, ("N", "N"), (1, 4)): "pyrazine",
    (5, ("N", "N"), (1, 3)): "imidazole", (5, ("O", "N"), (1, 3)): "oxazole",
    (5, ("S", "N"), (1, 3)): "thiazole", (5, ("N", "N"), (1, 2)): "pyrazole",
    (5, ("O", "N"), (1, 2)): "isoxazole", (5, ("S", "N"), (1, 2)): "isothiazole",
}
_LOCANT_PRIORITY = {"O": 0, "S": 1, "N": 2}


def _two_hetero_ring_rule(mol: Chem.Mol, ring, pair) -> str | None:
    """Rule name HH3_<ring>_<locants> of an ortho H–H pair in a diazine or a 1,2-/1,3-azole, numbered
    the usual way (heteroatoms lowest locants, O before S before N at position 1), when data/couplings.csv
    has that row; None otherwise."""
    n = len(ring)
    syms = [mol.GetAtomWithIdx(i).GetSymbol() for i in ring]
    if sum(1 for x in syms if x != "C") != 2:
        return None
    best = None
    for start in range(n):
        for step in (1, -1):
            order = [ring[(start + step * k) % n] for k in range(n)]
            sym = [mol.GetAtomWithIdx(i).GetSymbol() for i in order]
            hetero = tuple(k + 1 for k, x in enumerate(sym) if x != "C")
            if hetero[0] != 1:
                continue
            loc = tuple(sorted(order.index(a) + 1 for a in pair))
            rank = (hetero, _LOCANT_PRIORITY.get(sym[0], 9), tuple(sym), loc)
            if best is None or rank < best[0]:
                best = (rank, sym)
    if best is None:
        return None
    (hetero, _, _, loc), sym = best
    name = _TWO_HETERO_RINGS.get((n, tuple(sym[k - 1] for k in hetero), hetero))
    if name is None:
        return None
    key = f"HH3_{name}_{loc[0]}{loc[1]}"
    return key if key in coupling_table() else None


def _methyl_methine_rule(c1: Chem.Atom, c2: Chem.Atom) -> str | None:
    """CH3–CH(X)R and CH3–CH(X)2 with X = N, O, F, Cl, Br on the methine and no C=O beside it: their
    rotamer-averaged 3J is smaller than the ethyl value (2-propanol 6.1, acetaldehyde diethyl acetal 5.3;
    Pretsch H-H tables, recalled from memory)."""
    hs = {c.GetIdx(): c.GetTotalNumHs(includeNeighbors=True) for c in (c1, c2)}
    if sorted(hs.values()) != [1, 3]:
        return None
    ch = c1 if hs[c1.GetIdx()] == 1 else c2
    n_x = sum(1 for n in ch.GetNeighbors() if n.GetAtomicNum() in (7, 8, 9, 17, 35))
    if n_x == 0 or any(n.GetAtomicNum() == 6 and _is_carbonyl(n) for n in ch.GetNeighbors()):
        return None
    return "HH3_ch3_chx" if n_x == 1 else "HH3_ch3_chx2"


def _endocyclic_alkene_ring(mol: Chem.Mol, c1: Chem.Atom, c2: Chem.Atom) -> int | None:
    """5 or 6 when the sp3–sp2 bond c1–c2 and the sp2 carbon's C=C lie in one ring of that size (the
    allylic H–C–C=C dihedral is then fixed by the ring), else None."""
    if (c1.GetHybridization() == Chem.HybridizationType.SP2) == (c2.GetHybridization() == Chem.HybridizationType.SP2):
        return None   # the single bond of a ring diene is not an allylic =CH–CH2 pair
    sp2 = c1 if c1.GetHybridization() == Chem.HybridizationType.SP2 else c2
    double = next((b.GetOtherAtomIdx(sp2.GetIdx()) for b in sp2.GetBonds()
                   if b.GetBondType() == Chem.BondType.DOUBLE and not b.GetIsAromatic()), None)
    if double is None:
        return None
    for r in mol.GetRingInfo().AtomRings():
        if len(r) in (5, 6) and c1.GetIdx() in r and c2.GetIdx() in r and double in r:
            return len(r)
    return None


def _is_cumulated(b1: Chem.Bond, b2: Chem.Bond) -> bool:
    return b1.GetBondType() == Chem.BondType.DOUBLE and b2.GetBondType() == Chem.BondType.DOUBLE


def three_ring_kind(mol: Chem.Mol, atom: int) -> str | None:
    """'cyclopropane', 'oxirane' or 'aziridine' when the atom is in a saturated three-membered ring."""
    for ring in mol.GetRingInfo().AtomRings():
        if len(ring) == 3 and atom in ring:
            zs = {mol.GetAtomWithIdx(i).GetAtomicNum() for i in ring}
            if 8 in zs:
                return "oxirane"
            if 7 in zs:
                return "aziridine"
            return "cyclopropane"
    return None


_three_ring_kind = three_ring_kind


def _is_carbonyl(atom: Chem.Atom) -> bool:
    return any(b.GetBondType() == Chem.BondType.DOUBLE and b.GetOtherAtom(atom).GetAtomicNum() in (8, 16)
               for b in atom.GetBonds())


def _small_ring_size(mol: Chem.Mol, i: int, j: int) -> int | None:
    sizes = [len(r) for r in mol.GetRingInfo().AtomRings() if i in r and j in r and len(r) <= 6]
    return min(sizes) if sizes else None


def _across_sp2(prefix: str, path, b12, planar) -> str | None:
    """Three-bond rule across an aromatic bond (ortho) or a C=C (cis/trans), or None."""
    if b12.GetIsAromatic():
        return f"{prefix}_aryl_ortho"
    if b12.GetBondType() == Chem.BondType.DOUBLE:
        cis = _is_cis(planar, path[0], path[1], path[2], path[3])
        return f"{prefix}_alkene_trans" if cis is False else f"{prefix}_alkene_cis"
    return None


def _classify_hf(mol, path, atoms, inner, nb, bond, planar):
    f_first = atoms[0].GetAtomicNum() == 9
    if nb == 2:
        c = inner[0]
        if c.GetHybridization() == Chem.HybridizationType.SP2:
            return "HF2_vinyl"
        return "HF2_chf2" if _n_fluorines(c) >= 2 else "HF2_ch2f"
    if nb == 3:
        across = _across_sp2("HF3", path, bond(1, 2), planar)
        if across:
            return across
        cf = inner[0] if f_first else inner[1]
        nf = _n_fluorines(cf)
        return "HF3_cf3" if nf >= 3 else ("HF3_cf2" if nf == 2 else "HF3_cf")
    if nb == 4 and all(x.GetIsAromatic() for x in inner):
        return "HF4_aryl_meta"
    if nb == 5 and all(x.GetIsAromatic() for x in inner):
        return "HF5_aryl_para"
    return None


def _classify_ff(mol, path, atoms, inner, nb, bond, planar):
    if nb == 2:
        return "FF2_vinyl" if inner[0].GetHybridization() == Chem.HybridizationType.SP2 else "FF2_sp3"
    if nb == 3:
        return _across_sp2("FF3", path, bond(1, 2), planar) or "FF3_sp3"
    if nb == 4:
        if all(x.GetIsAromatic() for x in inner):
            return "FF4_aryl_meta"
        if all(x.GetHybridization() == Chem.HybridizationType.SP3 for x in inner):
            return "FF4_sp3"
        return None
    if nb == 5 and all(x.GetIsAromatic() for x in inner):
        return "FF5_aryl_para"
    return None


def _classify_hp(mol, path, atoms, inner, nb, bond):
    p = atoms[0] if atoms[0].GetAtomicNum() == 15 else atoms[-1]
    kind = _phosphorus_kind(p)
    seq = inner if atoms[0].GetAtomicNum() == 15 else inner[::-1]  # atoms from P towards H
    if nb == 1:
        return f"HP1_{kind}"
    if nb == 2:
        return f"HP2_{kind}" if seq[0].GetAtomicNum() == 6 else None
    if nb == 3:
        x1, x2 = seq
        if x1.GetAtomicNum() == 8 and x2.GetAtomicNum() == 6:
            return "HP3_poch"
        if x1.GetAtomicNum() == 7 and x2.GetAtomicNum() == 6:
            return "HP3_pnch"
        if x1.GetAtomicNum() == 6 and x2.GetAtomicNum() == 6:
            if x1.GetIsAromatic() and x2.GetIsAromatic():
                return "HP3_aryl_ortho_p3" if kind == "p3" else "HP3_aryl_ortho_p5"
            return "HP3_pcch_p3" if kind == "p3" else "HP3_pcch_p5"
        return None
    if nb == 4:
        if seq[0].GetAtomicNum() == 8 and all(x.GetAtomicNum() == 6 for x in seq[1:]):
            return "HP4_pocch"
        if all(x.GetIsAromatic() for x in seq):
            return "HP4_aryl_meta"
        return None
    if nb == 5 and all(x.GetIsAromatic() for x in seq):
        return "HP5_aryl_para"
    return None


def carbon_partner_couplings(mol: Chem.Mol, config: Configuration, carbons, partners,
                             threshold_hz: float = DEFAULT_THRESHOLD_HZ) -> tuple[Coupling, ...]:
    """Couplings of natural-abundance 13C to abundant heteronuclei (19F, 31P, 2H): the splittings a
    1H-decoupled 13C spectrum shows. They never join the coupling network of the other nuclei."""
    planar = {frozenset((p.a, p.b)): p for p in config.planar}
    adj = [tuple(n.GetIdx() for n in atom.GetNeighbors()) for atom in atom_list(mol)]
    others = [b for b in partners if mol.GetAtomWithIdx(b).GetAtomicNum() in (9, 15) or
              (mol.GetAtomWithIdx(b).GetAtomicNum() == 1 and mol.GetAtomWithIdx(b).GetIsotope() > 1)]
    out = []
    for c in carbons:
        dist = _bfs(adj, c, 4)
        for b in others:
            if b not in dist:
                continue
            best = _best_estimate(mol, adj, c, b, dist, planar)
            if best is not None and abs(best[0]) >= threshold_hz:
                out.append(Coupling(min(c, b), max(c, b), round(best[0], 3), best[1], dist[b]))
    return tuple(out)


def labile_protons(mol: Chem.Mol) -> frozenset[int]:
    """Protons on O, S and non-amide N: exchange-decoupled by default (amide and sulfonamide N–H differ:
    amide N–H couples, common practice)."""
    out = set()
    for atom in atom_list(mol):
        if atom.GetAtomicNum() != 1 or atom.GetDegree() != 1:
            continue
        x = atom.GetNeighbors()[0]
        if x.GetAtomicNum() in (8, 16, 34):
            out.add(atom.GetIdx())
        elif x.GetAtomicNum() == 7:
            amide = any(n.GetAtomicNum() == 6 and _is_carbonyl(n) for n in x.GetNeighbors())
            if not amide:
                out.add(atom.GetIdx())
    return frozenset(out)


def estimate(mol: Chem.Mol, config: Configuration, partners, decoupled=frozenset(),
             threshold_hz: float = DEFAULT_THRESHOLD_HZ) -> tuple[Coupling, ...]:
    """Non-zero couplings among `partners` (atom indices of abundant or enriched active nuclei)."""
    planar = {frozenset((p.a, p.b)): p for p in config.planar}
    partners = sorted(set(partners) - set(decoupled))
    adj = [tuple(n.GetIdx() for n in atom.GetNeighbors()) for atom in atom_list(mol)]
    kind = [(atom.GetAtomicNum(), atom.GetIsotope()) for atom in atom_list(mol)]
    out = []
    memo: dict = {}
    for a in partners:
        dist = _bfs(adj, a, MAX_BONDS)
        for b in partners:
            if b <= a or b not in dist:
                continue
            key = _path_class_key(adj, kind, a, b, dist[b], planar)
            if key is None:
                best = _best_estimate(mol, adj, a, b, dist, planar)
            elif key in memo:
                best = memo[key]
            else:
                best = memo[key] = _best_estimate(mol, adj, a, b, dist, planar)
            if best is not None and abs(best[0]) >= threshold_hz:
                out.append(Coupling(a, b, round(best[0], 3), best[1], dist[b]))
    return tuple(out)


def _path_class_key(adj, kind, a: int, b: int, n_bonds: int, planar: dict):
    """A key shared by pairs whose estimate must be equal, or None.

    Two terminal atoms (H, F) reach each other only through their anchor atoms, so every pair with
    the same anchors, elements and isotopes has the same shortest paths up to the end atoms, and
    the same rule — except across a double bond with fixed geometry (cis/trans of the end atoms).
    """
    if len(adj[a]) != 1 or len(adj[b]) != 1:
        return None
    xa, xb = adj[a][0], adj[b][0]
    if n_bonds == 3 and frozenset((xa, xb)) in planar:
        return None
    return xa, xb, kind[a], kind[b]


@functools.lru_cache(maxsize=1)
def huggins_chi() -> dict[str, float]:
    """Huggins electronegativities by element symbol (data/karplus.csv)."""
    return {r["key"]: float(r["value"]) for r in table_rows("karplus.csv") if r["kind"] == "chi"}


@functools.lru_cache(maxsize=1)
def _alkene_lines() -> dict[str, tuple[float, float]]:
    """{rule: (J of ethylene, slope per unit of electronegativity)} from data/alkene_couplings.csv."""
    chi = huggins_chi()
    out = {}
    for r in table_rows("alkene_couplings.csv"):
        j0, jf = float(r["ethylene_hz"]), float(r["vinyl_fluoride_hz"])
        out[r["rule"]] = (j0, (j0 - jf) / (chi["F"] - chi["H"]))
    return out


_HETERO = frozenset((7, 8, 9, 16, 17, 35, 53))


def _alkene_value(mol: Chem.Mol, path, rule: str) -> float | None:
    """J of an alkene H–H rule from the substituents' electronegativities (data/alkene_couplings.csv),
    or None when no substituent of the two alkene carbons is a heteroatom. The sum of the
    electronegativity differences is capped at that of one fluorine, the calibration's end point."""
    line = _alkene_lines().get(rule)
    if line is None:
        return None
    if rule == "HH2_sp2":
        c = mol.GetAtomWithIdx(path[1])
        partner = next((b.GetOtherAtom(c) for b in c.GetBonds()
                        if b.GetBondType() == Chem.BondType.DOUBLE), None)
        if partner is None or partner.GetAtomicNum() != 6:
            return None
        carbons = (c, partner)
    else:
        carbons = (mol.GetAtomWithIdx(path[1]), mol.GetAtomWithIdx(path[2]))
    skip = set(path) | {c.GetIdx() for c in carbons}
    subs = [n for c in carbons for n in c.GetNeighbors()
            if n.GetIdx() not in skip and n.GetAtomicNum() > 1]
    if not any(n.GetAtomicNum() in _HETERO for n in subs):
        return None
    chi = huggins_chi()
    h = chi["H"]
    # the line is calibrated between ethylene and vinyl fluoride: no extrapolation beyond one fluorine
    shift = min(sum(chi.get(n.GetSymbol(), h) - h for n in subs), chi["F"] - h)
    return line[0] - line[1] * shift


def _best_estimate(mol, adj, a, b, dist, planar):
    """(J, rule) over all shortest paths a…b: the largest |J|, ties broken by rule name, so that
    symmetry-related pairs get one estimate; None when no rule applies."""
    table = coupling_table()
    best = None
    for path in _shortest_paths(adj, a, b, dist):
        rule = classify(mol, path, planar)
        if rule is None or rule not in table:
            continue
        value = table[rule][0]
        if rule in ("HH3_alkene_cis", "HH3_alkene_trans", "HH3_alkene_trans_disubstituted", "HH2_sp2"):
            base = "HH3_alkene_trans" if rule == "HH3_alkene_trans_disubstituted" else rule
            alkene = _alkene_value(mol, path, base)
            if alkene is not None:
                value, rule = alkene, base + "_hetero"
        j = value * _gamma_scale(mol, a, b)
        if best is None or abs(j) > abs(best[0]) or (abs(j) == abs(best[0]) and rule < best[1]):
            best = (j, rule)
    return best


def _gamma_scale(mol: Chem.Mol, a: int, b: int) -> float:
    """Couplings to 2H or 3H scale with the gyromagnetic ratio relative to 1H."""
    scale = 1.0
    for i in (a, b):
        atom = mol.GetAtomWithIdx(i)
        if atom.GetAtomicNum() == 1 and atom.GetIsotope() > 1:
            scale *= nucdata.isotope(f"{atom.GetIsotope()}H").gamma / nucdata.isotope("1H").gamma
    return scale
