"""Nuclear spin properties of NMR isotopes, read once from ``data/nuclei.csv`` (IUPAC 2001, Table 1).

Isotopes are named ``"1H"``, ``"13C"``, ``"195Pt"``; the tolerant forms ``"H1"``, ``"h-1"``, ``"C13"``
and ``"D"`` (deuterium) are accepted on input. Gyromagnetic ratios are in 10^7 rad T^-1 s^-1 and signed.
"""

from __future__ import annotations

import functools
import math
import re
from dataclasses import dataclass
from typing import Iterable

from equivclass.errors import InputError
from equivclass.tables import table_rows

DEFAULT_NUCLEI = ("1H", "19F", "31P")

#: Spin-1/2 isotopes below this natural abundance (%) are treated as isolated spins at natural
#: abundance: they show up as satellites, not as coupling partners. The threshold is our choice
#: (it separates 13C, 29Si, 117/119Sn, 195Pt, 109Ag ... from 1H, 19F, 31P, 107Ag, 205Tl).
DILUTE_ABUNDANCE_PCT = 50.0

_ALIASES = {"D": "2H"}
_MASS_FIRST = re.compile(r"^(\d+)([A-Za-z]{1,2})$")
_SYMBOL_FIRST = re.compile(r"^([A-Za-z]{1,2})(\d+)$")


@dataclass(frozen=True)
class Isotope:
    """One magnetic isotope: name ("13C"), element symbol, Z, A, spin I, abundance (%), gamma (1e7 rad/T/s)."""

    symbol: str
    element: str
    atomic_number: int
    mass_number: int
    spin: float
    abundance_pct: float
    gamma: float


@functools.lru_cache(maxsize=1)
def _table() -> tuple[tuple[Isotope, ...], dict[str, Isotope]]:
    rows = tuple(
        Isotope(
            symbol=r["isotope"],
            element=r["element"],
            atomic_number=int(r["atomic_number"]),
            mass_number=int(r["mass_number"]),
            spin=float(r["spin"]),
            abundance_pct=float(r["natural_abundance_pct"]),
            gamma=float(r["gamma_1e7"]),
        )
        for r in table_rows("nuclei.csv")
    )
    return rows, {iso.symbol: iso for iso in rows}


def _canonical_name(name: str) -> str:
    text = re.sub(r"[\s\-_]", "", name)
    text = _ALIASES.get(text, text)
    m = _MASS_FIRST.match(text)
    if m:
        mass, sym = m.groups()
    else:
        m = _SYMBOL_FIRST.match(text)
        if not m:
            return text
        sym, mass = m.groups()
    return f"{int(mass)}{sym.capitalize()}"


def isotope(name: str | Isotope) -> Isotope:
    """Return the isotope named ``name`` ("1H", "H1", "h-1", "C13" ...); unknown names raise InputError."""
    if isinstance(name, Isotope):
        return name
    if isinstance(name, str):
        hit = _table()[1].get(name)
        if hit is not None:
            return hit
    if not isinstance(name, str) or not name.strip():
        raise InputError(f"isotope {name!r}: expected a name such as '1H' or '13C'")
    found = _table()[1].get(_canonical_name(name))
    if found is None:
        raise InputError(f"isotope {name.strip()!r}: not a known magnetic isotope (write e.g. '1H', '13C', '195Pt')")
    return found


def all_isotopes() -> tuple[Isotope, ...]:
    """Every isotope of the table, ordered by atomic number then mass number."""
    return _table()[0]


def parse_isotope_list(items: str | Iterable[str | Isotope]) -> tuple[Isotope, ...]:
    """Parse "1H,19F 31P" (commas, semicolons or spaces) or an iterable of names; duplicates dropped, order kept."""
    if isinstance(items, str):
        items = [t for t in re.split(r"[,;\s]+", items) if t]
    out: dict[str, Isotope] = {}
    for item in items:
        iso = isotope(item)
        out.setdefault(iso.symbol, iso)
    if not out:
        raise InputError("isotope list is empty: name at least one isotope, e.g. '1H'")
    return tuple(out.values())


def isotopes_of(atomic_number: int) -> tuple[Isotope, ...]:
    """The magnetic isotopes of element ``atomic_number`` in the table (empty if it has none listed)."""
    return tuple(iso for iso in _table()[0] if iso.atomic_number == atomic_number)


def larmor_mhz(iso: str | Isotope, proton_mhz: float) -> float:
    """Larmor frequency |gamma / gamma(1H)| * proton_mhz in MHz.

    Always positive: the sense of precession (the sign of gamma) is kept in ``Isotope.gamma`` and not
    in the frequency. These are bare-nucleus ratios; they differ from the IUPAC Xi scale (which includes
    the shielding of each reference compound) by up to a few parts per thousand.
    """
    if not isinstance(proton_mhz, (int, float)) or not math.isfinite(proton_mhz) or proton_mhz <= 0:
        raise InputError(f"spectrometer frequency {proton_mhz!r} MHz: must be a positive number")
    iso = isotope(iso)
    return abs(iso.gamma / isotope("1H").gamma) * float(proton_mhz)


def is_dilute(iso: str | Isotope) -> bool:
    """True for spin-1/2 isotopes below DILUTE_ABUNDANCE_PCT natural abundance (satellites, not partners)."""
    iso = isotope(iso)
    return iso.spin == 0.5 and iso.abundance_pct < DILUTE_ABUNDANCE_PCT
