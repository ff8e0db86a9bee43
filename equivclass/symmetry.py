"""The symmetry group G of the time-averaged structure, asked one question at a time.

G is the set of graph automorphisms (element, isotope, resonance-aware charge and bond order) that keep
every fixed configuration of `stereo.Configuration`: all tetrahedral parities kept (a proper operation) or,
in an achiral medium, all inverted at once (an improper one), and every planar bond's cis/trans relations
kept. G is never listed: each question ("is there an element of G that maps these atoms so?") is answered
by a depth-first search for one witness, pruned by colour refinement (Weisfeiler–Lehman) and by checking
each parity as soon as a centre and its neighbours are mapped. Orbits of G are chemical-equivalence sets;
proper-only orbits separate homotopic from enantiotopic members (Mislow–Raban).
"""
from __future__ import annotations

from collections import deque
from dataclasses import dataclass

from rdkit import Chem
from .atoms import atom_list, bond_list
from .disjoint_sets import DisjointSets
from .permutations import parity as perm_parity

from .errors import InputError
from .stereo import Configuration

DEFAULT_STEP_BUDGET = 200_000


class SymmetryTooComplex(InputError):
    """The witness search exceeded its step budget."""


@dataclass(frozen=True)
class Graph:
    """The labelled explicit-H graph with its stable colouring and fixed configurations."""

    n: int
    nbrs: tuple[tuple[int, ...], ...]
    bond_label: dict           # frozenset({i, j}) -> label
    colour: tuple[int, ...]
    heavy: tuple[bool, ...]
    centres: dict              # atom -> (nbrs, parity)
    centres_at: tuple[tuple[int, ...], ...]  # atom -> centres it is, or is a listed neighbour of
    planar: dict               # frozenset({a, b}) -> PlanarBond
    planar_at: tuple[tuple, ...]             # atom -> planar-bond keys touching it or its subs
    has_centres: bool
    budget: int
    starts: tuple[int, ...] = ()   # heavy atoms, then every atom: where the search order restarts


def _resonance_labels(mol: Chem.Mol):
    """Atoms whose charge and bonds whose order are set by the drawn resonance form, not by the molecule.

    Charges on aromatic atoms are spread over the ring (cyclopentadienide, imidazolium) and are not
    compared. Neighbours of one atom with the same element where the bonds to them differ in order and
    one of them
    carries a charge (nitro, carboxylate, phosphate, sulfonate, amidinium, guanidinium), or that are
    terminal chalcogens (C(=O)O−, S(=O)2O−), are made alike.
    """
    free_charge, conj_bonds = set(), set()
    for atom in atom_list(mol):
        groups = {}
        for b in atom.GetBonds():
            o = b.GetOtherAtom(atom)
            if o.GetAtomicNum() == 1:
                continue
            key = (o.GetAtomicNum(), o.GetIsotope(), o.GetDegree() == 1)
            groups.setdefault(key, []).append((b, o))
        for (z, _iso, terminal), members in groups.items():
            if len(members) < 2:
                continue
            orders = {b.GetBondTypeAsDouble() for b, _ in members}
            charged = any(o.GetFormalCharge() != 0 for _, o in members)
            if len(orders) > 1 and (charged or (terminal and z in (8, 16))):
                for b, o in members:
                    if b.GetBondType() in (Chem.BondType.SINGLE, Chem.BondType.DOUBLE):
                        conj_bonds.add(b.GetIdx())
                        free_charge.add(o.GetIdx())
    return free_charge, conj_bonds


def build_graph(mol: Chem.Mol, config: Configuration, budget: int = DEFAULT_STEP_BUDGET) -> Graph:
    n = mol.GetNumAtoms()
    free_charge, conj_bonds = _resonance_labels(mol)
    labels = []
    for atom in atom_list(mol):
        delocalised = atom.GetIdx() in free_charge or atom.GetIsAromatic()
        charge = 0 if delocalised else atom.GetFormalCharge()
        labels.append((atom.GetAtomicNum(), atom.GetIsotope(), charge, atom.GetDegree()))
    nbrs = [[] for _ in range(n)]
    bond_label = {}
    for b in bond_list(mol):
        i, j = b.GetBeginAtomIdx(), b.GetEndAtomIdx()
        nbrs[i].append(j)
        nbrs[j].append(i)
        if b.GetIdx() in conj_bonds:
            lab = 10
        elif b.GetIsAromatic():
            lab = 4
        else:
            lab = int(b.GetBondTypeAsDouble() * 2)
        bond_label[frozenset((i, j))] = lab
    colour = refine(labels, nbrs, bond_label)
    centres = {c.atom: (c.nbrs, c.parity) for c in config.centres}
    at_lists = [[] for _ in range(n)]
    for c, (cn, _) in centres.items():
        for x in (c, *cn):          # the centre and the atoms whose images decide its parity
            at_lists[x].append(c)
    centres_at = tuple(tuple(sorted(set(x))) for x in at_lists)
    planar = {frozenset((p.a, p.b)): p for p in config.planar}
    planar_at_lists = [[] for _ in range(n)]
    for key, p in planar.items():
        for atom in (p.a, p.b, *p.subs_a, *p.subs_b):
            planar_at_lists[atom].append(key)
    heavy = tuple(a.GetAtomicNum() > 1 for a in atom_list(mol))
    return Graph(n=n, nbrs=tuple(tuple(x) for x in nbrs), bond_label=bond_label, colour=tuple(colour),
                 heavy=heavy, centres=centres,
                 centres_at=centres_at, planar=planar,
                 planar_at=tuple(tuple(x) for x in planar_at_lists),
                 has_centres=bool(centres), budget=budget,
                 starts=tuple(i for i in range(n) if heavy[i]) + tuple(range(n)))


def refine(labels, nbrs, bond_label) -> list[int]:
    """Stable colouring by iterated neighbourhood refinement (1-dimensional Weisfeiler–Lehman)."""
    index = {lab: k for k, lab in enumerate(sorted(set(labels)))}
    colour = [index[lab] for lab in labels]
    n_colours = len(index)
    while True:
        sig = [(colour[i], tuple(sorted((bond_label[frozenset((i, j))], colour[j]) for j in nbrs[i])))
               for i in range(len(colour))]
        index = {s: k for k, s in enumerate(sorted(set(sig)))}
        new = [index[s] for s in sig]
        if len(index) == n_colours:
            return new
        colour, n_colours = new, len(index)


class _Search:
    """One witness search: extend a partial map depth-first, checking configurations as soon as known."""

    def __init__(self, g: Graph, sign: int):
        self.g, self.sign = g, sign
        self.img = [-1] * g.n
        self.used = [False] * g.n
        self.steps = 0

    def _centre_ok(self, c: int) -> bool:
        g, img = self.g, self.img
        nb, par = g.centres[c]
        ic = img[c]
        if ic < 0:
            return True
        mapped = [img[x] for x in nb]
        missing = mapped.count(-1)
        if missing > 1:
            return True
        target = g.centres.get(ic)
        if target is None:
            return False
        nb2, par2 = target
        if missing == 1:
            rest = [x for x in nb2 if x not in mapped]
            mapped[mapped.index(-1)] = rest[0]
        try:
            return perm_parity(nb2, mapped) * par * par2 == self.sign
        except KeyError:
            # an allene centre lists its ends' substituents, not its own neighbours, so a substituent can
            # be mapped before its end atom: an image outside the target's list is no automorphism
            return False

    def _planar_ok(self, key) -> bool:
        g, img = self.g, self.img
        p = g.planar[key]
        ia, ib = img[p.a], img[p.b]
        if ia < 0 or ib < 0:
            return True
        q = g.planar.get(frozenset((ia, ib)))
        if q is None:
            return False
        for x in p.subs_a:
            if img[x] < 0:
                continue
            for y in p.subs_b:
                if img[y] < 0:
                    continue
                if (frozenset((x, y)) in p.cis) != (frozenset((img[x], img[y])) in q.cis):
                    return False
        return True

    def _consistent(self, x: int) -> bool:
        g = self.g
        for c in g.centres_at[x]:
            if not self._centre_ok(c):
                return False
        for key in g.planar_at[x]:
            if not self._planar_ok(key):
                return False
        return True

    def _assign(self, x: int, y: int) -> bool:
        g, img = self.g, self.img
        if g.colour[x] != g.colour[y] or self.used[y]:
            return False
        for w in g.nbrs[x]:
            iw = img[w]
            if iw >= 0 and g.bond_label.get(frozenset((y, iw))) != g.bond_label[frozenset((x, w))]:
                return False
        img[x] = y
        self.used[y] = True
        if not self._consistent(x):
            img[x] = -1
            self.used[y] = False
            return False
        return True

    def _unassign(self, x: int) -> None:
        self.used[self.img[x]] = False
        self.img[x] = -1

    def _order(self, roots) -> tuple[list[int], list[int]]:
        """Mapping order: breadth-first from the fixed atoms over heavy atoms, each hydrogen right after
        its parent has been placed; returns (order, anchor) with anchor[k] an earlier neighbour or −1."""
        g = self.g
        seen = [False] * g.n
        order, anchor = [], []
        for r in roots:
            seen[r] = True
        heavy_queue = deque(roots)
        starts = g.starts
        si = 0
        while True:
            while heavy_queue:
                x = heavy_queue.popleft()
                for w in g.nbrs[x]:
                    if not seen[w]:
                        seen[w] = True
                        order.append(w)
                        anchor.append(x)
                        if g.heavy[w]:
                            heavy_queue.append(w)
            while si < len(starts) and seen[starts[si]]:
                si += 1
            if si == len(starts):
                return order, anchor
            x = starts[si]
            seen[x] = True
            order.append(x)
            anchor.append(-1)
            heavy_queue.append(x)

    def run(self, fixed: dict[int, int]):
        for x, y in fixed.items():
            if self.img[x] >= 0:
                if self.img[x] != y:
                    return None
                continue
            if not self._assign(x, y):
                return None
        order, anchor = self._order(list(fixed))
        self.order, self.anchor = order, anchor
        return self._dfs(0)

    def _dfs(self, k: int):
        self.steps += 1
        if self.steps > self.g.budget:
            raise SymmetryTooComplex(
                f"symmetry search exceeded {self.g.budget} steps; the structure is too symmetric "
                f"for an exact answer within the budget")
        if k == len(self.order):
            return tuple(self.img)
        g, x, p = self.g, self.order[k], self.anchor[k]
        if p >= 0:
            cx = g.colour[x]
            cands = [y for y in g.nbrs[self.img[p]] if not self.used[y] and g.colour[y] == cx]
        else:
            cands = [y for y in range(g.n) if not self.used[y] and g.colour[y] == g.colour[x]]
        for y in cands:
            if self._assign(x, y):
                found = self._dfs(k + 1)
                if found is not None:
                    return found
                self._unassign(x)
        return None


def _twin_shortcut(g: Graph, fixed: dict[int, int], sign: int):
    """A symmetry found without search: a 3-cycle of three or more terminal twins (proper), or the swap of
    two terminal twins whose parent carries no configuration. None when no shortcut applies."""
    moved = [(x, y) for x, y in fixed.items() if x != y]
    if len(moved) != 1:
        return None
    a, b = moved[0]
    if g.heavy[a] or len(g.nbrs[a]) != 1 or len(g.nbrs[b]) != 1 or g.nbrs[a] != g.nbrs[b]:
        return None
    parent = g.nbrs[a][0]
    twins = [t for t in g.nbrs[parent] if len(g.nbrs[t]) == 1 and g.colour[t] == g.colour[a]]
    img = list(range(g.n))
    spare = [t for t in twins if t not in (a, b) and t not in fixed]
    if spare and sign == 1:
        c = spare[0]
        img[a], img[b], img[c] = b, c, a
        return tuple(img)
    if g.centres_at[a] or g.planar_at[a]:
        return None
    if sign == 1:
        img[a], img[b] = b, a
        return tuple(img)
    return None


def find_symmetry(g: Graph, fixed: dict[int, int], sign: int):
    """An element of G mapping each key of `fixed` to its value (sign +1 proper, −1 improper), or None."""
    if sign == -1 and not g.has_centres:
        return None
    quick = _twin_shortcut(g, fixed, sign)
    if quick is not None:
        return quick
    return _Search(g, sign).run(fixed)


@dataclass(frozen=True)
class Orbits:
    """Orbits of the active atoms under G and under its proper part G+."""

    sets: tuple[tuple[int, ...], ...]           # orbits of G in the chosen medium
    proper: tuple[tuple[int, ...], ...]         # orbits of G+ (homotopic classes)
    enantiotopic_pairs: tuple[tuple[int, int], ...]  # proper orbits related only by improper operations
    generators: tuple = ()                      # the elements of G found on the way (atom images)


def _orbits_under(g: Graph, atoms, signs, uf: DisjointSets, found: list):
    atom_set = set(atoms)
    by_colour = {}
    for a in atoms:
        by_colour.setdefault(g.colour[a], []).append(a)
    for members in by_colour.values():
        reps = [members[0]]
        for m in members[1:]:
            if any(uf.find(m) == uf.find(r) for r in reps):
                continue
            for r in reps:
                if uf.find(m) == uf.find(r):
                    break
                img = next((im for im in (find_symmetry(g, {r: m}, sign) for sign in signs)
                            if im is not None), None)
                if img is not None:
                    found.append(img)
                    for a in atom_set:
                        if img[a] in atom_set:
                            uf.union(a, img[a])
                    break
            else:
                reps.append(m)


def orbits(g: Graph, atoms, chiral_medium: bool = False) -> Orbits:
    """Chemical-equivalence sets of `atoms`: orbits of G (proper only in a chiral medium)."""
    atoms = sorted(atoms)
    uf_p = DisjointSets(atoms)
    found = []
    _orbits_under(g, atoms, (1,), uf_p, found)
    proper = uf_p.groups()
    enantio = []
    uf_g = DisjointSets(atoms)
    for grp in proper:
        for a in grp[1:]:
            uf_g.union(grp[0], a)
    if g.has_centres:
        reps = [grp[0] for grp in proper]
        by_colour = {}
        for r in reps:
            by_colour.setdefault(g.colour[r], []).append(r)
        for members in by_colour.values():
            for i, r in enumerate(members):
                for s in members[i + 1:]:
                    if uf_g.find(r) == uf_g.find(s) and not chiral_medium:
                        continue
                    img = find_symmetry(g, {r: s}, -1)
                    if img is not None:
                        if not chiral_medium:
                            found.append(img)
                        enantio.append((r, s))
                        if not chiral_medium:
                            uf_g.union(r, s)
    sets = proper if chiral_medium else uf_g.groups()
    return Orbits(tuple(tuple(s) for s in sets), tuple(tuple(p) for p in proper), tuple(enantio),
                  tuple(found))


def pair_classes(pairs, generators) -> list[list[tuple[int, int]]]:
    """Classes of unordered atom pairs under the group the `generators` generate (closure by search)."""
    pairs = {tuple(sorted(p)) for p in pairs}
    seen, classes = set(), []
    for p in sorted(pairs):
        if p in seen:
            continue
        cls, stack = [], [p]
        seen.add(p)
        while stack:
            q = stack.pop()
            cls.append(q)
            for img in generators:
                r = tuple(sorted((img[q[0]], img[q[1]])))
                if r in pairs and r not in seen:
                    seen.add(r)
                    stack.append(r)
        classes.append(cls)
    return classes


def pair_related(g: Graph, a: int, b: int, n: int, chiral_medium: bool = False) -> bool:
    """True when some element of G maps a to b and keeps n (the ordered pairs (a,n), (b,n) share an orbit)."""
    if find_symmetry(g, {a: b, n: n}, 1) is not None:
        return True
    return not chiral_medium and find_symmetry(g, {a: b, n: n}, -1) is not None
