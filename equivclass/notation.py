"""Fragments and Pople letters.

Fragments are connected components of the non-zero coupling network (a magnetically equivalent group
counts as one node); components made of the same
chemical sets are one fragment with a copy count. Within a fragment, isotopes take separate regions of
the alphabet in order of |γ|, sets of one isotope are ordered by shift (lowest δ first), sets that are
strongly coupled (|Δν| < 10·|J| at the field) take adjacent letters, weakly coupled clusters take letters
far apart (A…, M…, X…). Counts are digits, magnetic subsets primes (Pople, Schneider & Bernstein 1959).
"""
from __future__ import annotations

from dataclasses import dataclass

from . import nucdata
from .disjoint_sets import DisjointSets

PRIMES = ("", "′", "″", "‴", "⁗")
ASCII_PRIMES = ("", "'", "''", "'''", "''''")
STRONG_RATIO = 10.0  # |Δν| < 10·|J| means strongly coupled (common practice)


@dataclass(frozen=True)
class SetSpec:
    """What notation needs to know of one chemical set."""

    isotope: nucdata.Isotope
    atoms: tuple[int, ...]
    subsets: tuple[tuple[int, ...], ...]
    shift_ppm: float


@dataclass(frozen=True)
class FragmentLabel:
    sets: tuple[int, ...]              # indices of the sets, in letter order
    copies: int
    component: tuple[int, ...]         # atoms of one copy
    letters: dict                      # set index -> letter
    label: str                         # with Unicode primes
    label_ascii: str
    first_order_above_mhz: float | None
    magnetically_inequivalent: bool
    strongly_coupled_pairs: tuple
    subsets_coupled: bool = False      # a non-zero J joins two magnetic subsets of one set


def _connected(atoms, couplings, groups) -> list[set]:
    """Connected components of `atoms` joined by the couplings and by each group of `groups`
    (magnetic subsets: magnetically equivalent nuclei act as one node)."""
    ds = DisjointSets(atoms)
    for c in couplings:
        if c.a in ds and c.b in ds:
            ds.union(c.a, c.b)
    for group in groups:
        inside = [a for a in group if a in ds]
        for a in inside[1:]:
            ds.union(inside[0], a)
    out = {}
    for a in atoms:
        out.setdefault(ds.find(a), set()).add(a)
    return list(out.values())


def components(sets: list[SetSpec], couplings) -> list[frozenset]:
    """Atoms of each connected component of the coupling network (magnetic subsets kept together)."""
    atoms = [a for s in sets for a in s.atoms]
    return [frozenset(g) for g in _connected(atoms, couplings, [sub for s in sets for sub in s.subsets])]


def prime_text(k: int, table=PRIMES) -> str:
    """k primes: ′ ″ ‴ ⁗, then the count in parentheses (A⁽⁵⁾), never a bare digit that would read as a
    nucleus count; ASCII: ' '' ' then (5)."""
    if k < len(table):
        return table[k]
    if table is PRIMES:
        return "⁽" + str(k).translate(str.maketrans("0123456789", "⁰¹²³⁴⁵⁶⁷⁸⁹")) + "⁾"
    return f"({k})"


def _letter_starts(sizes: list[int]) -> list[int]:
    """First letter (0 = A) of each cluster: A, M, X anchors when they fit, even spacing otherwise."""
    k, total = len(sizes), sum(sizes)
    if total > 26:
        starts, pos = [], 0
        for s in sizes:
            starts.append(pos)
            pos += s
        return starts
    anchors = {1: [0], 2: [0, 23], 3: [0, 12, 23], 4: [0, 12, 17, 23]}.get(k)  # A, M, R, X
    if anchors:
        starts, prev_end = [], 0
        for i, (a, s) in enumerate(zip(anchors, sizes)):
            start = max(a, prev_end)
            if i == k - 1:
                start = max(prev_end, min(a, 26 - s))
            starts.append(start)
            prev_end = start + s
        if prev_end <= 26:
            return starts
    gap = (26 - total) // max(k - 1, 1)
    starts, pos = [], 0
    for s in sizes:
        starts.append(pos)
        pos += s + gap
    return starts


def _letter(index: int) -> str:
    """A…Z, then a…z for the 27th to 52nd set of one fragment (a digit after a letter means a count),
    then Z with the position in parentheses."""
    if index < 26:
        return chr(ord("A") + index)
    if index < 52:
        return chr(ord("a") + index - 26)
    return f"Z({index + 1})"


def label_fragments(sets: list[SetSpec], couplings, mhz: float) -> list[FragmentLabel]:
    jmax = {}
    atom_set = {a: i for i, s in enumerate(sets) for a in s.atoms}
    for c in couplings:
        if c.a in atom_set and c.b in atom_set:
            key = (atom_set[c.a], atom_set[c.b])
            for k in (key, key[::-1]):
                jmax[k] = max(jmax.get(k, 0.0), abs(c.j_hz))
    comps = components(sets, couplings)
    by_signature = {}
    for comp in comps:
        sig = tuple(sorted({atom_set[a] for a in comp}))
        by_signature.setdefault(sig, []).append(comp)
    out = []
    for sig, group in sorted(by_signature.items(), key=lambda kv: kv[0]):
        comp = min(group, key=lambda c: sorted(atom_set[a] for a in c))
        out.append(_label_one(sets, sig, comp, len(group), jmax, couplings, atom_set, mhz))
    return out


def _subset_text(letter, subs, table) -> str:
    return "".join(f"{letter}{prime_text(p, table)}{'' if len(sub) == 1 else len(sub)}"
                   for p, sub in enumerate(subs))


def _composite(sets, order, letters, comp_set, couplings):
    """[AA′BB′C]₃X form: identical sub-systems that couple to one another only through one shared set of
    another isotope (the three rings of triphenylphosphine through P). None when there is no such form."""
    for hub in order:
        hub_atoms = set(sets[hub].atoms) & comp_set
        rest = comp_set - hub_atoms
        others = [i for i in order if i != hub]
        if not rest or any(sets[i].isotope.symbol == sets[hub].isotope.symbol for i in others):
            continue   # the shared set is a heteronucleus (P, F, Si …) joining proton sub-systems
        parts = _connected(sorted(rest), couplings, [sub for i in order for sub in sets[i].subsets])
        k = len(parts)
        if k < 2 or len({len(g) for g in parts}) != 1:
            continue
        set_of = {a: i for i in order for a in sets[i].atoms}
        signatures = {tuple(sorted(set_of[a] for a in g)) for g in parts}
        if len(signatures) != 1:
            continue
        copy = parts[0]
        text, ascii_text = "", ""
        for i in order:
            if i == hub:
                continue
            subs = [sub for sub in sets[i].subsets if set(sub) <= copy]
            text += _subset_text(letters[i], subs, PRIMES)
            ascii_text += _subset_text(letters[i], subs, ASCII_PRIMES)
        hub_subs = [sub for sub in sets[hub].subsets if set(sub) <= comp_set] or [tuple(hub_atoms)]
        hub_text = _subset_text(letters[hub], hub_subs, PRIMES)
        hub_ascii = _subset_text(letters[hub], hub_subs, ASCII_PRIMES)
        sub_k = str(k).translate(str.maketrans("0123456789", "₀₁₂₃₄₅₆₇₈₉"))
        if order.index(hub) < min(order.index(i) for i in order if i != hub):
            return f"{hub_text}[{text}]{sub_k}", f"{hub_ascii}[{ascii_text}]{k}"
        return f"[{text}]{sub_k}{hub_text}", f"[{ascii_text}]{k}{hub_ascii}"
    return None


def _label_one(sets, sig, comp, copies, jmax, couplings, atom_set, mhz) -> FragmentLabel:
    comp_set = set(comp)
    order = sorted(sig, key=lambda i: (-abs(sets[i].isotope.gamma), sets[i].isotope.symbol,
                                       sets[i].shift_ppm, i))
    strong_pairs, threshold = [], 0.0
    inequivalent = False
    never_first_order = False
    freq = {i: abs(sets[i].isotope.gamma / nucdata.isotope("1H").gamma) for i in sig}
    for x, i in enumerate(order):
        for j in order[x + 1:]:
            if sets[i].isotope.symbol != sets[j].isotope.symbol or (i, j) not in jmax:
                continue
            dppm = abs(sets[i].shift_ppm - sets[j].shift_ppm)
            jv = jmax[(i, j)]
            if dppm * freq[i] * mhz < STRONG_RATIO * jv:
                strong_pairs.append((i, j))
            if dppm == 0:
                never_first_order = True
            else:
                threshold = max(threshold, STRONG_RATIO * jv / (dppm * freq[i]))
    # clusters of strongly coupled sets (same isotope only)
    strong_pairs_letters = []
    cluster_of = {i: i for i in order}

    def find(x):
        while cluster_of[x] != x:
            x = cluster_of[x]
        return x

    for x, i in enumerate(order):   # isochronous sets of one isotope take adjacent letters too
        for j in order[x + 1:]:
            if sets[i].isotope.symbol == sets[j].isotope.symbol and \
                    abs(sets[i].shift_ppm - sets[j].shift_ppm) < 0.005 and (i, j) not in strong_pairs:
                strong_pairs_letters.append((i, j))
    for i, j in strong_pairs + strong_pairs_letters:
        ri, rj = find(i), find(j)
        if ri != rj:
            cluster_of[max(ri, rj, key=order.index)] = min(ri, rj, key=order.index)
    clusters, seen = [], {}
    for i in order:
        r = find(i)
        if r not in seen:
            seen[r] = len(clusters)
            clusters.append([])
        clusters[seen[r]].append(i)
    starts = _letter_starts([len(c) for c in clusters])
    letters, parts, parts_ascii = {}, [], []
    for start, cluster in zip(starts, clusters):
        for k, i in enumerate(cluster):
            letter = _letter(start + k)
            letters[i] = letter
            subs = [s for s in sets[i].subsets if set(s) <= comp_set] or \
                [tuple(a for a in sets[i].atoms if a in comp_set)]
            if len(subs) > 1:
                inequivalent = True
            for p, sub in enumerate(subs):
                count = "" if len(sub) == 1 else str(len(sub))
                parts.append(f"{letter}{prime_text(p, PRIMES)}{count}")
                parts_ascii.append(f"{letter}{prime_text(p, ASCII_PRIMES)}{count}")
    label, label_ascii = "".join(parts), "".join(parts_ascii)
    if inequivalent:
        composite = _composite(sets, [i for c in clusters for i in c], letters, comp_set, couplings)
        if composite:
            label, label_ascii = composite
    if copies > 1:
        label, label_ascii = f"{copies} × {label}", f"{copies}x{label_ascii}"
    coupled = inequivalent and subsets_coupled(sets, sig, comp_set, couplings)
    first_order = None if (coupled or never_first_order) else round(threshold, 1)
    ordered = tuple(i for c in clusters for i in c)
    return FragmentLabel(ordered, copies, tuple(sorted(comp)), letters, label, label_ascii,
                         first_order, inequivalent, tuple(strong_pairs), coupled)


def subsets_coupled(sets, sig, comp_set, couplings) -> bool:
    """True when a non-zero J joins nuclei of two different magnetic subsets of one set. Only then does
    magnetic inequivalence show in the spectrum: isochronous nuclei that do not couple to one another
    give first-order patterns once all other couplings are weak ([A3M2]3X of Et3PO is three ethyl
    patterns; Günther ch. 5, AA'XX' analysis, recalled from memory)."""
    subset_of = {}
    for i in sig:
        for k, sub in enumerate(sets[i].subsets):
            for a in sub:
                if a in comp_set:
                    subset_of[a] = (i, k)
    for c in couplings:
        sa, sb = subset_of.get(c.a), subset_of.get(c.b)
        if sa and sb and sa[0] == sb[0] and sa[1] != sb[1] and c.j_hz:
            return True
    return False
