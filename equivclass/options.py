"""Model and output options of one analysis (immutable)."""
from __future__ import annotations

import numbers
from dataclasses import dataclass, field

from . import nucdata
from .errors import InputError
from .structure import DEFAULT_MAX_HEAVY_ATOMS
from .couplings import DEFAULT_THRESHOLD_HZ


@dataclass(frozen=True)
class Options:
    """What is observed and which motions are fast.

    Defaults (DESIGN.md §3): 1H, 19F and 31P observed at 400 MHz; single-bond, methyl, ring and amine
    motions fast; amide C–N rotation slow; O–H, N–H (non-amide) and S–H exchange-decoupled; achiral medium.
    """

    mhz: float = 400.0
    nuclei: tuple = nucdata.DEFAULT_NUCLEI
    amide_rotation_fast: bool = False
    labile_coupled: bool = False
    chiral_medium: bool = False
    threshold_hz: float = DEFAULT_THRESHOLD_HZ
    max_heavy_atoms: int = DEFAULT_MAX_HEAVY_ATOMS
    stereoisomer: int = 0
    ring_couplings: bool = True     # Karplus on an embedded conformer for vicinal H–H across ring bonds
    shifts: tuple = field(default_factory=tuple)   # ((atom index, ppm), ...) given by the user

    def isotopes(self) -> tuple:
        return nucdata.parse_isotope_list(self.nuclei)

    def checked(self) -> "Options":
        if not (self.mhz > 0 and self.mhz < 1e5):
            raise InputError(f"field {self.mhz} MHz: give a positive proton frequency in MHz, e.g. 400")
        if not (0 <= self.threshold_hz < 1e4):
            raise InputError(f"coupling threshold {self.threshold_hz} Hz: give a number of Hz from 0 up, e.g. 0.3")
        if self.max_heavy_atoms < 1:
            raise InputError("size limit must be at least one heavy atom")
        if self.stereoisomer < 0:
            raise InputError("stereoisomer number must be 0 or more")
        self.isotopes()
        return self


def make_options(**kwargs) -> Options:
    """Options from keyword arguments; unknown names are an error naming the option."""
    kwargs = {k: v for k, v in kwargs.items() if k != "name"}
    known = set(Options.__dataclass_fields__)
    unknown = sorted(set(kwargs) - known)
    if unknown:
        raise InputError(f"unknown option(s): {', '.join(unknown)}")
    if "nuclei" in kwargs and kwargs["nuclei"] is not None:
        if not isinstance(kwargs["nuclei"], (str, list, tuple)):
            raise InputError(f"option nuclei: give isotopes such as '1H,19F' or ['13C'], not {kwargs['nuclei']!r}")
        kwargs["nuclei"] = tuple(i.symbol for i in nucdata.parse_isotope_list(kwargs["nuclei"]))
    if "shifts" in kwargs:
        sh = kwargs["shifts"] or ()
        try:
            kwargs["shifts"] = tuple(sorted((int(k), float(v)) for k, v in
                                            (sh.items() if isinstance(sh, dict) else sh)))
        except (TypeError, ValueError):
            raise InputError(f"option shifts: give atom index and ppm pairs, e.g. {{3: 1.25}}, not {sh!r}") from None
    kwargs = {k: v for k, v in kwargs.items() if v is not None}
    for k, v in kwargs.items():
        _check_type(k, v)
    return Options(**kwargs).checked()


_BOOL_FIELDS = ("amide_rotation_fast", "labile_coupled", "chiral_medium", "ring_couplings")
_NUMBER_FIELDS = ("mhz", "threshold_hz")
_INT_FIELDS = ("max_heavy_atoms", "stereoisomer")


def _check_type(name: str, value) -> None:
    """A value of the wrong kind is an error naming the option (a string such as "table" would
    otherwise pass as a true flag)."""
    if name in _BOOL_FIELDS and not isinstance(value, bool):
        raise InputError(f"option {name}: give true or false, not {value!r}")
    if name in _NUMBER_FIELDS and (isinstance(value, bool) or not isinstance(value, numbers.Real)):
        raise InputError(f"option {name}: give a number, not {value!r}")
    if name in _INT_FIELDS and (isinstance(value, bool) or not isinstance(value, numbers.Integral)):
        raise InputError(f"option {name}: give a whole number, not {value!r}")
