"""Letters follow the field: the |Δν| < 10·|J| rule of thumb (common practice; Pople, Schneider &
Bernstein 1959 for the lettering of strongly and weakly coupled sets)."""
import equivclass


def _ethyl(mhz):
    # chloroethane with user shifts 0.1 ppm apart: CH3 (atoms 3-5) at 1.00, CH2 (atoms 6, 7) at 1.10;
    # the vicinal J is the rotamer-averaged 7 Hz of the handbook tables
    return equivclass.analyze("CCCl", mhz=mhz, shifts={3: 1.00, 6: 1.10}).to_dict()


def test_strongly_coupled_at_60_mhz():
    # Δν = 0.1 ppm × 60 MHz = 6 Hz < 10 × 7 Hz: adjacent letters
    d = _ethyl(60)
    assert d["label"] == "A3B2"


def test_weakly_coupled_at_1_ghz():
    # Δν = 100 Hz > 70 Hz: letters far apart, and first-order triplet and quartet
    d = _ethyl(1000)
    assert d["label"] == "A3X2"
    by_size = {len(s["atoms"]): s for s in d["sets"]}
    assert by_size[3]["multiplicity"] == "t" and by_size[2]["multiplicity"] == "q"


def test_first_order_field_is_ten_j_over_delta():
    # first order from 10·J / Δδ = 10 × 7 Hz / 0.1 ppm = 700 MHz
    d = _ethyl(400)
    (frag,) = [f for f in d["fragments"] if len(f["sets"]) == 2]
    assert abs(frag["first_order_above_mhz"] - 700.0) < 1.0


def test_identical_subsystems_sharing_a_heteronucleus_use_the_bracket_form():
    # Pople notation writes identical sub-systems that couple to each other only through one shared
    # nucleus as [..]n X, e.g. [AA'BB'C]3X for triphenylphosphine (Günther, NMR Spectroscopy, ch. 6;
    # recalled from memory). Letters inside depend on the shift estimates; the form does not.
    import re

    pph3 = equivclass.analyze("c1ccc(cc1)P(c1ccccc1)c1ccccc1").to_dict()["label"]
    assert re.fullmatch(r"\[[A-W]+'?[A-W]?'?[A-W]?'?[A-W]?'?[A-W]?'?\]3X", pph3), pph3
    assert pph3.count("'") == 2       # ortho and meta pairs of one ring are AA'-type
    teph = equivclass.analyze("CCOP(=O)(OCC)OCC").to_dict()["label"]
    assert re.fullmatch(r"\[A3[B-W]2\]3X", teph), teph
    # a proton hub never makes brackets: pyridazine stays AA'XX' (Günther ch. 5, recalled from memory)
    assert equivclass.analyze("c1ccnnc1").to_dict()["label"] == "AA'XX'"
