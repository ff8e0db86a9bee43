"""Journal-style listings against the form used in experimental sections.

Reference form (ACS / RSC author guidelines for experimental data, common practice): "¹H NMR (400 MHz,
solvent): δ 4.12 (q, J = 7.1 Hz, 2H), 2.04 (s, 3H), 1.26 (t, J = 7.1 Hz, 3H)." with δ descending;
¹³C listings give shifts only. Ethyl acetate measured in CDCl3 (recalled from memory of common
spectral tables): δH 4.12 q, 2.05 s, 1.26 t, J = 7.1 Hz.
"""

import re

import equivclass
from equivclass.listing import journal_listing, journal_listings
from equivclass.multiplets import annotate


def _listing(smiles, isotope="1H", **kw):
    rep = equivclass.analyze(smiles, **kw)
    d = rep.to_dict()
    return journal_listing(d, annotate(d, rep.mol), isotope), d


ENTRY = re.compile(r"(−?\d+\.\d+(?:–−?\d+\.\d+)?) \(([a-z ]+)(?:, J = ([\d., ]+) Hz)?, (\d+)H\)")


def test_ethyl_acetate_listing_form():
    text, _ = _listing("CCOC(C)=O", mhz=400)
    assert text.startswith("¹H NMR (400 MHz, predicted): δ ")
    assert "estimate" in text.lower()
    entries = ENTRY.findall(text)
    assert [(m, h) for _, m, _, h in entries] == [("q", "2"), ("s", "3"), ("t", "3")]
    shifts = [float(s) for s, _, _, _ in entries]
    assert shifts == sorted(shifts, reverse=True)  # δ descending as in experimental sections
    # measured ethyl acetate: 4.12, 2.05, 1.26 ppm and J = 7.1 Hz; estimates within 0.3 ppm / 1 Hz
    assert all(abs(a - b) <= 0.3 for a, b in zip(shifts, (4.12, 2.05, 1.26)))
    j_q, j_t = float(entries[0][2]), float(entries[2][2])
    assert j_q == j_t and abs(j_q - 7.1) <= 1.0
    assert text.rstrip().endswith(".")


def test_second_order_sets_become_a_range():
    # chlorobenzene: five aromatic protons within ~0.2 ppm read as one range of m (common practice)
    text, _ = _listing("Clc1ccccc1")
    entries = ENTRY.findall(text)
    assert len(entries) == 1
    shift, mult, _, count = entries[0]
    assert mult == "m" and count == "5" and "–" in shift


def test_carbon_listing_header_and_frequency():
    # 13C observe frequency at a 400 MHz magnet is ~100.6 MHz, written "101 MHz" (gamma ratio 0.2515)
    text, d = _listing("CCOC(C)=O", isotope="13C", nuclei="1H,13C")
    assert text.startswith("¹³C{¹H} NMR (101 MHz, predicted): δ ")
    shifts = [float(x) for x in re.findall(r"(\d+\.\d)", text.split("δ", 1)[1])]
    assert len(shifts) == 4 and shifts == sorted(shifts, reverse=True)
    assert "H)" not in text  # no proton integrals in a carbon listing


def test_every_isotope_gets_a_listing():
    rep = equivclass.analyze("CP(=O)(OC)OC")
    d = rep.to_dict()
    text = journal_listings(d, annotate(d, rep.mol))
    lines = text.splitlines()
    assert lines[0].startswith("¹H NMR") and lines[1].startswith("³¹P NMR (162 MHz, predicted)")
    assert "(d, J = " in lines[0] and "1P)" in lines[1]


def test_no_sets_of_isotope_gives_empty_text():
    text, _ = _listing("CCOC(C)=O", isotope="19F")
    assert text == ""
