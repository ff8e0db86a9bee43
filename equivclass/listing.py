"""Predicted spectrum as a one-paragraph listing per observed isotope, in the form of experimental
sections: δ (ppm) descending, multiplicity, J (Hz), integral, e.g.

    ¹H NMR (400 MHz, predicted): δ 4.12 (q, J = 7.0 Hz, 2H), 2.05 (s, 3H), 1.26 (t, J = 7.0 Hz, 3H).

Rules (common practice of experimental sections): second-order sets (``m``) that lie within
RANGE_PPM of each other are written as one range "7.29–7.17 (m, 5H)"; J values one decimal, largest
first; dilute isotopes (13C …) carry no C–H couplings in the prediction and are headed {¹H}; 13C
counts are given only when more than one carbon ("2C"). Every listing says it is predicted.
"""

from __future__ import annotations

from equivclass import nucdata

__all__ = ["journal_listing", "journal_listings", "RANGE_PPM"]

#: Neighbouring second-order sets closer than this (ppm) merge into one range (common practice).
RANGE_PPM = 0.10
_SUP = str.maketrans("0123456789", "⁰¹²³⁴⁵⁶⁷⁸⁹")
_NOTE = "Estimate from the structure, not a measurement."


def _nucleus(iso: str) -> str:
    i = nucdata.isotope(iso)
    return f"{str(i.mass_number).translate(_SUP)}{i.element}"


def _decimals(iso: str) -> int:
    return 2 if iso in ("1H", "2H", "3H") else 1


def _fmt(x: float, nd: int) -> str:
    return f"{x:.{nd}f}".replace("-", "−")


def journal_listing(report_dict: dict, multiplets: dict, isotope: str = "1H") -> str:
    """One listing for ``isotope`` ("" when the record has no set of it)."""
    iso = nucdata.isotope(isotope).symbol
    sets = [s for s in report_dict.get("sets", []) if s.get("isotope") == iso and s.get("shift_ppm") is not None]
    if not sets:
        return ""
    nd = _decimals(iso)
    element = {"2H": "D", "3H": "T"}.get(iso, nucdata.isotope(iso).element)
    mhz = nucdata.larmor_mhz(iso, float(report_dict.get("mhz", 400.0)))
    head = _nucleus(iso)
    if nucdata.is_dilute(iso):
        head += "{" + _nucleus("1H") + "}"
    entries: list[tuple[float, float, str, float]] = []  # (δ high, δ low, multiplicity text, count)
    for s in sorted(sets, key=lambda s: -float(s["shift_ppm"])):
        m = multiplets.get(s["index"])
        mult = m.multiplicity if m is not None else "m"
        count = float(m.integral) if m is not None else float(len(s["atoms"]))
        apparent = getattr(m, "apparent", "") if m is not None else ""
        js = tuple(m.j_hz) if m is not None and (apparent or mult not in ("m", "s", "br s")) else ()
        d = float(s["shift_ppm"])
        if apparent:
            mult = f"m, app. {apparent}"
        if mult == "m" and entries and entries[-1][2] == "m" and entries[-1][1] - d <= RANGE_PPM + 1e-9:
            hi, _, _, c = entries[-1]
            entries[-1] = (hi, d, "m", c + count)
            continue
        text = mult
        if js:
            text += ", J = " + ", ".join(_fmt(j, 1) for j in js) + " Hz"
        entries.append((d, d, text if js else mult, count))
    parts = []
    for hi, lo, text, count in entries:
        shift = _fmt(hi, nd) if abs(hi - lo) < 1e-9 else f"{_fmt(hi, nd)}–{_fmt(lo, nd)}"
        n = int(round(count))
        if nucdata.is_dilute(iso):
            count_text = f"{n}{element}" if n > 1 else ""
            if text == "s":  # decoupled singlets: shift alone, count only when several nuclei
                parts.append(f"{shift} ({count_text})" if count_text else shift)
            else:
                parts.append(f"{shift} ({text}, {count_text})" if count_text else f"{shift} ({text})")
        else:
            parts.append(f"{shift} ({text}, {n}{element})")
    return f"{head} NMR ({mhz:.0f} MHz, predicted): δ " + ", ".join(parts) + ". " + _NOTE


def journal_listings(report_dict: dict, multiplets: dict) -> str:
    """Listings for every isotope of the record's sets, one per line, in the record's isotope order."""
    seen: list[str] = []
    for s in report_dict.get("sets", []):
        if s.get("isotope") not in seen:
            seen.append(s["isotope"])
    return "\n".join(t for t in (journal_listing(report_dict, multiplets, i) for i in seen) if t)
