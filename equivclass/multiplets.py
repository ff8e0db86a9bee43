"""First-order multiplets, integrals and dilute-isotope satellites of each shift set.

Rules (works on the ``Report.to_dict()`` record and the analysed RDKit molecule only):

* Integral = number of nuclei in the set.
* A set S is first order when, in the fragment copy of its representative nucleus r, S has one
  magnetic subset, no partner of the same isotope is strongly coupled to S (|Δν| < 10|J|), no two
  partners are strongly coupled to each other (the X part of ABX is not a simple dd), and every
  partner set couples to r through one magnetic subset with one J. Otherwise S reads ``m`` with the
  reason. Heteronuclear partners are always weakly coupled.
* Exchange-decoupled O–H/N–H/S–H sets read ``br s`` (common practice).
* n equivalent partners of spin I give 2nI+1 lines with the coefficients of (1 + x + … + x^2I)^n
  (binomial for I = ½). Partner groups whose |J| agree within 0.1 Hz merge (two CH2 at 7 Hz give a
  quintet: common practice); groups are named by their line count (d, t, q, quint, sext, sept, oct,
  non) in order of falling |J| and concatenated (dt, td, ddd, dq).
* Satellites: for each dilute spin-½ isotope (13C, 29Si, 117/119Sn, 195Pt, 77Se, 183W …) at natural
  abundance one or two bonds from r, a copy of the main pattern at ±J/2 with intensity abundance/2
  each (fractions of the set's signal); J from ``data/satellites.csv``.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np
from rdkit import Chem

from equivclass import nucdata
from equivclass.disjoint_sets import DisjointSets
from equivclass.errors import InputError
from equivclass.tables import table_rows

__all__ = ["Multiplet", "annotate", "spin_pattern", "first_order_lines", "multiplicity_name",
           "satellite_j"]

#: |J| values closer than this (Hz) merge into one partner group (common practice).
MERGE_J_HZ = 0.1
#: Line positions closer than this (Hz) are one line.
MERGE_LINE_HZ = 1e-6
_NAMES = {1: "s", 2: "d", 3: "t", 4: "q", 5: "quint", 6: "sext", 7: "sept", 8: "oct", 9: "non"}


@dataclass(frozen=True)
class Multiplet:
    """First-order pattern of one set.

    ``j_hz``: |J| per merged partner group, largest first. ``lines``: (offset_hz, intensity) relative
    to the set centre, intensities summing to 1. ``satellites``: one dict per dilute isotope with
    isotope, j_hz, n_bonds, abundance_pct, fraction (share of the set's signal in the satellites),
    basis and lines (intensities as fractions of the set's signal; the main pattern carries the rest).
    ``reason``: "" when first order, otherwise why the set reads ``m``.
    """

    integral: float
    multiplicity: str
    j_hz: tuple[float, ...]
    lines: tuple[tuple[float, float], ...]
    satellites: tuple[dict, ...]
    reason: str
    apparent: str = ""   # for "m" sets that look first order: the pattern they appear as ("t", "dt" …)


# --------------------------------------------------------------------------- patterns


def spin_pattern(spin: float, n: int) -> np.ndarray:
    """Relative intensities of the 2nI+1 lines from n equivalent spin-I partners: coefficients of
    (1 + x + … + x^2I)^n, normalised to sum 1."""
    two_i = int(round(2 * spin))
    if two_i < 1 or abs(two_i - 2 * spin) > 1e-9 or n < 0:
        raise InputError(f"spin {spin!r}, count {n!r}: not a valid partner group")
    coeffs = np.array([1.0])
    base = np.ones(two_i + 1)
    for _ in range(n):
        coeffs = np.convolve(coeffs, base)
    return coeffs / coeffs.sum()


def _merge(lines: dict[float, float] | list[tuple[float, float]],
           normalise: bool = True) -> tuple[tuple[float, float], ...]:
    """Lines closer than MERGE_LINE_HZ become one; intensities scaled to sum 1 unless `normalise` is off."""
    items = sorted(lines.items() if isinstance(lines, dict) else lines)
    out: list[list[float]] = []
    for pos, w in items:
        if out and abs(pos - out[-1][0]) <= MERGE_LINE_HZ:
            out[-1][1] += w
        else:
            out.append([pos, w])
    total = (sum(w for _, w in out) or 1.0) if normalise else 1.0
    return tuple((float(round(p, 6)) + 0.0, float(w / total)) for p, w in out)


def first_order_lines(groups: list[tuple[float, float, int]]) -> tuple[tuple[float, float], ...]:
    """Convolution of the partner patterns; ``groups`` = [(j_hz, spin, count)]. Lines at sums of
    ±J/2-type steps around 0, intensities summing to 1."""
    lines = {0.0: 1.0}
    for j, spin, n in groups:
        pat = spin_pattern(spin, n)
        half = (len(pat) - 1) / 2.0
        new: dict[float, float] = {}
        for pos, w in lines.items():
            for k, c in enumerate(pat):
                p = round(pos + (k - half) * abs(j), 9)
                new[p] = new.get(p, 0.0) + w * c
        lines = new
    return _merge(lines)


def _group_by_j(groups: list[tuple[float, float, int]]) -> list[tuple[float, list[tuple[float, int]]]]:
    """Merge partner groups whose |J| agree within MERGE_J_HZ; largest |J| first."""
    merged: list[tuple[float, list[tuple[float, int]]]] = []
    for j, spin, n in sorted(groups, key=lambda g: -abs(g[0])):
        if merged and abs(merged[-1][0] - abs(j)) <= MERGE_J_HZ:
            merged[-1][1].append((spin, n))
        else:
            merged.append((abs(j), [(spin, n)]))
    return merged


def multiplicity_name(groups: list[tuple[float, float, int]]) -> str:
    """Name of a first-order pattern: one letter code per merged |J| group (by line count 2ΣnI+1),
    largest |J| first; 's' with no partners, 'm' when a group has more than nine lines."""
    merged = _group_by_j(groups)
    if not merged:
        return "s"
    parts = []
    for _, members in merged:
        count = int(round(sum(2 * spin * n for spin, n in members))) + 1
        if count not in _NAMES:
            return "m"
        parts.append(_NAMES[count])
    return "".join(parts)


# --------------------------------------------------------------------------- satellites


def _rows(name: str):
    return table_rows(name)


@functools.lru_cache(maxsize=1)
def _satellite_table() -> dict[tuple[str, str, int], list[tuple[str, float, str]]]:
    table: dict[tuple[str, str, int], list[tuple[str, float, str]]] = {}
    for r in _rows("satellites.csv"):
        key = (r["observed"], r["isotope"], int(r["n_bonds"]))
        table.setdefault(key, []).append((r["context"], float(r["j_hz"]), r["source"]))
    return table


_HALOGEN = {9: "F", 17: "Cl", 35: "Br", 53: "I"}


def _carbon_contexts(carbon: Chem.Atom, observed: str) -> list[str]:
    """Context keys for a carbon bonded to the observed nucleus, most specific first."""
    hyb = carbon.GetHybridization()
    heavy = [n for n in carbon.GetNeighbors() if n.GetAtomicNum() > 1]
    keys: list[str] = []
    if observed == "19F":
        n_f = sum(1 for n in heavy if n.GetAtomicNum() == 9)
        if carbon.GetIsAromatic():
            keys.append("aromatic")
        if n_f >= 3:
            keys.append("cf3")
        return keys + ["any"]
    if carbon.GetIsAromatic():
        return ["aromatic"]
    if hyb == Chem.HybridizationType.SP:
        return ["sp"]
    if hyb == Chem.HybridizationType.SP2:
        if any(b.GetBondType() == Chem.BondType.DOUBLE and b.GetOtherAtom(carbon).GetAtomicNum() == 8
               for b in carbon.GetBonds()):
            return ["aldehyde", "sp2"]
        return ["sp2"]
    if carbon.IsInRingSize(3):
        keys.append("sp3_ring3")
    halogens = [n for n in heavy if n.GetAtomicNum() in _HALOGEN]
    if len(halogens) >= 2:
        keys.append("sp3_dihalo")
    for z in (9, 17, 35, 53):
        if any(n.GetAtomicNum() == z for n in heavy):
            keys.append("sp3_" + _HALOGEN[z])
    for z, key in ((8, "sp3_O"), (16, "sp3_S"), (7, "sp3_N"), (14, "sp3_Si")):
        if any(n.GetAtomicNum() == z for n in heavy):
            keys.append(key)
    return keys + ["sp3", "any"]


def satellite_j(mol: Chem.Mol, observed_atom: int, partner_atom: int, observed: str,
                partner: str, n_bonds: int) -> tuple[float, str] | None:
    """Typical |J| (Hz) and its source for a satellite partner, or None when the table has no row."""
    rows = _satellite_table().get((observed, partner, n_bonds))
    if not rows:
        return None
    atom = mol.GetAtomWithIdx(partner_atom)
    contexts = _carbon_contexts(atom, observed) if atom.GetAtomicNum() == 6 else ["any"]
    by_context = {c: (j, s) for c, j, s in rows}
    for c in contexts:
        if c in by_context:
            return by_context[c]
    return None


def _satellites(mol: Chem.Mol, r: int, observed: str,
                main: tuple[tuple[float, float], ...]) -> tuple[dict, ...]:
    """Satellite entries of nucleus r: one per dilute isotope found one or two bonds away."""
    if mol is None or r >= mol.GetNumAtoms():
        return ()
    atom = mol.GetAtomWithIdx(r)
    shells: list[tuple[int, int]] = [(n.GetIdx(), 1) for n in atom.GetNeighbors()]
    seen = {r} | {a for a, _ in shells}
    for a, _ in list(shells):
        for nb in mol.GetAtomWithIdx(a).GetNeighbors():
            if nb.GetIdx() not in seen:
                seen.add(nb.GetIdx())
                shells.append((nb.GetIdx(), 2))
    found: dict[str, list[tuple[int, int, float, str]]] = {}
    for a, nb in shells:
        at = mol.GetAtomWithIdx(a)
        if at.GetIsotope():  # labelled atoms are coupling partners, not natural-abundance satellites
            continue
        for iso in nucdata.isotopes_of(at.GetAtomicNum()):
            if not nucdata.is_dilute(iso) or iso.symbol == observed:
                continue
            hit = satellite_j(mol, r, a, observed, iso.symbol, nb)
            if hit:
                found.setdefault(iso.symbol, []).append((nb, a, hit[0], hit[1]))
    out = []
    for symbol, hits in found.items():
        nearest = min(h[0] for h in hits)
        hits = [h for h in hits if h[0] == nearest]
        k = len(hits)
        p = nucdata.isotope(symbol).abundance_pct / 100.0
        fraction = k * p * (1.0 - p) ** (k - 1)  # exactly one dilute nucleus among k positions
        j = hits[0][2]
        lines = _merge_abs([(o + s * j / 2.0, w * fraction / 2.0) for o, w in main for s in (-1, 1)])
        out.append({"isotope": symbol, "j_hz": j, "n_bonds": nearest,
                    "abundance_pct": nucdata.isotope(symbol).abundance_pct,
                    "fraction": fraction, "basis": hits[0][3], "lines": lines})
    out.sort(key=lambda d: -d["fraction"])
    return tuple(out)


def _merge_abs(lines: list[tuple[float, float]]) -> tuple[tuple[float, float], ...]:
    return _merge(lines, normalise=False)


# --------------------------------------------------------------------------- annotate


def _components(n_atoms: int, couplings: list[dict]) -> list[int]:
    """Representative atom of each atom's component of the non-zero coupling network."""
    ds = DisjointSets(range(n_atoms))
    for c in couplings:
        if c.get("j_hz"):
            ds.union(*c["atoms"])
    return [ds.find(a) for a in range(n_atoms)]


def _letter(sets: list[dict], i: int) -> str:
    return f"set {i} ({sets[i]['isotope']} {sets[i].get('letter', '')})".replace(" )", ")")


def annotate(report_dict: dict, mol) -> dict[int, Multiplet]:
    """First-order multiplet (or the reason it is ``m``) of every set of ``report_dict``, keyed by set
    index. ``mol`` is the analysed explicit-H molecule (``Report.mol``), used for satellites."""
    try:
        sets = report_dict["sets"]
        couplings = report_dict.get("couplings", [])
        fragments = report_dict.get("fragments", [])
        mhz = float(report_dict.get("mhz", 400.0))
    except (KeyError, TypeError) as exc:
        raise InputError(f"record {report_dict.get('name', '?') if isinstance(report_dict, dict) else '?'}: "
                         f"not an analysis record ({exc})") from None
    atom_set: dict[int, int] = {}
    for s in sets:
        for a in s["atoms"]:
            atom_set[a] = s["index"]
    by_index = {s["index"]: s for s in sets}
    n_atoms = max([mol.GetNumAtoms() if mol is not None else 0]
                  + [a + 1 for a in atom_set]
                  + [max(c["atoms"]) + 1 for c in couplings])
    comp = _components(n_atoms, couplings)
    neighbours: dict[int, list[tuple[int, float]]] = {}
    for c in couplings:
        a, b = c["atoms"]
        if c.get("j_hz"):
            neighbours.setdefault(a, []).append((b, float(c["j_hz"])))
            neighbours.setdefault(b, []).append((a, float(c["j_hz"])))
    coupled_subsets = _sets_with_coupled_subsets(sets, couplings)
    strong: set[frozenset[int]] = set()
    for f in fragments:
        for pair in f.get("strongly_coupled", []) or []:
            strong.add(frozenset(pair))

    out: dict[int, Multiplet] = {}
    for s in sets:
        idx = s["index"]
        atoms = list(s["atoms"])
        integral = float(len(atoms))
        r = atoms[0]
        observed = s["isotope"]
        if s.get("exchange_decoupled"):
            main = ((0.0, 1.0),)
            out[idx] = Multiplet(integral, "br s", (), main, _satellites(mol, r, observed, main), "")
            continue
        reasons: list[str] = []
        apparent: list[str] = []
        own_subsets = [sub for sub in s.get("magnetic_subsets", [atoms])
                       if any(comp[a] == comp[r] for a in sub)]
        if len(own_subsets) > 1 and idx in coupled_subsets:
            why = f"magnetically inequivalent: the set splits into {len(own_subsets)} subsets"
            wit = s.get("witnesses") or []
            if wit and wit[0].get("reason"):
                why += f" ({wit[0]['reason']})"
            if _equal_outside_couplings(atoms, comp, r, neighbours, set(atoms)):
                apparent.append(why)
            else:
                reasons.append(why)
        partners: dict[int, list[tuple[int, float]]] = {}
        for b, j in neighbours.get(r, []):
            p = atom_set.get(b)
            if p is None or p == idx or by_index[p].get("dilute"):
                continue
            partners.setdefault(p, []).append((b, j))
        groups: list[tuple[float, float, int]] = []
        for p, hits in sorted(partners.items()):
            ps = by_index[p]
            subsets = [sub for sub in ps.get("magnetic_subsets", [ps["atoms"]])
                       if any(b in sub for b, _ in hits)]
            js = {round(abs(j), 3) for _, j in hits}
            linked = p in coupled_subsets   # the partner's subsets couple to one another
            if max(js) - min(js) > 1e-3 and linked:
                reasons.append(f"partner {_letter(sets, p)} is magnetically inequivalent with respect to "
                               f"atom {r} (couples through {len(subsets)} subsets)")
                continue
            if len(subsets) > 1 and linked:
                apparent.append(f"partner {_letter(sets, p)} couples to atom {r} through {len(subsets)} "
                                f"magnetic subsets with equal estimated J")
            if ps["isotope"] == observed and frozenset((idx, p)) in strong:
                reasons.append(f"strongly coupled to {_letter(sets, p)} at {mhz:g} MHz (|Δν| < 10|J|)")
                continue
            spin = nucdata.isotope(ps["isotope"]).spin
            if spin == 0:
                continue
            by_j: dict[float, int] = {}
            for _, j in hits:   # uncoupled subsets: each distinct J splits on its own (first order)
                by_j[round(abs(j), 3)] = by_j.get(round(abs(j), 3), 0) + 1
            groups.extend((j, spin, n) for j, n in sorted(by_j.items(), reverse=True))
        plist = sorted(partners)
        for i, p in enumerate(plist):
            for q in plist[i + 1:]:
                if frozenset((p, q)) in strong:
                    jp = {round(abs(j), 2) for _, j in partners[p]}
                    jq = {round(abs(j), 2) for _, j in partners[q]}
                    if jp == jq and len(jp) == 1:
                        # X part of ABX with J(AX) = J(BX): the A/B mixing leaves X a clean first-order
                        # pattern (Pople, Schneider & Bernstein 1959, ABX analysis; recalled from memory)
                        continue
                    reasons.append(f"partners {_letter(sets, p)} and {_letter(sets, q)} are strongly coupled "
                                   f"to each other at {mhz:g} MHz")
        if reasons:
            main = ((0.0, 1.0),)
            out[idx] = Multiplet(integral, "m", (), main, (), "; ".join(dict.fromkeys(reasons + apparent)))
            continue
        main = first_order_lines(groups)
        name = multiplicity_name(groups)
        j_list = tuple(round(j, 3) for j, _ in _group_by_j(groups))
        reason = ""
        if name == "m":
            reason = f"first-order pattern of {len(main)} lines has no short name"
        elif apparent:
            reason = (f"strictly second order ({apparent[0]}); the estimated couplings are equal, so it "
                      f"appears as a {name} (deceptively simple); simulate to see the fine structure")
            out[idx] = Multiplet(integral, "m", j_list, main, _satellites(mol, r, observed, main), reason,
                                 apparent=name)
            continue
        out[idx] = Multiplet(integral, name, j_list, main, _satellites(mol, r, observed, main), reason)
    return out


def _sets_with_coupled_subsets(sets, couplings) -> set[int]:
    """Indices of the sets two of whose magnetic subsets are joined by a non-zero J: only there does the
    inequivalence show (uncoupled isochronous subsets give first-order patterns)."""
    subset_of = {}
    for s in sets:
        for k, sub in enumerate(s.get("magnetic_subsets") or [s["atoms"]]):
            for a in sub:
                subset_of[a] = (s["index"], k)
    out = set()
    for c in couplings:
        a, b = c["atoms"]
        sa, sb = subset_of.get(a), subset_of.get(b)
        if c.get("j_hz") and sa and sb and sa[0] == sb[0] and sa[1] != sb[1]:
            out.add(sa[0])
    return out


def _equal_outside_couplings(atoms, comp, r, neighbours, inside) -> bool:
    """True when every member of the set in r's fragment copy has the same |J| to each outside nucleus
    as r has (the inequivalence is by symmetry only, not in the estimated couplings)."""
    def profile(a):
        return sorted((round(abs(j), 2)) for b, j in neighbours.get(a, []) if b not in inside)
    ref = profile(r)
    return all(profile(a) == ref for a in atoms if comp[a] == comp[r])


def to_json(m: Multiplet) -> dict:
    """JSON form of a multiplet (lists instead of tuples)."""
    return {
        "integral": m.integral,
        "multiplicity": m.multiplicity,
        "j_hz": list(m.j_hz),
        "lines": [[p, w] for p, w in m.lines],
        "satellites": [dict(s, lines=[[p, w] for p, w in s["lines"]]) for s in m.satellites],
        "reason": m.reason,
        "apparent_multiplicity": m.apparent or None,
    }
