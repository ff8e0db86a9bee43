"""The single entry point: `analyze(structure, **options) -> Report`.

structure → stereo choice → configuration → symmetry → active nuclei → couplings → magnetic subsets →
shifts → notation → report (DESIGN.md §2). The CLI, the batch runner and the web page call only this.
"""
from __future__ import annotations

import dataclasses
import sys

from rdkit import Chem
from .atoms import atom_list, bond_list

from . import shifts as shift_rules
from .couplings import Coupling, carbon_partner_couplings, estimate as estimate_couplings, labile_protons
from .errors import InputError
from .magnetic import split_all as magnetic_split_all
from .notation import SetSpec, components, label_fragments
from .nuclei import active_nuclei
from .options import Options, make_options
from .report import CouplingResult, FragmentResult, Report, SetResult, WitnessResult
from .stereo import (configuration, hindered_biaryl_axes, is_metal, isomeric_smiles, long_cumulenes, stereoisomers,
                     with_conformer)
from .structure import Structure, read_structure
from .symmetry import SymmetryTooComplex, build_graph, orbits, pair_classes
from . import karplus, listing, multiplets


def analyze(structure, options: Options | None = None, **kwargs) -> Report:
    """Analyse one structure (SMILES, MOL/SDF text, file path, '-', RDKit Mol or Structure)."""
    opts = options or make_options(**kwargs)
    st = _as_structure(structure, opts, kwargs.get("name"))
    choice = stereoisomers(st.mol, merge_enantiomers=not opts.chiral_medium)
    if opts.stereoisomer >= len(choice.isomers):
        raise InputError(f"{st.name}: stereoisomer {opts.stereoisomer} requested but only "
                         f"{len(choice.isomers)} exist")
    return _analyze_isomer(st, choice.isomers[opts.stereoisomer], opts, _stereo_warnings(choice, opts))


def analyze_each_stereoisomer(structure, options: Options | None = None, **kwargs) -> list[Report]:
    """One report per stereoisomer compatible with the input's unspecified stereo elements."""
    opts = options or make_options(**kwargs)
    st = _as_structure(structure, opts, kwargs.get("name"))
    choice = stereoisomers(st.mol, merge_enantiomers=not opts.chiral_medium)
    out = []
    for k, iso in enumerate(choice.isomers):
        warn = (f"stereoisomer {k} of {len(choice.isomers)} (unspecified: {', '.join(choice.unspecified)})",) \
            if len(choice.isomers) > 1 else ()
        out.append(_analyze_isomer(st, iso, opts, warn))
    return out


def _as_structure(structure, opts: Options, name) -> Structure:
    if isinstance(structure, Structure):
        return structure
    return read_structure(structure, name=name, max_heavy_atoms=opts.max_heavy_atoms)


def _stereo_warnings(choice, opts) -> tuple[str, ...]:
    if len(choice.isomers) <= 1:
        if choice.unspecified:
            return tuple(choice.notes) + (f"unspecified {', '.join(choice.unspecified)}: every choice gives "
                                          f"the same compound or its mirror image, alike in an achiral medium",)
        return tuple(choice.notes)
    return tuple(choice.notes) + (f"unspecified {', '.join(choice.unspecified)}: analysed stereoisomer {opts.stereoisomer} "
            f"({isomeric_smiles(choice.isomers[opts.stereoisomer])}) "
            f"of {len(choice.isomers)}; ask for each stereoisomer to see the others",)


def _analyze_isomer(st: Structure, mol: Chem.Mol, opts: Options, warnings: tuple) -> Report:
    warnings = list(st.notes) + list(warnings)
    sys.setrecursionlimit(max(sys.getrecursionlimit(), 4 * mol.GetNumAtoms() + 200))
    ring_karplus = opts.ring_couplings and _has_ring_ch2_ch(mol)   # topology only: asked once
    if ring_karplus:
        mol = with_conformer(mol) or mol
    config = configuration(mol, amide_rotation_fast=opts.amide_rotation_fast)
    if any(p.kind == "amide" for p in config.planar):
        warnings.append("amide C–N rotation treated as slow: one rotamer analysed "
                        "(ask for fast amide rotation to average)")
    _hypervalent_warning(mol, warnings)
    for chain in long_cumulenes(mol):
        warnings.append(f"cumulene through atoms {','.join(map(str, chain))}: its end-to-end cis/trans or "
                        f"axial geometry is not kept (analysed as if free)")
    for a, b, n in hindered_biaryl_axes(mol):
        warnings.append(f"biaryl axis {a}–{b} has {n} ortho substituents: its rotation may be slow "
                        f"(atropisomers); analysed as freely rotating, so groups that would be "
                        f"diastereotopic in a fixed axis appear equivalent")
    graph = build_graph(mol, config)
    nuclei = active_nuclei(mol, opts.isotopes())
    if not nuclei:
        raise InputError(f"{st.name}: no active nuclei ({', '.join(opts.nuclei)}) in the structure")
    by_atom = {n.atom: n for n in nuclei}
    try:
        orb = orbits(graph, list(by_atom), chiral_medium=opts.chiral_medium)
    except SymmetryTooComplex as exc:
        raise InputError(f"{st.name}: {exc}") from None
    labile = frozenset() if opts.labile_coupled else labile_protons(mol)
    partners = [a for a, n in by_atom.items() if not n.dilute]
    couplings = estimate_couplings(mol, config, partners, decoupled=labile, threshold_hz=opts.threshold_hz)
    if ring_karplus:
        couplings, embedded = _with_ring_karplus(mol, couplings, opts.threshold_hz)
        if not embedded:
            warnings.append("ring vicinal H–H couplings: no conformer of the ring system could be "
                            "embedded, so they are rotamer-averaged table values, not ring geometry")
    couplings = _symmetrized(couplings, orb.generators)
    jmap = {frozenset((c.a, c.b)): c for c in couplings}
    carbons = [a for a, n in by_atom.items() if n.dilute and n.isotope.symbol == "13C"]
    missing = sorted({a.GetSymbol() for a in atom_list(mol) if a.GetAtomicNum() in (9, 15)} -
                     {by_atom[a].isotope.element for a in by_atom})
    if carbons and missing:
        warnings.append(f"13C patterns leave out couplings to {', '.join(missing)}: observe "
                        f"{','.join({'F': '19F', 'P': '31P'}[e] for e in missing)} too to see them")
    carbon_couplings = _symmetrized(
        carbon_partner_couplings(mol, config, carbons, partners, opts.threshold_hz), orb.generators) \
        if carbons else ()
    user_shifts = _user_shift_map(st, orb.sets, opts, by_atom)

    coupled_sets = [m for m in orb.sets if not by_atom[m[0]].dilute and not all(a in labile for a in m)]
    try:
        splits = dict(zip(coupled_sets, magnetic_split_all(mol, graph, coupled_sets, partners, jmap,
                                                           opts.chiral_medium, orb.generators)))
    except SymmetryTooComplex as exc:
        raise InputError(f"{st.name}: {exc}") from None
    shift_mol = _mol_with_planar_geometry(mol, config)
    raw = []
    for members in orb.sets:
        nuc = by_atom[members[0]]
        split = splits.get(members)
        subsets = split.subsets if split else (tuple(members),)
        if members[0] in user_shifts:
            ppm, basis = user_shifts[members[0]], "given by the user"
        else:
            observed = "1H" if nuc.isotope.atomic_number == 1 else nuc.isotope.symbol
            est = shift_rules.estimate(shift_mol, members[0], observed)
            ppm, basis = round(est.ppm, 2), est.basis
        raw.append((members, nuc, subsets, split, ppm, basis))

    # order sets: isotope by |γ| (descending), then lowest shift first
    raw.sort(key=lambda r: (-abs(r[1].isotope.gamma), r[1].isotope.symbol, r[4], graph.colour[r[0][0]],
                            len(r[0]), len(r[2]), r[0][0]))
    specs = [SetSpec(r[1].isotope, tuple(r[0]), tuple(r[2]), r[4]) for r in raw]
    frags = label_fragments(specs, couplings, opts.mhz)
    frag_of, letter_of = {}, {}
    for fi, f in enumerate(frags):
        for si in f.sets:
            frag_of[si] = fi
            letter_of[si] = f.letters[si]

    set_of_atom = {a: i for i, s in enumerate(specs) for a in s.atoms}
    comp_of = {a: k for k, comp in enumerate(components(specs, couplings)) for a in comp}
    topicity = _topicity(graph, orb, raw, set_of_atom, opts.chiral_medium)
    sets = []
    for i, (members, nuc, subsets, split, ppm, basis) in enumerate(raw):
        set_couplings = _set_couplings(members, couplings, set_of_atom, i)
        sets.append(SetResult(
            index=i, isotope=nuc.isotope.symbol, element=nuc.isotope.element, atoms=tuple(members),
            magnetic_subsets=tuple(tuple(s) for s in subsets), letter=letter_of[i], fragment=frag_of[i],
            shift_ppm=ppm, shift_basis=basis, topicity=topicity[i],
            witnesses=tuple(WitnessResult(w.atoms, w.partner,
                                          tuple((c.n_bonds, c.j_hz) if c else (None, None) for c in w.paths),
                                          w.reason, comp_of[w.atoms[0]] == comp_of[w.atoms[1]])
                            for w in (split.witnesses if split else ())),
            exchange_decoupled=all(a in labile for a in members), dilute=nuc.dilute,
            couplings=set_couplings))
    fragments = tuple(FragmentResult(fi, f.label, f.label_ascii, f.copies, f.sets, f.first_order_above_mhz,
                                     f.magnetically_inequivalent, f.strongly_coupled_pairs, f.subsets_coupled)
                      for fi, f in enumerate(frags))
    label = " + ".join(f.label for f in fragments)
    label_ascii = " + ".join(f.label_ascii for f in fragments)
    smiles = isomeric_smiles(mol)
    report = Report(
        name=st.name, input=st.input_text, smiles=smiles, mhz=opts.mhz,
        nuclei=tuple(dict.fromkeys([*opts.nuclei, *(n.isotope.symbol for n in nuclei if n.labelled)])), label=label, label_ascii=label_ascii, fragments=fragments,
        sets=tuple(sets),
        couplings=tuple(CouplingResult((c.a, c.b), c.j_hz, c.basis, c.n_bonds)
                        for c in (*couplings, *carbon_couplings)),
        warnings=tuple(warnings), options=_options_dict(opts), mol=mol)
    base = report.to_dict()
    mults = multiplets.annotate(base, mol)
    return dataclasses.replace(report, multiplets={i: multiplets.to_json(m) for i, m in mults.items()},
                               listing=listing.journal_listings(base, mults))


KARPLUS_MAX_HEAVY_ATOMS = 60   # larger molecules keep table values: embedding them costs seconds
KARPLUS_MAX_RING = 8           # larger rings are flexible: their vicinal couplings average like chains


def _has_ring_ch2_ch(mol: Chem.Mol) -> bool:
    """True when some bond of a ring of at most KARPLUS_MAX_RING atoms joins two sp3 carbons that both
    carry hydrogen, in a molecule small enough to embed quickly."""
    if sum(1 for a in atom_list(mol) if a.GetAtomicNum() > 1) > KARPLUS_MAX_HEAVY_ATOMS or \
            any(is_metal(a) or a.GetDegree() > 4 for a in atom_list(mol)):
        return False
    ring_info = mol.GetRingInfo()
    for b in bond_list(mol):
        if not b.IsInRing() or b.GetIsAromatic():
            continue
        if not any(len(r) <= KARPLUS_MAX_RING for r in ring_info.BondRings() if b.GetIdx() in r):
            continue
        ends = (b.GetBeginAtom(), b.GetEndAtom())
        if all(a.GetAtomicNum() == 6 and a.GetHybridization() == Chem.HybridizationType.SP3 and
               any(n.GetAtomicNum() == 1 for n in a.GetNeighbors()) for a in ends):
            return True
    return False


def _with_ring_karplus(mol, couplings, threshold_hz):
    """Replace table values of vicinal H–H across ring bonds by Karplus values on the same geometry;
    also say whether that geometry could be made (False: the table values stay)."""
    ring_bonds = {b.GetIdx() for b in bond_list(mol) if any(
        len(r) <= KARPLUS_MAX_RING for r in mol.GetRingInfo().BondRings() if b.GetIdx() in r)}
    pairs = [(c.a, c.b) for c in couplings if c.n_bonds == 3 and c.basis == "HH3_sp3" and
             _vicinal_bond(mol, c.a, c.b) in ring_bonds]
    found = karplus.ring_vicinal_couplings(mol, pairs)
    embedded = bool(found) or not karplus.ring_pairs(mol, pairs)
    found.update(_three_ring_vicinal(mol, couplings))
    out = []
    for c in couplings:
        hit = found.get((c.a, c.b)) or found.get((c.b, c.a))
        if hit is None:
            out.append(c)
        elif abs(hit[0]) >= threshold_hz:
            out.append(Coupling(c.a, c.b, hit[0], hit[1], c.n_bonds))
    return tuple(out), embedded


def _three_ring_vicinal(mol: Chem.Mol, couplings) -> dict:
    """Vicinal H–H across a three-membered ring bond: the cis or trans value of data/couplings.csv,
    cis when the H–C–C–H dihedral of the molecule's conformer is under 90°."""
    from rdkit.Chem import rdMolTransforms
    from .couplings import coupling_table, three_ring_kind
    if not (mol.GetNumConformers() and mol.GetConformer().Is3D()):
        return {}
    conf, table, out = mol.GetConformer(), coupling_table(), {}
    for c in couplings:
        if c.n_bonds != 3 or c.basis != "HH3_sp3":
            continue
        c1 = mol.GetAtomWithIdx(c.a).GetNeighbors()[0].GetIdx()
        c2 = mol.GetAtomWithIdx(c.b).GetNeighbors()[0].GetIdx()
        kind = three_ring_kind(mol, c1)
        if kind is None or three_ring_kind(mol, c2) != kind or mol.GetBondBetweenAtoms(c1, c2) is None \
                or not any(len(r) == 3 and c1 in r and c2 in r for r in mol.GetRingInfo().AtomRings()):
            continue
        cis = abs(rdMolTransforms.GetDihedralDeg(conf, c.a, c1, c2, c.b)) < 90
        rule = f"HH3_{kind}_{'cis' if cis else 'trans'}"
        out[(c.a, c.b)] = (table[rule][0], rule)
    return out


def _vicinal_bond(mol: Chem.Mol, h1: int, h2: int) -> int:
    """Index of the C–C bond between the carbons of two vicinal protons (−1 if there is none)."""
    c1 = mol.GetAtomWithIdx(h1).GetNeighbors()[0].GetIdx()
    c2 = mol.GetAtomWithIdx(h2).GetNeighbors()[0].GetIdx()
    bond = mol.GetBondBetweenAtoms(c1, c2)
    return bond.GetIdx() if bond is not None else -1


def _symmetrized(couplings, generators):
    """Symmetry-related pairs get one value: the mean over each class of pairs (estimates from one
    conformer are not exactly symmetric)."""
    by_pair = {(min(c.a, c.b), max(c.a, c.b)): c for c in couplings}
    out = {}
    for cls in pair_classes(by_pair, generators):
        js = [by_pair[p].j_hz for p in cls]
        mean = round(sum(js) / len(js), 2)
        for p in cls:
            c = by_pair[p]
            out[p] = c if len(cls) == 1 else Coupling(c.a, c.b, mean, c.basis, c.n_bonds)
    return tuple(out[p] for p in sorted(out))


def _mol_with_planar_geometry(mol: Chem.Mol, config) -> Chem.Mol:
    """A copy whose non-stereogenic double bonds (=CH2, =CF2 …) carry the cis/trans relation the
    configuration fixed, so that cis and trans alkene increments apply to diastereotopic nuclei."""
    out = Chem.Mol(mol)
    for p in config.planar:
        if p.kind != "double":
            continue
        bond = out.GetBondBetweenAtoms(p.a, p.b)
        if bond.GetStereo() != Chem.BondStereo.STEREONONE or not p.cis:
            continue
        x, y = tuple(next(iter(p.cis)))
        if x not in p.subs_a:
            x, y = y, x
        bond.SetStereoAtoms(x, y)
        bond.SetStereo(Chem.BondStereo.STEREOCIS)
    return out


def _options_dict(opts: Options) -> dict:
    return {"amide_rotation_fast": opts.amide_rotation_fast, "labile_coupled": opts.labile_coupled,
            "chiral_medium": opts.chiral_medium, "threshold_hz": opts.threshold_hz,
            "stereoisomer": opts.stereoisomer}


def _set_couplings(members, couplings, set_of_atom, index):
    """Couplings from one member of the set to each other set: the largest |J| per partner set."""
    rep = members[0]
    best = {}
    for c in couplings:
        if rep not in (c.a, c.b):
            continue
        other = c.b if c.a == rep else c.a
        to = set_of_atom.get(other)
        if to is None:
            continue
        cur = best.get(to)
        if cur is None or abs(c.j_hz) > abs(cur["j_hz"]):
            best[to] = {"to_set": to, "j_hz": c.j_hz, "j_basis": c.basis, "n_bonds": c.n_bonds}
    return tuple(best[k] for k in sorted(best))


def _topicity(graph, orb, raw, set_of_atom, chiral_medium) -> list[dict]:
    """Relations of each set's members (homotopic / enantiotopic) and to other sets (diastereotopic)."""
    proper_of = {a: k for k, grp in enumerate(orb.proper) for a in grp}
    enantio_sets = {}
    for r, s in orb.enantiotopic_pairs:
        i, j = set_of_atom[r], set_of_atom[s]
        if i != j:
            enantio_sets.setdefault(i, set()).add(j)
            enantio_sets.setdefault(j, set()).add(i)
    by_colour = {}
    for i, r in enumerate(raw):
        by_colour.setdefault(graph.colour[r[0][0]], []).append(i)
    out = []
    for i, r in enumerate(raw):
        members = r[0]
        n_proper = len({proper_of[a] for a in members})
        if len(members) == 1:
            within = "single nucleus"
        elif n_proper == 1:
            within = "homotopic"
        elif all(len(g) == 1 for g in orb.proper if g[0] in members):
            within = "enantiotopic"
        else:
            within = "homotopic and enantiotopic"
        same_constitution = [j for j in by_colour[graph.colour[members[0]]] if j != i]
        enantio = sorted(enantio_sets.get(i, ()))
        dia = [j for j in same_constitution if j not in enantio]
        entry = {"within": within, "diastereotopic_to": dia}
        if chiral_medium:
            entry["enantiotopic_to"] = enantio
        out.append(entry)
    return out


def _user_shift_map(st, sets, opts, by_atom) -> dict:
    """User shifts: a value for one atom applies to its whole set; conflicting values are an error."""
    if not opts.shifts:
        return {}
    set_of = {a: k for k, grp in enumerate(sets) for a in grp}
    per_set = {}
    for atom, ppm in opts.shifts:
        if atom not in by_atom:
            raise InputError(f"{st.name}: shift given for atom {atom}, which is not an observed nucleus")
        k = set_of[atom]
        if k in per_set and abs(per_set[k][1] - ppm) > 1e-9:
            raise InputError(f"{st.name}: conflicting shifts for one chemical set: atom {per_set[k][0]} = "
                             f"{per_set[k][1]} ppm, atom {atom} = {ppm} ppm")
        per_set[k] = (atom, ppm)
    return {sets[k][0]: v[1] for k, v in per_set.items()}


def _hypervalent_warning(mol: Chem.Mol, warnings: list) -> None:
    hyper = [a.GetIdx() for a in atom_list(mol) if a.GetDegree() >= 5]
    if hyper:
        warnings.append("centres with five or more neighbours (atoms " + ",".join(map(str, hyper)) +
                        ") treated as fully symmetric")
