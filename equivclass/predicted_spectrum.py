"""Predicted spectrum of a structure: exact simulation of each coupled fragment of a Report.

Rules:

* One fragment of the report is one spin system.  With ``copies`` > 1 only one copy (one connected
  component of the atom-level coupling network) is simulated and its intensities are multiplied by
  the copy count.
* Shifts (Hz) = estimated or user-given shift (ppm) x Larmor frequency of the atom's isotope at the
  report's field; couplings are the report's atom-level J (Hz); spins and isotopes come from the
  nuclear-data table.  Homonuclear couplings act as J I.I, heteronuclear ones as J Iz Iz (high-field
  limit; Pople, Schneider & Bernstein 1959, ch. 6).  Isotopes in ``decouple`` are removed.
* Exchange-decoupled sets (O-H, N-H, S-H) and dilute-isotope sets (13C at natural abundance ...)
  are isolated singlets.
* A fragment whose exact simulation would need a Hamiltonian block above ``max_block`` states (after
  the exact composite-spin reduction of magnetically equivalent groups) or more than ``max_work``
  (sum of cubed block sizes) is given by first-order lines instead (binomial/polynomial multiplets
  around each nucleus' shift), and a note says so.
* Every observed nucleus contributes one unit of intensity (sum rule).

Frequencies are absolute: shift_ppm x observe_MHz, so ``freq / observe_mhz`` is the shift in ppm.
"""
from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np

from equivclass import nucdata
from equivclass.disjoint_sets import DisjointSets
from equivclass.errors import InputError
from equivclass.multiplets import first_order_lines
from equivclass.simulate import SpinSystem, Transitions, equivalent_groups, simulate

__all__ = ["FragmentNote", "PredictedSpectrum", "spectrum_of", "predict", "largest_block", "write_files", "stick_text",
           "MAX_BLOCK", "MAX_WORK"]

#: Largest Hamiltonian block (states) simulated exactly; larger fragments use first-order lines.
MAX_BLOCK = 1024
#: Largest total work (sum over composite-spin combinations of the cubed block sizes) simulated exactly.
MAX_WORK = 2.0e9
#: At most this many composite-spin combinations per fragment are simulated exactly.
MAX_COMBINATIONS = 4096


@dataclass(frozen=True)
class FragmentNote:
    """How one fragment entered the spectrum.

    ``method``: "exact", "first order" (too large for exact simulation) or "singlet" (exchange-decoupled
    or dilute sets). ``largest_block``: states of the largest Hamiltonian block (0 when not simulated).
    """

    fragment: int
    label: str
    copies: int
    method: str
    observed_nuclei: int
    largest_block: int
    note: str = ""


@dataclass(frozen=True, eq=False)
class PredictedSpectrum:
    """Predicted line list of one observed isotope (frequencies absolute, Hz = ppm x observe_mhz)."""

    name: str
    observe: str
    decoupled: tuple
    proton_mhz: float
    observe_mhz: float
    transitions: Transitions
    fragments: tuple

    @property
    def total_intensity(self) -> float:
        return float(np.sum(self.transitions.intensities))

    @property
    def observed_nuclei(self) -> int:
        return sum(f.observed_nuclei for f in self.fragments)

    @property
    def largest_block(self) -> int:
        return max([f.largest_block for f in self.fragments] + [0])

    @property
    def notes(self) -> tuple:
        return tuple(f"fragment {f.fragment} ({f.label}): {f.note}" for f in self.fragments if f.note)

    def ppm(self) -> np.ndarray:
        return np.asarray(self.transitions.freqs_hz) / self.observe_mhz

    def title(self) -> str:
        dec = f", {{{','.join(self.decoupled)}}} decoupled" if self.decoupled else ""
        return (f"Predicted {self.observe} spectrum of {self.name} at {self.observe_mhz:.6g} MHz{dec} "
                f"(estimate)")


# --------------------------------------------------------------------------- public entry

def spectrum_of(report, observe: str = "1H", decouple=(), max_block: int = MAX_BLOCK,
                max_work: float = MAX_WORK) -> PredictedSpectrum:
    """Predicted spectrum of isotope ``observe`` for the analysed structure ``report``."""
    d = report.to_dict()
    name = d.get("name") if d.get("name") not in (None, "", "input") else d.get("smiles") or "structure"
    observe = nucdata.isotope(observe).symbol
    if isinstance(decouple, str):
        decouple = [t for t in decouple.replace(";", ",").replace(" ", ",").split(",") if t]
    decoupled = tuple(dict.fromkeys(nucdata.isotope(x).symbol for x in decouple))
    if observe in decoupled:
        raise InputError(f"{name}: the observed isotope {observe} cannot also be decoupled")
    sets = {s["index"]: s for s in d["sets"]}
    if not any(s["isotope"] == observe for s in sets.values()):
        raise InputError(f"{name}: no {observe} nuclei to observe (isotopes analysed: "
                         f"{', '.join(d['nuclei'])}; add {observe} to the nuclei option)")
    proton_mhz = float(d["mhz"])
    observe_mhz = nucdata.larmor_mhz(observe, proton_mhz)
    set_of_atom = {a: s["index"] for s in sets.values() for a in s["atoms"]}
    neighbours: dict = {}
    for c in d["couplings"]:
        a, b = c["atoms"]
        if c["j_hz"] and a in set_of_atom and b in set_of_atom:
            neighbours.setdefault(a, {})[b] = float(c["j_hz"])
            neighbours.setdefault(b, {})[a] = float(c["j_hz"])

    freqs, amps, notes = [], [], []
    for index, frag in enumerate(d["fragments"]):
        f_sets = [sets[i] for i in frag["sets"]]
        n_obs = sum(len(s["atoms"]) for s in f_sets if s["isotope"] == observe)
        if n_obs == 0:
            continue
        label, copies = frag["label"], int(frag["copies"])
        single = [s for s in f_sets if s.get("dilute") or s.get("exchange_decoupled")]
        coupled = [s for s in f_sets if s not in single]
        split_by_heteronuclei = False
        for s in single:
            if s["isotope"] != observe:
                continue
            if s.get("dilute") and any(a in neighbours for a in s["atoms"]):
                # natural-abundance 13C with 19F, 31P or 2H partners: their first-order splitting
                f, a = _first_order(s["atoms"], sets, set_of_atom, neighbours, observe, decoupled, observe_mhz)
                freqs.append(f)
                amps.append(a)
                split_by_heteronuclei = True
            else:
                freqs.append(np.array([s["shift_ppm"] * observe_mhz]))
                amps.append(np.array([float(len(s["atoms"]))]))
        if not any(s["isotope"] == observe for s in coupled):
            dilute = any(s.get("dilute") for s in single if s["isotope"] == observe)
            why = ("dilute isotope at natural abundance: 1H-decoupled; first-order splitting by "
                   "19F/31P/2H partners only" if split_by_heteronuclei else
                   "dilute isotope at natural abundance: singlet (1H-decoupled; no heteronuclear partner "
                   "observed)" if dilute else "")
            notes.append(FragmentNote(index, label, copies, "first order" if split_by_heteronuclei
                                      else "singlet", n_obs, 0, why))
            continue
        atoms = sorted(a for s in coupled for a in s["atoms"])
        comps = _components(atoms, neighbours)
        if copies > 1 and len(comps) == copies and len({len(c) for c in comps}) == 1:
            parts, factor = [comps[0]], float(copies)
        else:
            parts, factor = [atoms], 1.0
        for part in parts:
            system = _system(part, sets, set_of_atom, neighbours, proton_mhz, f"{name} fragment {index}")
            block, work = _cost(system, observe, decoupled)
            if block <= max_block and work <= max_work:
                t = simulate(system, observe, decoupled)
                f, a = np.asarray(t.freqs_hz), np.asarray(t.intensities)
                method, note = "exact", ""
            else:
                f, a = _first_order(part, sets, set_of_atom, neighbours, observe, decoupled, observe_mhz)
                method = "first order"
                note = (f"first-order lines: exact simulation would need a block of {block} states "
                        f"(limit {max_block}) or work {work:.3g} (limit {max_work:.3g})")
                block = 0
            freqs.append(f)
            amps.append(a * factor)
            notes.append(FragmentNote(index, label, copies, method, n_obs, int(block), note))
    f = np.concatenate(freqs) if freqs else np.zeros(0)
    a = np.concatenate(amps) if amps else np.zeros(0)
    order = np.argsort(f, kind="stable")
    return PredictedSpectrum(name, observe, decoupled, proton_mhz, observe_mhz,
                             Transitions(f[order], a[order], observe), tuple(notes))


# --------------------------------------------------------------------------- helpers

def _components(atoms, neighbours) -> list:
    """Connected components (sorted atom lists) of the coupling network restricted to ``atoms``."""
    ds = DisjointSets(atoms)
    for a in atoms:
        for b in neighbours.get(a, ()):
            if b in ds:
                ds.union(a, b)
    return ds.groups()


def _system(atoms, sets, set_of_atom, neighbours, proton_mhz, record) -> SpinSystem:
    iso = [sets[set_of_atom[a]]["isotope"] for a in atoms]
    shifts = [sets[set_of_atom[a]]["shift_ppm"] * nucdata.larmor_mhz(i, proton_mhz)
              for a, i in zip(atoms, iso)]
    spins = [nucdata.isotope(i).spin for i in iso]
    pos = {a: k for k, a in enumerate(atoms)}
    j = np.zeros((len(atoms), len(atoms)))
    for a in atoms:
        for b, val in neighbours.get(a, {}).items():
            if b in pos:
                j[pos[a], pos[b]] = val
    return SpinSystem(shifts, j, spins, iso, record)


def _multiplicities(count: int, spin: float) -> list:
    """Total spins S (as 2S+1 dimensions) reachable by ``count`` spins ``spin``, with multiplicities."""
    d = int(round(2 * spin)) + 1
    poly = np.ones(1, dtype=np.int64)
    for _ in range(count):
        poly = np.convolve(poly, np.ones(d, dtype=np.int64))
    top = poly.size - 1                 # 2 * count * spin
    out = []
    for i in range(top // 2 + 1):
        mult = int(poly[i] - (poly[i - 1] if i else 0))
        if mult:
            out.append(top - 2 * i + 1)   # dimension 2S+1
    return out


def largest_block(system: SpinSystem, observe: str, decoupled: tuple = ()) -> int:
    """States of the largest Hamiltonian block the exact simulation of ``system`` diagonalises."""
    return _cost(system, observe, decoupled)[0]


def _cost(system: SpinSystem, observe: str, decoupled: tuple) -> tuple:
    """(largest block, sum of cubed block sizes) of the exact simulation, an upper bound.

    Mirrors the simulator's reductions: magnetically equivalent groups become composite spins of each
    total S, and the Hamiltonian splits by the total Fz of every homonuclear coupling component.
    """
    keep = [k for k, i in enumerate(system.isotopes) if i not in decoupled]
    nu = np.asarray(system.shifts_hz)[keep]
    jm = np.asarray(system.j_hz)[np.ix_(keep, keep)]
    spins = [system.spins[k] for k in keep]
    iso = [system.isotopes[k] for k in keep]
    groups = equivalent_groups(nu, jm, spins, iso)
    reps = [g[0] for g in groups]
    # homonuclear coupling components over groups (union-find)
    parent = list(range(len(groups)))

    def root(x):
        while parent[x] != x:
            parent[x] = parent[parent[x]]
            x = parent[x]
        return x
    for p, q in itertools.combinations(range(len(groups)), 2):
        if iso[reps[p]] == iso[reps[q]] and abs(jm[reps[p], reps[q]]) > 1e-9:
            parent[root(p)] = root(q)
    comps: dict = {}
    for g in range(len(groups)):
        comps.setdefault(root(g), []).append(g)
    options = [_multiplicities(len(g), spins[g[0]]) for g in groups]
    combos = 1
    for o in options:
        combos *= len(o)
    if combos > MAX_COMBINATIONS:
        return 10 ** 9, float("inf")
    largest, work = 1, 0.0
    for combo in itertools.product(*options):
        big, w = 1, 1.0
        for members in comps.values():
            poly = np.ones(1)
            for g in members:
                poly = np.convolve(poly, np.ones(combo[g]))
            big *= int(poly.max())
            w *= float(np.sum(poly ** 3))
        largest = max(largest, big)
        work += w
    return largest, work


def _first_order(atoms, sets, set_of_atom, neighbours, observe, decoupled, observe_mhz):
    """First-order lines of each observed atom: its partners (outside its own set, not decoupled, not
    dilute) grouped by |J| and spin, binomial/polynomial multiplets (multiplets.first_order_lines)."""
    freqs, amps = [], []
    for a in atoms:
        s = sets[set_of_atom[a]]
        if s["isotope"] != observe:
            continue
        groups: dict = {}
        for b, j in neighbours.get(a, {}).items():
            p = sets[set_of_atom[b]]
            if p["index"] == s["index"] or p["isotope"] in decoupled or p.get("dilute"):
                continue
            if p.get("exchange_decoupled"):
                continue
            spin = nucdata.isotope(p["isotope"]).spin
            key = (round(abs(j), 3), spin)
            groups[key] = groups.get(key, 0) + 1
        lines = first_order_lines([(j, spin, n) for (j, spin), n in sorted(groups.items())])
        centre = s["shift_ppm"] * observe_mhz
        for off, w in lines:
            freqs.append(centre + off)
            amps.append(w)
    return np.asarray(freqs, dtype=float), np.asarray(amps, dtype=float)


# --------------------------------------------------------------------------- files

def predict(structure, observe: str = "1H", decouple=(), **options) -> PredictedSpectrum:
    """Analyse ``structure`` (same input rules as ``analysis.analyze``) and predict its spectrum.

    ``observe`` is added to the analysed nuclei when it is not among them.
    """
    from equivclass.analysis import analyze

    nuclei = options.pop("nuclei", nucdata.DEFAULT_NUCLEI)
    names = [i.symbol for i in nucdata.parse_isotope_list(nuclei)]
    observe = nucdata.isotope(observe).symbol
    if observe not in names:
        names.append(observe)
    return spectrum_of(analyze(structure, nuclei=",".join(names), **options), observe, decouple)


def write_files(pred: PredictedSpectrum, plot=None, lines=None, jcamp=None, linewidth_hz: float = 1.0,
                gaussian_hz: float = 0.0, points: int = 16384, title: str | None = None) -> None:
    """Write the plot (PNG/SVG), the CSV line list and the JCAMP-DX spectrum that are asked for."""
    from equivclass import spectrum

    title = title or pred.title()
    if plot or jcamp:
        ppm, y = spectrum.lineshape(pred.transitions, pred.observe_mhz, points=points,
                                    linewidth_hz=linewidth_hz, gaussian_hz=gaussian_hz)
        if plot:
            spectrum.plot(plot, ppm, y, pred.observe, title,
                          sticks=(pred.ppm(), np.asarray(pred.transitions.intensities)))
        if jcamp:
            spectrum.write_jcamp(jcamp, ppm, y, pred.observe_mhz, pred.observe, title)
    if lines:
        spectrum.write_csv(lines, pred.transitions, pred.observe_mhz)


def stick_text(pred: PredictedSpectrum, limit: float = 1e-4, title: str | None = None) -> str:
    """Plain-text stick list: one line per transition (lines below ``limit`` x strongest omitted)."""
    from equivclass.spectrum import FOOTER

    f = np.asarray(pred.transitions.freqs_hz)
    a = np.asarray(pred.transitions.intensities)
    out = [title or pred.title(),
           f"  {len(f)} lines, total intensity {pred.total_intensity:.4f} "
           f"({pred.observed_nuclei} {pred.observe} nuclei)"
           + (f", largest block {pred.largest_block} states" if pred.largest_block else ""),
           f"{'delta/ppm':>12} {'nu/Hz':>14} {'intensity':>11}"]
    top = float(a.max()) if a.size else 0.0
    shown = 0
    for fi, ai in zip(f, a):
        if ai >= limit * top:
            out.append(f"{fi / pred.observe_mhz:12.5f} {fi:14.4f} {ai:11.5f}")
            shown += 1
    if shown < len(f):
        out.append(f"  ({len(f) - shown} lines weaker than {limit:g} of the strongest not shown)")
    out.extend(f"  note: {n}" for n in pred.notes)
    out.append(FOOTER)
    return "\n".join(out)
