"""Nuclear-data table checked row by row against independent reference libraries.

References: mendeleev 1.3.0 (spin, abundance, nuclear g-factor) and periodictable 2.1.0 (abundance).
periodictable has no spins or moments, so spin and gamma are checked against mendeleev only.
"""

import dataclasses
import functools
import math
from fractions import Fraction

import periodictable
import pytest
from mendeleev.fetch import fetch_table

from equivclass import nucdata
from equivclass.errors import InputError

MU_N = 5.0507837461e-27  # nuclear magneton, J/T (CODATA 2018)
HBAR = 1.054571817e-34  # reduced Planck constant, J s (CODATA 2018)

# Abundance tolerance: pass if within 0.1 percentage points OR 2 % relative. The table follows IUPAC 2001,
# which used the 1997 isotopic compositions; the libraries use later evaluations that moved by up to ~1.3 %
# relative (10B, 199Hg, 195Pt), and for rare isotopes (2H, 15N, 17O) terrestrial variation is of order 0.01 points.
ABUND_ABS_PP = 0.1
ABUND_REL = 0.02

# Gamma tolerance: 0.5 % relative (signed). The 2001 table uses moments not all corrected for diamagnetic
# shielding; for heavy nuclei that alone moves gamma by a few tenths of a percent (Pt, Hg, Tl).
GAMMA_REL = 0.005

# Rows where a library disagrees with the 2001 table for a known reason; each is still checked.
# Lithium: the libraries give the midpoint of the wide modern interval for 6Li (commercial Li is depleted
# in 6Li); IUPAC 2001 gives 7.59 / 92.41 % (recalled from memory). Checked against those recalled values.
LI_ABUNDANCE_RECALLED = {"6Li": 7.59, "7Li": 92.41}
# 197Au, 207Pb: mendeleev's g-factor comes from a later moment evaluation that differs from the 2001 table
# by 2.0 % (197Au) and 1.4 % (207Pb); checked at 2.5 % relative instead.
GAMMA_WIDE = {"197Au": 0.025, "207Pb": 0.025}
# 109Ag: mendeleev stores a positive g-factor; the 109Ag moment is negative like that of 107Ag
# (mu = -0.1306906 nuclear magnetons, recalled from memory of IUPAC 2001 Table 1). Magnitude checked against
# mendeleev, sign against the recalled value.
SIGN_RECALLED_NEGATIVE = {"109Ag"}

REQUIRED = (
    "1H 2H 6Li 7Li 10B 11B 13C 14N 15N 17O 19F 23Na 27Al 29Si 31P 33S 35Cl 37Cl 39K 77Se 103Rh 107Ag 109Ag "
    "111Cd 113Cd 117Sn 119Sn 125Te 129Xe 183W 195Pt 199Hg 203Tl 205Tl 207Pb"
).split()

ROWS = nucdata.all_isotopes()


@functools.lru_cache(maxsize=1)
def _mendeleev_tables():
    """mendeleev 1.3.0 isotope rows keyed by (Z, A), and element symbol -> Z."""
    isotopes = {(int(r.atomic_number), int(r.mass_number)): r for r in fetch_table("isotopes").itertuples()}
    symbols = {r.symbol: int(r.atomic_number) for r in fetch_table("elements").itertuples()}
    return isotopes, symbols


def _mendeleev(iso):
    isotopes, symbols = _mendeleev_tables()
    return isotopes[(symbols[iso.element], iso.mass_number)]


def _value(x):
    return None if x is None or (isinstance(x, float) and math.isnan(x)) else x


def _close(a, b, abs_tol, rel_tol):
    return abs(a - b) <= abs_tol or abs(a - b) <= rel_tol * abs(b)


@pytest.mark.parametrize("iso", ROWS, ids=lambda i: i.symbol)
def test_spin_and_atomic_number_match_mendeleev(iso):
    ref = _mendeleev(iso)  # mendeleev 1.3.0
    assert iso.spin == float(Fraction(ref.spin))
    assert iso.atomic_number == ref.atomic_number
    assert iso.symbol == f"{iso.mass_number}{iso.element}"


@pytest.mark.parametrize("iso", ROWS, ids=lambda i: i.symbol)
def test_abundance_matches_mendeleev_and_periodictable(iso):
    if iso.symbol in LI_ABUNDANCE_RECALLED:  # recalled from memory (IUPAC 2001), see note above
        assert iso.abundance_pct == pytest.approx(LI_ABUNDANCE_RECALLED[iso.symbol], abs=0.01)
        return
    refs = {
        "mendeleev": _value(_mendeleev(iso).abundance),
        "periodictable": getattr(periodictable, iso.element)[iso.mass_number].abundance,
    }
    for name, ref in refs.items():
        assert ref is not None, f"{name} has no abundance for {iso.symbol}"
        assert _close(iso.abundance_pct, ref, ABUND_ABS_PP, ABUND_REL), f"{iso.symbol}: {iso.abundance_pct} vs {name} {ref}"


@pytest.mark.parametrize("iso", ROWS, ids=lambda i: i.symbol)
def test_gamma_matches_mendeleev_g_factor(iso):
    # gamma = g * mu_N / hbar, with mendeleev's g = mu / (I mu_N); in 1e7 rad T^-1 s^-1.
    g = _value(_mendeleev(iso).g_factor)
    assert g is not None, f"mendeleev has no g-factor for {iso.symbol}"
    ref = g * MU_N / HBAR / 1e7
    if iso.symbol in SIGN_RECALLED_NEGATIVE:
        assert iso.gamma < 0
        ref = abs(ref) * -1
    tol = GAMMA_WIDE.get(iso.symbol, GAMMA_REL)
    assert _close(iso.gamma, ref, 0.0, tol), f"{iso.symbol}: {iso.gamma} vs mendeleev {ref:.6f}"


def test_every_magnetic_isotope_of_listed_elements_is_present():
    # mendeleev 1.3.0: every isotope with spin > 0 and natural abundance >= 0.01 % of an element in the table.
    isotopes, _ = _mendeleev_tables()
    names = {(i.atomic_number, i.mass_number) for i in ROWS}
    elements = {i.atomic_number for i in ROWS}
    missing = [
        key
        for key, ref in isotopes.items()
        if key[0] in elements and (_value(ref.abundance) or 0) >= 0.01
        and _value(ref.spin) not in (None, "0") and key not in names
    ]
    assert missing == []


def test_required_isotopes_present_and_unique():
    names = [i.symbol for i in ROWS]
    assert len(names) == len(set(names))
    assert set(REQUIRED) <= set(names)


@pytest.mark.parametrize(
    "text, expected",
    [("1H", "1H"), ("H1", "1H"), ("h-1", "1H"), ("C13", "13C"), ("13c", "13C"), (" 195Pt ", "195Pt"),
     ("pt-195", "195Pt"), ("D", "2H"), ("19 F", "19F")],
)
def test_isotope_name_forms(text, expected):
    assert nucdata.isotope(text).symbol == expected


@pytest.mark.parametrize("bad", ["12C", "Xx5", "C", "", "1H2"])
def test_unknown_isotope_is_input_error_naming_it(bad):
    with pytest.raises(InputError) as err:
        nucdata.isotope(bad)
    if bad:
        assert bad in str(err.value)


def test_isotope_record_is_frozen():
    with pytest.raises(dataclasses.FrozenInstanceError):
        nucdata.isotope("1H").spin = 1.0


def test_parse_isotope_list_dedups_and_keeps_order():
    got = nucdata.parse_isotope_list("1H,19F 31P;1H  h1")
    assert [i.symbol for i in got] == ["1H", "19F", "31P"]
    assert [i.symbol for i in nucdata.parse_isotope_list(["C13", nucdata.isotope("1H"), "13C"])] == ["13C", "1H"]
    assert [i.symbol for i in nucdata.parse_isotope_list(nucdata.DEFAULT_NUCLEI)] == ["1H", "19F", "31P"]
    with pytest.raises(InputError, match="7Q"):
        nucdata.parse_isotope_list("1H, 7Q")
    with pytest.raises(InputError):
        nucdata.parse_isotope_list(" , ")


def test_isotopes_of():
    assert [i.symbol for i in nucdata.isotopes_of(1)] == ["1H", "2H"]
    assert [i.symbol for i in nucdata.isotopes_of(6)] == ["13C"]
    assert [i.symbol for i in nucdata.isotopes_of(50)] == ["115Sn", "117Sn", "119Sn"]
    assert nucdata.isotopes_of(18) == ()  # argon: no magnetic isotope listed


def test_larmor_frequencies_at_400_mhz():
    # common practice: on a 400 MHz (1H) spectrometer 13C is observed near 100.6 MHz, 19F near 376.3 MHz,
    # 31P near 161.9 MHz and 2H near 61.4 MHz. Bare gamma ratios differ from the Xi scale by < 0.1 %.
    assert nucdata.larmor_mhz("13C", 400.0) == pytest.approx(100.6, abs=0.1)
    assert nucdata.larmor_mhz("19F", 400.0) == pytest.approx(376.3, abs=0.3)
    assert nucdata.larmor_mhz("31P", 400.0) == pytest.approx(161.9, abs=0.3)
    assert nucdata.larmor_mhz("2H", 400.0) == pytest.approx(61.4, abs=0.1)
    assert nucdata.larmor_mhz("1H", 400.0) == 400.0
    assert nucdata.larmor_mhz("15N", 400.0) > 0  # sign lives in gamma, not in the frequency
    with pytest.raises(InputError):
        nucdata.larmor_mhz("13C", -400.0)


def test_dilute_spins():
    # Our rule: spin 1/2 and natural abundance below 50 %.
    for name in ("13C", "29Si", "117Sn", "119Sn", "195Pt", "109Ag", "15N", "77Se", "183W"):
        assert nucdata.is_dilute(name), name
    for name in ("1H", "19F", "31P", "107Ag", "205Tl", "103Rh", "2H", "14N", "11B"):
        assert not nucdata.is_dilute(name), name
