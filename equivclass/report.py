"""The result of one analysis as an immutable record, with its JSON dictionary and its text table.

Nothing above this module knows about output formats; the CLI, batch runner and web page only call
`Report.to_dict()` or `Report.to_text()`.
"""
from __future__ import annotations

from dataclasses import dataclass, field

from .notation import prime_text

CAUTION = ("Predicted from the structure: shifts, couplings and patterns are estimates, not measurements. "
           "Confirm identity and purity with measured spectra and local laboratory practice.")


@dataclass(frozen=True)
class CouplingResult:
    atoms: tuple[int, int]
    j_hz: float
    j_basis: str
    n_bonds: int


@dataclass(frozen=True)
class WitnessResult:
    atoms: tuple[int, int]
    partner: int
    paths: tuple            # ((n_bonds | None, j_hz | None), (n_bonds | None, j_hz | None))
    reason: str
    within_copy: bool = True   # False: the two nuclei lie in different uncoupled copies of a fragment


@dataclass(frozen=True)
class SetResult:
    index: int
    isotope: str
    element: str
    atoms: tuple[int, ...]
    magnetic_subsets: tuple[tuple[int, ...], ...]
    letter: str
    fragment: int
    shift_ppm: float
    shift_basis: str
    topicity: dict
    witnesses: tuple[WitnessResult, ...]
    exchange_decoupled: bool = False
    dilute: bool = False
    couplings: tuple = ()          # ({to_set, j_hz, j_basis, n_bonds}, ...)


@dataclass(frozen=True)
class FragmentResult:
    index: int
    label: str
    label_ascii: str
    copies: int
    sets: tuple[int, ...]
    first_order_above_mhz: float | None
    magnetically_inequivalent: bool
    strongly_coupled: tuple = ()
    subsets_coupled: bool = False


@dataclass(frozen=True)
class Report:
    name: str
    input: str
    smiles: str
    mhz: float
    nuclei: tuple[str, ...]
    label: str
    label_ascii: str
    fragments: tuple[FragmentResult, ...]
    sets: tuple[SetResult, ...]
    couplings: tuple[CouplingResult, ...]
    warnings: tuple[str, ...]
    options: dict = field(default_factory=dict)
    mol: object = None             # the analysed explicit-H RDKit molecule (for drawing)
    multiplets: dict = field(default_factory=dict)   # set index -> first-order multiplet (JSON form)
    listing: str = ""              # journal-style listing per observed isotope

    def to_dict(self) -> dict:
        return {
            "name": self.name,
            "input": self.input,
            "smiles": self.smiles,
            "mhz": self.mhz,
            "nuclei": list(self.nuclei),
            "label": self.label_ascii,
            "label_unicode": self.label,
            "fragments": [{
                "label": f.label_ascii, "label_unicode": f.label, "copies": f.copies, "sets": list(f.sets),
                "first_order_above_mhz": f.first_order_above_mhz,
                "magnetically_inequivalent": f.magnetically_inequivalent,
                "subsets_coupled": f.subsets_coupled,
                "strongly_coupled": [list(p) for p in f.strongly_coupled],
            } for f in self.fragments],
            "sets": [{
                "index": s.index, "isotope": s.isotope, "atoms": list(s.atoms),
                "magnetic_subsets": [list(x) for x in s.magnetic_subsets], "letter": s.letter,
                "fragment": s.fragment, "shift_ppm": s.shift_ppm, "shift_basis": s.shift_basis,
                "topicity": s.topicity,
                "witnesses": [{"atoms": list(w.atoms), "partner": w.partner,
                               "paths": [{"n_bonds": p[0], "j_hz": p[1]} for p in w.paths],
                               "reason": w.reason, "within_copy": w.within_copy} for w in s.witnesses],
                "exchange_decoupled": s.exchange_decoupled, "dilute": s.dilute,
                "couplings": [dict(c) for c in s.couplings],
                **self.multiplets.get(s.index, {}),
            } for s in self.sets],
            "couplings": [{"atoms": list(c.atoms), "j_hz": c.j_hz, "j_basis": c.j_basis,
                           "n_bonds": c.n_bonds} for c in self.couplings],
            "warnings": list(self.warnings),
            "listing": self.listing,
            "options": dict(self.options),
            "caution": CAUTION,
        }

    def to_text(self) -> str:
        lines = [f"Spin systems of {self.name}",
                 f"  structure  {self.smiles}",
                 f"  field      {self.mhz:g} MHz (1H); observed {', '.join(self.nuclei)}",
                 f"  label      {self.label}", ""]
        header = (f"{'set':>3}  {'letter':<7} {'nucleus':<7} {'n':>3}  {'δ est.':>7}  {'pattern':<16} "
                  f"{'atoms':<24} relation")
        lines.append(header)
        lines.append("-" * len(header))
        for s in self.sets:
            letter = _set_letters(s, self.fragments)
            atoms = ",".join(map(str, s.atoms))
            if len(atoms) > 24:
                atoms = atoms[:21] + "..."
            rel = s.topicity.get("within", "")
            if s.topicity.get("diastereotopic_to"):
                rel += "; diastereotopic to set " + ",".join(map(str, s.topicity["diastereotopic_to"]))
            if s.topicity.get("enantiotopic_to"):
                rel += "; enantiotopic to set " + ",".join(map(str, s.topicity["enantiotopic_to"]))
            if s.exchange_decoupled:
                rel += "; exchange-decoupled"
            if s.dilute:
                rel += "; dilute (satellites only)"
            lines.append(f"{s.index:>3}  {letter:<7} {s.isotope:<7} {len(s.atoms):>3}  {s.shift_ppm:>7.2f}  "
                         f"{_pattern(self.multiplets.get(s.index)):<16} {atoms:<24} {rel}")
        splits = [(s, w) for s in self.sets for w in s.witnesses if w.within_copy]
        if splits:
            lines += ["", "Magnetically inequivalent:"]
            for s, w in splits:
                lines.append(f"  set {s.index}: {w.reason}")
        lines += ["", "Fragments:"]
        for f in self.fragments:
            sets = ",".join(map(str, f.sets))
            lines.append(f"  {f.index}: {f.label:<18} sets {sets}  — {first_order_sentence(f, self.mhz)}")
        notes = [(i, m["reason"]) for i, m in sorted(self.multiplets.items()) if m.get("reason")]
        if notes:
            lines += ["", "Patterns:"] + [f"  set {i}: {why}" for i, why in notes]
        if self.listing:
            lines += ["", "Predicted listing:"] + [f"  {ln}" for ln in self.listing.splitlines()]
        if self.warnings:
            lines += ["", "Warnings:"] + [f"  {w}" for w in self.warnings]
        lines += ["", CAUTION]
        return "\n".join(lines)


def _pattern(m: dict | None) -> str:
    """Multiplicity with its J values, e.g. "dt 7.0, 1.5"."""
    if not m:
        return ""
    js = ", ".join(f"{j:.1f}" for j in m.get("j_hz", ()))
    name = m["multiplicity"] + (f" (app. {m['apparent_multiplicity']})" if m.get("apparent_multiplicity") else "")
    return f"{name} {js}".strip() if (js and name != "m") else name


def _set_letters(s: SetResult, fragments) -> str:
    frag = fragments[s.fragment] if 0 <= s.fragment < len(fragments) else None
    per_copy = len(s.magnetic_subsets) // (frag.copies if frag else 1) or 1
    if per_copy == 1:
        return s.letter
    return "".join(s.letter + prime_text(k) for k in range(per_copy))


def first_order_sentence(f: FragmentResult, mhz: float) -> str:
    """One sentence on whether the fragment is first order at this field."""
    if f.magnetically_inequivalent and f.subsets_coupled:
        return "magnetically inequivalent: second order at any field; simulate it."
    if f.magnetically_inequivalent:
        return ("magnetically inequivalent, but its magnetic subsets do not couple to one another, so the "
                "inequivalence does not show; " + _plain_first_order(f, mhz))
    return _plain_first_order(f, mhz)


def _plain_first_order(f: FragmentResult, mhz: float) -> str:
    if f.first_order_above_mhz is None:
        return ("coupled sets have equal estimated shifts (e.g. a diastereotopic pair whose real difference "
                "the estimate cannot give): strongly coupled as estimated; the first-order field is unknown.")
    if f.first_order_above_mhz == 0:
        return "no homonuclear coupling between its sets: first order at any field."
    if f.first_order_above_mhz <= mhz:
        return f"first order at {mhz:g} MHz (from about {f.first_order_above_mhz:g} MHz up)."
    return f"second order at {mhz:g} MHz; first order from about {f.first_order_above_mhz:g} MHz."
