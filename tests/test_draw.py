"""Annotated structure picture: SVG/PNG well-formed, one letter per active nucleus, only labelled H drawn."""
import re
import struct
import xml.etree.ElementTree as ET

import pytest
from rdkit import Chem
from rdkit.Chem import rdMolDescriptors

from equivclass.analysis import analyze
from equivclass.draw import draw
from equivclass.errors import InputError

SVG_NS = "{http://www.w3.org/2000/svg}"


def _root(svg: str):
    return ET.fromstring(svg.encode("utf-8"))        # standard-library XML parser


def _texts(svg: str):
    """(text, class, data-atom) of every <text> element."""
    return [("".join(t.itertext()), t.get("class") or "", t.get("data-atom"))
            for t in _root(svg).iter(SVG_NS + "text")]


def _drawn_atoms(svg: str) -> set:
    """Indices of the drawn atoms that show a symbol (RDKit marks glyph paths with class 'atom-N')."""
    return {p.get("class") for p in _root(svg).iter(SVG_NS + "path")
            if re.fullmatch(r"atom-\d+", p.get("class") or "")}


def _label_tokens(label: str) -> set:
    """Letters with primes of a Pople label such as "AA′XX′" or "2 × A3X2" (digits are counts)."""
    body = re.sub(r"^\d+\s*×\s*", "", label)
    return set(re.findall(r"[A-Z][′″‴]*", body))


def _h_count(smiles: str) -> int:
    """Hydrogens from RDKit's molecular formula (an independent count of the nuclei to be marked)."""
    formula = rdMolDescriptors.CalcMolFormula(Chem.MolFromSmiles(smiles))
    m = re.search(r"H(\d*)", formula)
    return int(m.group(1) or 1) if m else 0


@pytest.mark.parametrize("smiles, extra_nuclei", [
    ("ClCCBr", 0),                               # 1-bromo-2-chloroethane: AA'XX'-type, textbook case
    ("[O-][N+](=O)c1ccc(F)cc1", 1),              # 4-fluoronitrobenzene: AA'MM'X-type, one 19F
])
def test_svg_marks_every_nucleus_with_its_letter(smiles, extra_nuclei):
    report = analyze(smiles)
    svg = draw(report, "svg")
    texts = _texts(svg)
    notes = [(t, atom) for t, cls, atom in texts if cls == "nucleus-label"]
    # one note per active nucleus: every H of the formula plus the 19F (common practice: all are spin 1/2)
    assert len(notes) == _h_count(smiles) + extra_nuclei
    # each note sits on an H or F atom of the analysed molecule
    assert {report.mol.GetAtomWithIdx(int(a)).GetSymbol() for _, a in notes} <= {"H", "F"}
    # primes are drawn: para-disubstituted benzenes and X-CH2CH2-Y are the textbook AA'XX' examples
    # of magnetic inequivalence (Pople, Schneider & Bernstein 1959, ch. 6)
    assert any(t.endswith("′") for t, _ in notes)
    assert {t for t, _ in notes} == _label_tokens(report.label)
    # drawn atoms with a symbol: every H of the formula plus the heteroatoms
    hetero = sum(1 for a in Chem.MolFromSmiles(smiles).GetAtoms() if a.GetSymbol() != "C")
    assert len(_drawn_atoms(svg)) == _h_count(smiles) + hetero


def test_unlabelled_hydrogens_are_not_drawn():
    # observing 19F only: no H is an active nucleus, so none is drawn as an atom of its own
    report = analyze("Fc1ccccc1", nuclei="19F")
    svg = draw(report, "svg")
    assert len(_drawn_atoms(svg)) == 1                 # the F alone; carbons carry no symbol
    assert [t for t, cls, _ in _texts(svg) if cls == "nucleus-label"] == ["A"]


def test_legend_lists_isotope_and_count():
    report = analyze("CCOCC")                    # diethyl ether: 10 H in two sets (CH3 x6, CH2 x4)
    joined = " ".join(t for t, _, _ in _texts(draw(report, "svg")))
    assert "x6" in joined and "x4" in joined and "1H" in joined


def test_png_has_png_signature_and_requested_size():
    png = draw(analyze("ClCCBr"), "png", size=(400, 300))
    # PNG signature and IHDR layout: ISO/IEC 15948 (PNG specification), sections 5.2 and 11.2.2
    assert png[:8] == b"\x89PNG\r\n\x1a\n"
    assert png[12:16] == b"IHDR"
    assert struct.unpack(">II", png[16:24]) == (400, 300)


def test_bad_format_is_an_input_error():
    with pytest.raises(InputError, match="svg or png"):
        draw(analyze("CCO"), "gif")
