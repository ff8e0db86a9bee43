"""Textbook reference molecules: chemical sets, magnetic subsets, topicity and 13C signal counts.

Every case states the classification a standard NMR text gives and cites the text beside it. The texts
could not be consulted while writing; each citation is recalled from memory (chapter numbers as recalled):

  PSB 1959    Pople, Schneider & Bernstein, High-resolution Nuclear Magnetic Resonance (1959), ch. 6
              (notation of spin systems: A3X2 ethyl, A6X isopropyl, AA'XX').
  Guenther    H. Günther, NMR Spectroscopy, 3rd ed. (2013): ch. 4-5 (chemical and magnetic equivalence,
              analysis of AA'XX'/AA'BB' systems, heteroaromatics, fluoroalkenes), ch. 10 (topicity,
              diastereotopic protons), ch. 11 (dynamic NMR: amide rotation).
  Friebolin   H. Friebolin, Basic One- and Two-Dimensional NMR Spectroscopy, 5th ed. (2011): ch. 2
              (chemical equivalence; homo-, enantio- and diastereotopic nuclei), ch. 4 (spin systems,
              AA'XX', AA'BB'), ch. 11 (dynamic NMR), ch. 12 (chiral auxiliaries).
  SWK         Silverstein, Webster & Kiemle, Spectrometric Identification of Organic Compounds, 7th ed.
              (2005): ch. 3 (1H: chemical and magnetic equivalence), ch. 4 (13C signal counts).
  Mislow-Raban  K. Mislow & M. Raban, Top. Stereochem. 1967, 1, 1 (substitution test for topicity).
  Eliel-Wilen   E. L. Eliel & S. H. Wilen, Stereochemistry of Organic Compounds (1994), ch. 8
              (heterotopic ligands and faces; pseudo-asymmetric and non-stereogenic centres).
  Jennings    W. B. Jennings, Chem. Rev. 1975, 75, 307 (non-equivalence of prochiral groups:
              acetals, sulfites, sulfoxides, phosphites).
  BBK         Berger, Braun & Kalinowski, NMR Spectroscopy of the Non-Metallic Elements (1997)
              (19F and 31P chapters: PF6-, PF5, phosphites, phosphonates).

Only what the texts classify is checked, in forms that do not depend on shift estimates: the multiset
of chemical-set sizes per isotope, the number of magnetic subsets of given sets, the within-set
topicity, which sets are diastereotopic (or, in a chiral medium, enantiotopic) to each other, fragment
copy counts, the number of primes in the label, and the full Pople label only where it is
field-independent (one set per isotope, or sets of different isotopes only). Atom indices follow the
JSON contract (RDKit order after AddHs); the hydrogens on a heavy atom are found here with RDKit
independently of the program. Stereo inputs are checked against RDKit's CIP labeller (or, for rings,
against the faces of an embedded 3D structure) so that each SMILES is the isomer the text names.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

import numpy as np
import pytest
from rdkit import Chem
from rdkit.Chem import AllChem, rdCIPLabeler

import equivclass

C13 = {"nuclei": "13C"}
FAST_AMIDE = {"amide_rotation_fast": True}
CHIRAL = {"chiral_medium": True}


def H(heavy: int, which: int | None = None) -> tuple:
    """Selector: the hydrogens on heavy atom `heavy` (or only its `which`-th hydrogen)."""
    return ("H", heavy, which)


def At(index: int) -> tuple:
    """Selector: the atom itself (F, P, C ...)."""
    return ("atom", index, None)


@dataclass(frozen=True)
class Case:
    id: str
    smiles: str
    cite: str
    options: dict = field(default_factory=dict)
    sizes: dict | None = None  # isotope -> set sizes, every isotope of the report listed
    label: str | None = None  # exact ASCII label, only where field-independent
    label_shape: str | None = None  # regular expression for the label
    primes: int | None = None  # number of primes in the label
    subsets: tuple = ()  # (selector, number of magnetic subsets of its set)
    within: tuple = ()  # (selector, topicity within its set)
    split: tuple = ()  # (heavy atom, relation): its two H in two sets, related as stated
    pairs: tuple = ()  # (selector, selector, relation): two different sets related as stated
    together: tuple = ()  # selectors that must lie in one set
    copies: tuple = ()  # (selector, copies of the fragment holding its set)
    cip: dict | None = None  # input check: atom -> CIP label from RDKit
    faces: tuple | None = None  # input check: ring substituent faces relative to the first
    xfail: str | None = None


CASES = [
    # ---------------------------------------------------------------- ethyl and isopropyl groups
    # PSB 1959 ch. 6: the ethyl group as A3X2 (A3B2 when shifts are close); CH2 protons enantiotopic
    # (Mislow-Raban; Friebolin ch. 2). Shift separation > 1.5 ppm, so first order at any field used.
    Case("bromoethane", "CCBr", "PSB 1959 ch. 6; Friebolin ch. 2",
         sizes={"1H": [3, 2]}, label_shape=r"A3[B-Z]2", subsets=((H(0), 1), (H(1), 1)),
         within=((H(0), "homotopic"), (H(1), "enantiotopic"))),
    Case("ethanol", "CCO", "Friebolin ch. 2 (ethanol CH2 enantiotopic); SWK ch. 3",
         sizes={"1H": [3, 2, 1]}, within=((H(1), "enantiotopic"),), subsets=((H(1), 1),)),
    # Friebolin ch. 12 / Pirkle: enantiotopic nuclei become anisochronous in a chiral medium.
    Case("ethanol-chiral-medium", "CCO", "Friebolin ch. 12 (chiral solvating agents); Mislow-Raban",
         options=CHIRAL, sizes={"1H": [3, 1, 1, 1]}, split=((1, "enantiotopic"),)),
    # Two ethyls across O do not couple: 2 x A3X2 (Guenther ch. 4; PSB 1959 ch. 6). Under the strict
    # subset rule the CH3 set has one subset per ethyl (each CH3 couples only to its own CH2).
    Case("diethyl-ether", "CCOCC", "PSB 1959 ch. 6; Guenther ch. 4",
         sizes={"1H": [6, 4]}, label_shape=r"2xA3[B-Z]2", copies=((H(0), 2),), subsets=((H(0), 2),),
         together=((H(0), H(4)), (H(1), H(3)))),
    # PSB 1959 ch. 6 / Guenther ch. 4: 2-chloropropane A6X, the two methyls enantiotopic.
    Case("2-chloropropane", "CC(C)Cl", "PSB 1959 ch. 6; Guenther ch. 4",
         sizes={"1H": [6, 1]}, label_shape=r"A6[B-Z]", subsets=((H(0), 1),),
         together=((H(0), H(2)),), within=((H(0), "homotopic and enantiotopic"),)),
    Case("2-chloropropane-chiral-medium", "CC(C)Cl", "Friebolin ch. 12; Mislow-Raban",
         options=CHIRAL, sizes={"1H": [3, 3, 1]}, pairs=((H(0), H(2), "enantiotopic"),)),
    # Cumene: isopropyl A6X plus a monosubstituted ring AA'BB'C-type (SWK ch. 3).
    Case("cumene", "CC(C)c1ccccc1", "SWK ch. 3; PSB 1959 ch. 6",
         sizes={"1H": [6, 2, 2, 1, 1]}, together=((H(0), H(2)),), subsets=((H(0), 1), (H(4), 2), (H(5), 2))),
    # Mislow-Raban: CH2Cl2 protons homotopic (no split in a chiral medium); CH2BrCl enantiotopic.
    Case("dichloromethane-chiral-medium", "ClCCl", "Mislow-Raban; Friebolin ch. 2",
         options=CHIRAL, sizes={"1H": [2]}, within=((H(1), "homotopic"),)),
    Case("bromochloromethane", "ClCBr", "Mislow-Raban; Friebolin ch. 2",
         sizes={"1H": [2]}, within=((H(1), "enantiotopic"),), label="A2"),
    # ---------------------------------------------------------------- X-CH2-CH2-Y: AA'BB' / AA'XX'
    # Guenther ch. 5 / Friebolin ch. 4: X-CH2-CH2-Y is AA'BB' (AA'XX'): J(gauche) and J(anti) average
    # differently for the two vicinal pairs, so each CH2 set splits into two subsets of one.
    Case("1-bromo-2-chloroethane", "ClCCBr", "Guenther ch. 5; Friebolin ch. 4",
         sizes={"1H": [2, 2]}, subsets=((H(1), 2), (H(2), 2)), primes=2),
    Case("2-chloroethanol", "OCCCl", "Guenther ch. 5; Friebolin ch. 4",
         sizes={"1H": [2, 2, 1]}, subsets=((H(1), 2), (H(2), 2)), primes=2),
    # X = Y: all four protons one set, no outside partner: A4 singlet (Guenther ch. 4).
    Case("1,2-dichloroethane", "ClCCCl", "Guenther ch. 4", sizes={"1H": [4]}, label="A4"),
    Case("1,4-dioxane", "C1COCCO1", "SWK ch. 3 (one singlet)", sizes={"1H": [8]}, label="A8"),
    # ---------------------------------------------------------------- ortho/para-disubstituted benzenes
    # Guenther ch. 5; Friebolin ch. 4: o-dichlorobenzene AA'BB'; p-XC6H4Y AA'BB'/AA'XX'.
    Case("o-dichlorobenzene", "Clc1ccccc1Cl", "Guenther ch. 5; Friebolin ch. 4",
         sizes={"1H": [2, 2]}, subsets=((H(2), 2), (H(3), 2)), primes=2, together=((H(2), H(5)), (H(3), H(4)))),
    Case("p-bromochlorobenzene", "Clc1ccc(Br)cc1", "Guenther ch. 5; SWK ch. 3",
         sizes={"1H": [2, 2]}, subsets=((H(2), 2), (H(3), 2)), primes=2, together=((H(2), H(7)), (H(3), H(6)))),
    Case("p-dichlorobenzene", "Clc1ccc(Cl)cc1", "SWK ch. 3 (one singlet)", sizes={"1H": [4]}, label="A4"),
    Case("benzene", "c1ccccc1", "SWK ch. 3", sizes={"1H": [6]}, label="A6"),
    # Single sets with no outside partner give one line whatever their internal couplings (Guenther ch. 4).
    Case("cis-1,2-dichloroethylene", "Cl/C=C\\Cl", "Guenther ch. 4", sizes={"1H": [2]}, label="A2"),
    Case("trans-1,2-dichloroethylene", "Cl/C=C/Cl", "Guenther ch. 4", sizes={"1H": [2]}, label="A2"),
    Case("1,1-dichloroethylene", "C=C(Cl)Cl", "Guenther ch. 4", sizes={"1H": [2]}, label="A2"),
    Case("allene", "C=C=C", "Guenther ch. 4", sizes={"1H": [4]}, label="A4", within=((H(0), "homotopic"),)),
    Case("1,1-dichlorocyclopropane", "ClC1(Cl)CC1", "Guenther ch. 4", sizes={"1H": [4]}, label="A4"),
    Case("cyclohexane", "C1CCCCC1", "Guenther ch. 11 (fast ring inversion: one line)", sizes={"1H": [12]},
         label="A12"),
    Case("tetramethylsilane", "C[Si](C)(C)C", "SWK ch. 3", sizes={"1H": [12]}, label="A12"),
    # Guenther ch. 5: p-difluorobenzene AA'A''A'''XX' (each H couples differently to the two F).
    Case("p-difluorobenzene", "Fc1ccc(F)cc1", "Guenther ch. 5",
         sizes={"1H": [4], "19F": [2]}, label="AA'A''A'''XX'", subsets=((H(2), 4), (At(0), 2))),
    Case("o-difluorobenzene", "Fc1ccccc1F", "Guenther ch. 5 (AA'BB'XX')",
         sizes={"1H": [2, 2], "19F": [2]}, subsets=((H(2), 2), (H(3), 2), (At(0), 2)), primes=3),
    # Fluorobenzene: AA'BB'CX-type; ortho and meta pairs magnetically inequivalent (Guenther ch. 5).
    Case("fluorobenzene", "Fc1ccccc1", "Guenther ch. 5",
         sizes={"1H": [2, 2, 1], "19F": [1]}, subsets=((H(2), 2), (H(3), 2), (H(4), 1)), primes=2),
    # ---------------------------------------------------------------- five- and six-membered heteroaromatics
    # Guenther ch. 5: pyridine AA'BB'X-type (H2/H6 and H3/H5 magnetically inequivalent pairs).
    Case("pyridine", "c1ccncc1", "Guenther ch. 5; Friebolin ch. 4",
         sizes={"1H": [2, 2, 1]}, subsets=((H(2), 2), (H(1), 2), (H(0), 1)), primes=2),
    # Guenther ch. 5: furan, thiophene, pyrrole AA'XX' / AA'BB'.
    Case("furan", "c1ccoc1", "Guenther ch. 5", sizes={"1H": [2, 2]}, subsets=((H(0), 2), (H(1), 2)), primes=2),
    Case("thiophene", "c1ccsc1", "Guenther ch. 5", sizes={"1H": [2, 2]}, subsets=((H(0), 2), (H(1), 2)), primes=2),
    Case("N-methylpyrrole", "Cn1cccc1", "Guenther ch. 5",
         sizes={"1H": [3, 2, 2]}, subsets=((H(2), 2), (H(3), 2))),
    # Pyrimidine: H4/H6 couple alike to H2 and to H5, so they form one magnetically equivalent pair
    # (A2-type part, e.g. AX2M; Guenther ch. 5).
    Case("pyrimidine", "c1cncnc1", "Guenther ch. 5",
         sizes={"1H": [2, 1, 1]}, subsets=((H(1), 1),), together=((H(1), H(5)),)),
    Case("pyrazine", "c1cnccn1", "SWK ch. 3 (one singlet)", sizes={"1H": [4]}, label="A4"),
    Case("pyridazine", "c1ccnnc1", "Guenther ch. 5 (AA'XX')",
         sizes={"1H": [2, 2]}, subsets=((H(0), 2), (H(1), 2)), primes=2),
    Case("2-methylfuran", "Cc1ccco1", "SWK ch. 3", sizes={"1H": [3, 1, 1, 1]}, primes=0),
    Case("2-chloropyridine", "Clc1ccccn1", "SWK ch. 3 (four one-proton multiplets)",
         sizes={"1H": [1, 1, 1, 1]}, primes=0),
    Case("thiazole", "c1cscn1", "Guenther ch. 5", sizes={"1H": [1, 1, 1]}, primes=0),
    # ---------------------------------------------------------------- fluoro- and difluoroalkenes
    # Guenther ch. 5: vinyl fluoride ABMX-type; geminal CH2 protons diastereotopic (cis/trans to F).
    Case("vinyl-fluoride", "C=CF", "Guenther ch. 5",
         sizes={"1H": [1, 1, 1], "19F": [1]}, split=((0, "diastereotopic"),), primes=0),
    # Guenther ch. 5; Friebolin ch. 4: 1,1- and 1,2-difluoroethylenes are AA'XX' (heteronuclear, so the
    # label does not depend on the field).
    Case("1,1-difluoroethylene", "C=C(F)F", "Guenther ch. 5; Friebolin ch. 4",
         sizes={"1H": [2], "19F": [2]}, label="AA'XX'"),
    Case("cis-1,2-difluoroethylene", "F/C=C\\F", "Guenther ch. 5",
         sizes={"1H": [2], "19F": [2]}, label="AA'XX'"),
    Case("trans-1,2-difluoroethylene", "F/C=C/F", "Guenther ch. 5",
         sizes={"1H": [2], "19F": [2]}, label="AA'XX'"),
    # Chlorotrifluoroethylene: three 19F sets (ABC/AMX); the CF2 fluorines diastereotopic.
    Case("chlorotrifluoroethylene", "FC(F)=C(F)Cl", "Guenther ch. 5",
         sizes={"19F": [1, 1, 1]}, pairs=((At(0), At(2), "diastereotopic"),)),
    # Difluoromethane A2X2; 1,1-difluoroethane: the F pair (enantiotopic) is magnetically equivalent.
    Case("difluoromethane", "FCF", "Guenther ch. 4; PSB 1959 ch. 6",
         sizes={"1H": [2], "19F": [2]}, label="A2X2"),
    Case("1,1-difluoroethane", "CC(F)F", "Guenther ch. 4",
         sizes={"1H": [3, 1], "19F": [2]}, subsets=((At(2), 1),), within=((At(2), "enantiotopic"),)),
    # ---------------------------------------------------------------- CH2 next to a stereocentre
    # Friebolin ch. 2; Guenther ch. 10: CH2 protons next to a stereocentre are diastereotopic.
    Case("(S)-2-bromobutane", "CC[C@H](C)Br", "Friebolin ch. 2; Guenther ch. 10",
         sizes={"1H": [3, 3, 1, 1, 1]}, split=((1, "diastereotopic"),), cip={2: "S"}),
    Case("(R)-1-phenyl-2-propanol", "C[C@@H](O)Cc1ccccc1", "Friebolin ch. 2 (ABX benzylic CH2)",
         split=((3, "diastereotopic"),), cip={1: "R"}),
    Case("(R)-styrene-dibromide", "BrC[C@H](Br)c1ccccc1", "Friebolin ch. 4 (ABX example)",
         split=((1, "diastereotopic"),), cip={2: "R"}),
    # Prochiral centre, no stereocentre: glycerol and citric acid CH2 protons diastereotopic, the two CH2
    # groups enantiotopic (Friebolin ch. 2; Eliel-Wilen ch. 8); citric acid shows one AB quartet.
    Case("glycerol", "OCC(O)CO", "Friebolin ch. 2; Eliel-Wilen ch. 8",
         sizes={"1H": [2, 2, 2, 1, 1]}, split=((1, "diastereotopic"),)),
    Case("citric-acid", "OC(=O)CC(O)(CC(O)=O)C(O)=O", "Friebolin ch. 2 (AB quartet); Eliel-Wilen ch. 8",
         split=((3, "diastereotopic"), (6, "diastereotopic")), copies=((H(3, 0), 2),)),
    # Jennings 1975: acetal OCH2, diethyl sulfite OCH2 and dibenzyl sulfoxide CH2 protons diastereotopic.
    Case("acetaldehyde-diethyl-acetal", "CC(OCC)OCC", "Jennings 1975; Guenther ch. 10",
         sizes={"1H": [6, 3, 2, 2, 1]}, split=((3, "diastereotopic"),)),
    Case("diethyl-sulfite", "CCOS(=O)OCC", "Jennings 1975",
         sizes={"1H": [6, 2, 2]}, split=((1, "diastereotopic"),)),
    Case("dibenzyl-sulfoxide", "O=S(Cc1ccccc1)Cc1ccccc1", "Jennings 1975; Eliel-Wilen ch. 8",
         split=((2, "diastereotopic"),)),
    Case("(S)-ethyl-methyl-sulfoxide", "CC[S@](C)=O", "Jennings 1975 (sulfoxide S is a stereocentre)",
         sizes={"1H": [3, 3, 1, 1]}, split=((1, "diastereotopic"),), cip={2: "S"}),
    # Amine nitrogen inverts fast: N-benzyl-N-methylethylamine benzylic CH2 stays one enantiotopic set
    # (Jennings 1975; Eliel-Wilen ch. 8). Phosphines invert slowly (Baechler & Mislow, J. Am. Chem. Soc.
    # 1970): the CH2 of ethyl(methyl)phenylphosphine is diastereotopic.
    Case("N-benzyl-N-methylethylamine", "CCN(C)Cc1ccccc1", "Jennings 1975; Eliel-Wilen ch. 8",
         within=((H(4), "enantiotopic"), (H(1), "enantiotopic"))),
    Case("(S)-ethylmethylphenylphosphine", "CC[P@](C)c1ccccc1", "Baechler & Mislow 1970; Eliel-Wilen ch. 8",
         sizes={"1H": [3, 3, 2, 2, 1, 1, 1], "31P": [1]}, split=((1, "diastereotopic"),), cip={2: "S"}),
    # ---------------------------------------------------------------- isopropyl next to a stereocentre
    # Friebolin ch. 2; Guenther ch. 10: the isopropyl methyls of valine and of 3-methyl-2-butanol are
    # diastereotopic (two doublets); 2,4-dimethyl-3-pentanol (prochiral carbinol) likewise.
    Case("(S)-valine", "CC(C)[C@H](N)C(=O)O", "Friebolin ch. 2; Guenther ch. 10",
         pairs=((H(0), H(2), "diastereotopic"),), cip={3: "S"}),
    Case("(R)-3-methyl-2-butanol", "CC(C)[C@@H](C)O", "Guenther ch. 10",
         pairs=((H(0), H(2), "diastereotopic"),), cip={3: "R"}),
    Case("2,4-dimethyl-3-pentanol", "CC(C)C(O)C(C)C", "Mislow-Raban; Eliel-Wilen ch. 8",
         sizes={"1H": [6, 6, 2, 1, 1]}, pairs=((H(0), H(2), "diastereotopic"), (H(6), H(7), "diastereotopic")),
         within=((H(1), "enantiotopic"),)),
    # ---------------------------------------------------------------- meso versus chiral diastereomers
    # Eliel-Wilen ch. 8; Guenther ch. 10: in meso-2,3-dibromobutane the methine protons are enantiotopic
    # (mirror), in the (R,R) isomer homotopic (C2); both are A3A'3XX'-type (X3AA'X'3).
    Case("meso-2,3-dibromobutane", "C[C@@H](Br)[C@H](C)Br", "Eliel-Wilen ch. 8; Guenther ch. 10",
         sizes={"1H": [6, 2]}, within=((H(1), "enantiotopic"),), subsets=((H(0), 2), (H(1), 2)),
         cip={1: "R", 3: "S"}),
    Case("meso-2,3-dibromobutane-chiral-medium", "C[C@@H](Br)[C@H](C)Br", "Friebolin ch. 12; Mislow-Raban",
         options=CHIRAL, sizes={"1H": [3, 3, 1, 1]}, pairs=((H(1), H(3), "enantiotopic"),), cip={1: "R", 3: "S"}),
    Case("(R,R)-2,3-dibromobutane", "C[C@@H](Br)[C@@H](C)Br", "Eliel-Wilen ch. 8; Guenther ch. 10",
         sizes={"1H": [6, 2]}, within=((H(1), "homotopic"),), subsets=((H(0), 2), (H(1), 2)),
         cip={1: "R", 3: "R"}),
    Case("(R,R)-2,3-dibromobutane-chiral-medium", "C[C@@H](Br)[C@@H](C)Br", "Friebolin ch. 12",
         options=CHIRAL, sizes={"1H": [6, 2]}, cip={1: "R", 3: "R"}),
    # Eliel-Wilen ch. 8; Friebolin ch. 2: meso-2,4-pentanediol central CH2 protons diastereotopic,
    # (R,R)-2,4-pentanediol homotopic (C2 axis through C3).
    Case("meso-2,4-pentanediol", "C[C@@H](O)C[C@H](C)O", "Eliel-Wilen ch. 8; Friebolin ch. 2",
         split=((3, "diastereotopic"),), within=((H(1), "enantiotopic"),), cip={1: "R", 4: "S"}),
    Case("(R,R)-2,4-pentanediol", "C[C@@H](O)C[C@@H](C)O", "Eliel-Wilen ch. 8; Friebolin ch. 2",
         within=((H(3), "homotopic"), (H(1), "homotopic")), together=((H(1), H(4)),), cip={1: "R", 4: "R"}),
    Case("meso-tartaric-acid", "O[C@@H]([C@@H](O)C(O)=O)C(O)=O", "Mislow-Raban; Eliel-Wilen ch. 8",
         within=((H(1), "enantiotopic"),), together=((H(1), H(2)),), cip={1: "S", 2: "R"}),
    Case("(R,R)-tartaric-acid", "O[C@H]([C@@H](O)C(O)=O)C(O)=O", "Mislow-Raban; Eliel-Wilen ch. 8",
         within=((H(1), "homotopic"),), together=((H(1), H(2)),), cip={1: "R", 2: "R"}),
    # Eliel-Wilen ch. 8: pentane-2,3,4-triol. In the two meso forms C3 is pseudo-asymmetric (r/s) and the
    # halves are mirror images: 3 carbon signals. In the chiral (2S,4S) form C3 carries H and OH, so no
    # C2 axis can exchange the halves and no mirror keeps (S,S): C3 is non-stereogenic but the two
    # halves are diastereotopic, giving 5 carbon signals.
    Case("(2R,3r,4S)-pentane-2,3,4-triol-13C", "C[C@H](O)[C@@H](O)[C@@H](C)O", "Eliel-Wilen ch. 8",
         options=C13, sizes={"13C": [2, 2, 1]}, within=((At(0), "enantiotopic"),),
         cip={1: "S", 3: "r", 5: "R"}),
    Case("(2R,3s,4S)-pentane-2,3,4-triol-13C", "C[C@H](O)[C@H](O)[C@@H](C)O", "Eliel-Wilen ch. 8",
         options=C13, sizes={"13C": [2, 2, 1]}, cip={1: "S", 3: "s", 5: "R"}),
    Case("(2S,4S)-pentane-2,3,4-triol-13C", "C[C@H](O)[C@H](O)[C@H](C)O", "Eliel-Wilen ch. 8",
         options=C13, sizes={"13C": [1, 1, 1, 1, 1]}, pairs=((At(0), At(6), "diastereotopic"),),
         cip={1: "S", 5: "S"}),
    # SWK ch. 4; Eliel-Wilen ch. 11: with fast ring inversion cis-1,2-dimethylcyclohexane is meso
    # (methyls enantiotopic), trans is chiral C2 (methyls homotopic); both give 4 carbon signals.
    Case("cis-1,2-dimethylcyclohexane-13C", "C[C@H]1CCCC[C@H]1C", "SWK ch. 4; Eliel-Wilen ch. 11",
         options=C13, sizes={"13C": [2, 2, 2, 2]}, within=((At(0), "enantiotopic"),), faces=(1, 1)),
    Case("trans-1,2-dimethylcyclohexane-13C", "C[C@H]1CCCC[C@@H]1C", "SWK ch. 4; Eliel-Wilen ch. 11",
         options=C13, sizes={"13C": [2, 2, 2, 2]}, within=((At(0), "homotopic"),), faces=(1, -1)),
    # ---------------------------------------------------------------- amide N-methyls
    # Guenther ch. 11; Friebolin ch. 11: DMF and DMA show two N-CH3 singlets at room temperature (slow
    # C-N rotation) that coalesce to one on fast rotation.
    Case("DMF-slow", "CN(C)C=O", "Guenther ch. 11; Friebolin ch. 11",
         sizes={"1H": [3, 3, 1]}, pairs=((H(0), H(2), "diastereotopic"),)),
    Case("DMF-fast", "CN(C)C=O", "Guenther ch. 11; Friebolin ch. 11",
         options=FAST_AMIDE, sizes={"1H": [6, 1]}, together=((H(0), H(2)),)),
    Case("DMA-slow", "CN(C)C(C)=O", "Guenther ch. 11",
         sizes={"1H": [3, 3, 3]}, pairs=((H(0), H(2), "diastereotopic"),)),
    Case("DMA-fast", "CN(C)C(C)=O", "Guenther ch. 11",
         options=FAST_AMIDE, sizes={"1H": [6, 3]}, together=((H(0), H(2)),)),
    Case("DMF-13C-slow", "CN(C)C=O", "SWK ch. 4 (two N-CH3 carbons)",
         options=C13, sizes={"13C": [1, 1, 1]}, pairs=((At(0), At(2), "diastereotopic"),)),
    Case("DMF-13C-fast", "CN(C)C=O", "SWK ch. 4", options={**C13, **FAST_AMIDE}, sizes={"13C": [2, 1]}),
    Case("N,N-diethylacetamide-slow", "CCN(CC)C(C)=O", "Guenther ch. 11",
         sizes={"1H": [3, 3, 3, 2, 2]}, pairs=((H(0), H(4), "diastereotopic"), (H(1), H(3), "diastereotopic"))),
    # ---------------------------------------------------------------- P-H and P-F systems
    # BBK 31P chapter; Guenther ch. 4: (MeO)3P and (MeO)3PO are A9X (nine equivalent H, one 31P).
    Case("trimethyl-phosphite", "COP(OC)OC", "BBK (31P); Guenther ch. 4",
         sizes={"1H": [9], "31P": [1]}, label="A9X"),
    Case("trimethyl-phosphate", "COP(=O)(OC)OC", "BBK (31P); Guenther ch. 4",
         sizes={"1H": [9], "31P": [1]}, label="A9X"),
    # Dimethyl phosphite HP(O)(OMe)2: P-H (large 1J) plus six equivalent OCH3 protons.
    Case("dimethyl-phosphite", "COP(=O)OC", "BBK (31P); Jennings 1975",
         sizes={"1H": [6, 1], "31P": [1]}, subsets=((H(0), 1),), together=((H(0), H(5)),)),
    # Jennings 1975: diethyl phosphite OCH2 protons diastereotopic (P prochiral).
    Case("diethyl-phosphite", "CCOP(=O)OCC", "Jennings 1975; BBK (31P)",
         sizes={"1H": [6, 2, 2, 1], "31P": [1]}, split=((1, "diastereotopic"),)),
    Case("triethyl-phosphate", "CCOP(=O)(OCC)OCC", "BBK (31P); Jennings 1975",
         sizes={"1H": [9, 6], "31P": [1]}, within=((H(1), "homotopic and enantiotopic"),),
         subsets=((H(1), 3), (H(0), 3))),
    # BBK 19F/31P: PF6- gives a 19F doublet and a 31P septet: A6X.
    Case("hexafluorophosphate", "F[P-](F)(F)(F)(F)F", "BBK (19F, 31P)",
         sizes={"19F": [6], "31P": [1]}, label="A6X"),
    Case("hexafluorophosphate-19F-only", "F[P-](F)(F)(F)(F)F", "BBK (19F)",
         options={"nuclei": "19F"}, sizes={"19F": [6]}, label="A6"),
    # PF5: Berry pseudorotation averages axial and equatorial F; one 19F doublet (Gutowsky, McCall &
    # Slichter, J. Chem. Phys. 1953; BBK 19F).
    Case("phosphorus-pentafluoride", "FP(F)(F)(F)F", "Gutowsky-McCall-Slichter 1953; BBK (19F)",
         sizes={"19F": [5], "31P": [1]}, label="A5X"),
    Case("phosphorus-trifluoride", "FP(F)F", "BBK (19F, 31P)", sizes={"19F": [3], "31P": [1]}, label="A3X"),
    Case("phosphine", "P", "BBK (31P)", sizes={"1H": [3], "31P": [1]}, label="A3X"),
    # HPF2 and CH3P(O)F2: three isotopes take letters A, M, X (PSB 1959 ch. 6; Guenther ch. 4).
    Case("difluorophosphine", "FPF", "PSB 1959 ch. 6; BBK (31P)",
         sizes={"1H": [1], "19F": [2], "31P": [1]}, label="AM2X"),
    Case("methylphosphonic-difluoride", "CP(=O)(F)F", "PSB 1959 ch. 6; BBK (31P)",
         sizes={"1H": [3], "19F": [2], "31P": [1]}, label="A3M2X"),
    # ---------------------------------------------------------------- 13C signal counts (SWK ch. 4 unless noted)
    Case("toluene-13C", "Cc1ccccc1", "SWK ch. 4", options=C13, sizes={"13C": [2, 2, 1, 1, 1]}),
    Case("o-xylene-13C", "Cc1ccccc1C", "SWK ch. 4", options=C13, sizes={"13C": [2, 2, 2, 2]}),
    Case("m-xylene-13C", "Cc1cccc(C)c1", "SWK ch. 4", options=C13, sizes={"13C": [2, 2, 2, 1, 1]}),
    Case("p-xylene-13C", "Cc1ccc(C)cc1", "SWK ch. 4", options=C13, sizes={"13C": [4, 2, 2]}),
    Case("mesitylene-13C", "Cc1cc(C)cc(C)c1", "SWK ch. 4", options=C13, sizes={"13C": [3, 3, 3]}),
    Case("hexamethylbenzene-13C", "Cc1c(C)c(C)c(C)c(C)c1C", "SWK ch. 4", options=C13, sizes={"13C": [6, 6]}),
    Case("tert-butylbenzene-13C", "CC(C)(C)c1ccccc1", "SWK ch. 4", options=C13,
         sizes={"13C": [3, 2, 2, 1, 1, 1]}),
    Case("benzoic-acid-13C", "OC(=O)c1ccccc1", "SWK ch. 4", options=C13, sizes={"13C": [2, 2, 1, 1, 1]}),
    Case("methyl-benzoate-13C", "COC(=O)c1ccccc1", "SWK ch. 4", options=C13,
         sizes={"13C": [2, 2, 1, 1, 1, 1]}),
    Case("benzophenone-13C", "O=C(c1ccccc1)c1ccccc1", "SWK ch. 4", options=C13, sizes={"13C": [4, 4, 2, 2, 1]}),
    Case("diethyl-phthalate-13C", "CCOC(=O)c1ccccc1C(=O)OCC", "SWK ch. 4", options=C13,
         sizes={"13C": [2, 2, 2, 2, 2, 2]}),
    Case("triphenylphosphine-13C", "c1ccc(cc1)P(c1ccccc1)c1ccccc1", "SWK ch. 4; BBK", options=C13,
         sizes={"13C": [6, 6, 3, 3]}),
    Case("naphthalene-13C", "c1ccc2ccccc2c1", "SWK ch. 4", options=C13, sizes={"13C": [4, 4, 2]}),
    Case("anthracene-13C", "c1ccc2cc3ccccc3cc2c1", "SWK ch. 4", options=C13, sizes={"13C": [4, 4, 4, 2]}),
    Case("phenanthrene-13C", "c1ccc2c(c1)ccc1ccccc12", "SWK ch. 4", options=C13, sizes={"13C": [2] * 7}),
    Case("biphenyl-13C", "c1ccc(cc1)-c1ccccc1", "SWK ch. 4", options=C13, sizes={"13C": [4, 4, 2, 2]}),
    Case("pyridine-13C", "c1ccncc1", "SWK ch. 4", options=C13, sizes={"13C": [2, 2, 1]}),
    Case("cyclohexanol-13C", "OC1CCCCC1", "SWK ch. 4", options=C13, sizes={"13C": [2, 2, 1, 1]}),
    Case("cyclopentanone-13C", "O=C1CCCC1", "SWK ch. 4", options=C13, sizes={"13C": [2, 2, 1]}),
    Case("2-butanone-13C", "CCC(C)=O", "SWK ch. 4", options=C13, sizes={"13C": [1, 1, 1, 1]}),
    Case("acetone-13C", "CC(C)=O", "SWK ch. 4", options=C13, sizes={"13C": [2, 1]}),
    Case("tetrahydrofuran-13C", "C1CCOC1", "SWK ch. 4", options=C13, sizes={"13C": [2, 2]}),
    Case("n-pentane-13C", "CCCCC", "SWK ch. 4", options=C13, sizes={"13C": [2, 2, 1]}),
    Case("isopentane-13C", "CCC(C)C", "SWK ch. 4", options=C13, sizes={"13C": [2, 1, 1, 1]}),
    Case("neopentane-13C", "CC(C)(C)C", "SWK ch. 4", options=C13, sizes={"13C": [4, 1]}),
    Case("1-butanol-13C", "CCCCO", "SWK ch. 4", options=C13, sizes={"13C": [1, 1, 1, 1]}),
    Case("isobutanol-13C", "CC(C)CO", "SWK ch. 4", options=C13, sizes={"13C": [2, 1, 1]}),
    Case("tert-butanol-13C", "CC(C)(C)O", "SWK ch. 4", options=C13, sizes={"13C": [3, 1]}),
    Case("glycerol-13C", "OCC(O)CO", "SWK ch. 4", options=C13, sizes={"13C": [2, 1]}),
    Case("(S)-valine-13C", "CC(C)[C@H](N)C(=O)O", "SWK ch. 4 (two methyl carbons)", options=C13,
         sizes={"13C": [1, 1, 1, 1, 1]}, cip={3: "S"}),
    Case("adamantane-13C", "C1C2CC3CC1CC(C2)C3", "SWK ch. 4", options=C13, sizes={"13C": [6, 4]}),
    Case("adamantane-1H", "C1C2CC3CC1CC(C2)C3", "SWK ch. 3", sizes={"1H": [12, 4]}),
    Case("1-methyladamantane-13C", "CC12CC3CC(CC(C3)C1)C2", "SWK ch. 4", options=C13,
         sizes={"13C": [3, 3, 3, 1, 1]}),
    # Norbornane: 3 carbon signals (C1/C4, C2/C3/C5/C6, C7); protons exo 4, endo 4, bridgehead 2, C7 2.
    Case("norbornane-13C", "C1CC2CCC1C2", "SWK ch. 4", options=C13, sizes={"13C": [4, 2, 1]}),
    Case("norbornane-1H", "C1CC2CCC1C2", "Guenther ch. 10 (exo/endo protons)", sizes={"1H": [4, 4, 2, 2]},
         split=((0, "diastereotopic"),)),
    Case("bicyclo[2.2.2]octane-13C", "C1CC2CCC1CC2", "SWK ch. 4", options=C13, sizes={"13C": [6, 2]}),
    Case("hexamethylenetetramine-13C", "C1N2CN3CN1CN(C2)C3", "SWK ch. 4", options=C13, sizes={"13C": [6]}),
    # Cubane (Oh): one carbon and one proton signal (Eaton & Cole, J. Am. Chem. Soc. 1964).
    Case("cubane-13C", "C12C3C4C1C5C2C3C45", "Eaton & Cole 1964; SWK ch. 4", options=C13, sizes={"13C": [8]}),
    Case("cubane-1H", "C12C3C4C1C5C2C3C45", "Eaton & Cole 1964; SWK ch. 3", sizes={"1H": [8]}, label="A8"),
    # Camphor, menthol, cholesterol: every carbon distinct (SWK ch. 4; cholesterol 27 lines).
    Case("camphor-13C", "CC1(C)[C@@H]2CC[C@@]1(C)C(=O)C2", "SWK ch. 4", options=C13, sizes={"13C": [1] * 10}),
    Case("menthol-13C", "CC(C)[C@@H]1CC[C@@H](C)C[C@H]1O", "SWK ch. 4", options=C13, sizes={"13C": [1] * 10}),
    Case("cholesterol-13C", "CC(C)CCC[C@@H](C)[C@H]1CC[C@H]2[C@@H]3CC=C4C[C@@H](O)CC[C@]4(C)[C@H]3CC[C@]12C",
         "SWK ch. 4", options=C13, sizes={"13C": [1] * 27}),
    # Decalins at room temperature (fast inversion of cis): 3 carbon signals each (Dalling, Grant & Paul,
    # J. Am. Chem. Soc. 1973).
    Case("trans-decalin-13C", "C1CC[C@H]2CCCC[C@@H]2C1", "Dalling-Grant-Paul 1973; SWK ch. 4", options=C13,
         sizes={"13C": [4, 4, 2]}),
    Case("cis-decalin-13C", "C1CC[C@@H]2CCCC[C@@H]2C1", "Dalling-Grant-Paul 1973", options=C13,
         sizes={"13C": [4, 4, 2]}),
    # Inositols (13C in D2O): scyllo (all trans) and cis (all cis) one line, myo four lines (C2, C5,
    # C1/C3, C4/C6). Eliel-Wilen ch. 11; SWK ch. 4.
    Case("scyllo-inositol-13C", "O[C@@H]1[C@@H](O)[C@H](O)[C@@H](O)[C@H](O)[C@H]1O", "Eliel-Wilen ch. 11",
         options=C13, sizes={"13C": [6]}, faces=(1, -1, 1, -1, 1, -1)),
    Case("cis-inositol-13C", "O[C@@H]1[C@H](O)[C@H](O)[C@H](O)[C@H](O)[C@@H]1O", "Eliel-Wilen ch. 11",
         options=C13, sizes={"13C": [6]}, faces=(1, 1, 1, 1, 1, 1)),
    Case("myo-inositol-13C", "O[C@@H]1[C@H](O)[C@H](O)[C@@H](O)[C@H](O)[C@H]1O", "Eliel-Wilen ch. 11; SWK ch. 4",
         options=C13, sizes={"13C": [2, 2, 1, 1]}, faces=(1, 1, 1, -1, 1, -1)),
    # Tröger's base: the bridgehead N cannot invert, so the molecule is chiral (C2) and each ArCH2N
    # group's two H are diastereotopic (an AB pair of doublets); N-CH2-N lies on the C2 axis, its H
    # homotopic (Eliel-Wilen ch. 8; the classic resolved chiral amine; recalled from memory)
    Case("troeger-base", "Cc1ccc2N3Cc4cc(C)ccc4N(C3)Cc2c1", "Eliel-Wilen ch. 8",
         sizes={"1H": [6, 2, 2, 2, 2, 2, 2]}, split=((6, "diastereotopic"), (16, "diastereotopic")),
         within=((H(15), "homotopic"),)),
    # DABCO: D3h, all twelve H alike (common practice)
    Case("dabco", "C1CN2CCN1CC2", "common practice", sizes={"1H": [12]}),
    # 1,3-disubstituted allenes are axially chiral (Eliel-Wilen ch. 14; recalled from memory), so the
    # isopropyl methyls of 2-methylhexa-3,4-diene and the CH2 protons of hexa-2,3-diene are
    # diastereotopic; in 3-chlorobuta-1,2-diene (Cs) the =CH2 protons are enantiotopic
    Case("allene-isopropyl", "CC(C)C=C=CC", "Eliel-Wilen ch. 14", pairs=((H(0), H(2), "diastereotopic"),)),
    Case("allene-ethyl", "CCC=C=CC", "Eliel-Wilen ch. 14", split=((1, "diastereotopic"),)),
    Case("allene-ch2", "C=C=C(C)Cl", "Eliel-Wilen ch. 14", within=((H(0), "enantiotopic"),)),
]


# ------------------------------------------------------------------------------------------- helpers

def _h_on(smiles: str) -> dict[int, list[int]]:
    """Hydrogens on each heavy atom, from RDKit AddHs (the index convention of the JSON contract)."""
    mol = Chem.AddHs(Chem.MolFromSmiles(smiles))
    out: dict[int, list[int]] = {}
    for atom in mol.GetAtoms():
        if atom.GetAtomicNum() == 1:
            out.setdefault(atom.GetNeighbors()[0].GetIdx(), []).append(atom.GetIdx())
    return out


def _atoms(sel: tuple, h_on: dict) -> list[int]:
    kind, idx, which = sel
    if kind == "atom":
        return [idx]
    hs = sorted(h_on[idx])
    return hs if which is None else [hs[which]]


def _set_of(report: dict, sel: tuple, h_on: dict) -> dict:
    """The one chemical set that holds every atom of the selector."""
    atoms = set(_atoms(sel, h_on))
    holding = [s for s in report["sets"] if atoms & set(s["atoms"])]
    assert len(holding) == 1, f"{sel}: atoms {sorted(atoms)} are spread over sets {[s['index'] for s in holding]}"
    assert atoms <= set(holding[0]["atoms"]), f"{sel}: atoms {sorted(atoms)} not all in one set"
    return holding[0]


def _ring_faces(smiles: str) -> tuple[int, ...]:
    """Face (+1/-1, relative to the first) of each non-H ring substituent, in ring order, from an ETKDG
    embedding (RDKit); independent of the program."""
    mol = Chem.AddHs(Chem.MolFromSmiles(smiles))
    assert AllChem.EmbedMolecule(mol, randomSeed=11) == 0
    ring = list(mol.GetRingInfo().AtomRings()[0])
    xyz = mol.GetConformer().GetPositions()
    centre = xyz[ring].mean(axis=0)
    normal = np.linalg.svd(xyz[ring] - centre)[2][2]
    signs = []
    for r in ring:
        for nb in mol.GetAtomWithIdx(r).GetNeighbors():
            if nb.GetIdx() not in ring and nb.GetAtomicNum() != 1:
                signs.append(int(np.sign((xyz[nb.GetIdx()] - xyz[r]) @ normal)))
    return tuple(s * signs[0] for s in signs)


def _check_input(case: Case) -> None:
    if case.cip:
        mol = Chem.MolFromSmiles(case.smiles)
        rdCIPLabeler.AssignCIPLabels(mol)
        got = {a.GetIdx(): a.GetProp("_CIPCode") for a in mol.GetAtoms() if a.HasProp("_CIPCode")}
        assert got == case.cip, f"test input {case.smiles} is not the named isomer: CIP {got}"
    if case.faces:
        got = _ring_faces(case.smiles)
        assert got == case.faces, f"test input {case.smiles} is not the named isomer: faces {got}"


def _params():
    for case in CASES:
        marks = [pytest.mark.xfail(reason=case.xfail, strict=True)] if case.xfail else []
        yield pytest.param(case, id=case.id, marks=marks)


# --------------------------------------------------------------------------------------------- test

@pytest.mark.parametrize("case", list(_params()))
def test_textbook_classification(case: Case) -> None:
    _check_input(case)
    report = equivclass.analyze(case.smiles, **case.options).to_dict()
    h_on = _h_on(case.smiles)
    sets = report["sets"]

    if case.sizes is not None:
        got: dict[str, list[int]] = {}
        for s in sets:
            got.setdefault(s["isotope"], []).append(len(s["atoms"]))
        got = {iso: sorted(v, reverse=True) for iso, v in got.items()}
        want = {iso: sorted(v, reverse=True) for iso, v in case.sizes.items()}
        assert got == want, f"set sizes {got}, textbook {want}"

    if case.label is not None:
        assert report["label"] == case.label, f"label {report['label']}, textbook {case.label}"
    if case.label_shape is not None:
        assert re.fullmatch(case.label_shape, report["label"]), report["label"]
    if case.primes is not None:
        assert report["label"].count("'") == case.primes, report["label"]

    for sel, n in case.subsets:
        s = _set_of(report, sel, h_on)
        assert len(s["magnetic_subsets"]) == n, f"{sel}: subsets {s['magnetic_subsets']}"

    for sel, within in case.within:
        s = _set_of(report, sel, h_on)
        assert s["topicity"]["within"] == within, f"{sel}: {s['topicity']}"

    for group in case.together:
        idx = {_set_of(report, sel, h_on)["index"] for sel in group}
        assert len(idx) == 1, f"{group} should be one set, found sets {sorted(idx)}"

    def related(sa: dict, sb: dict, relation: str) -> None:
        assert sa["index"] != sb["index"], f"atoms {sa['atoms']} and {sb['atoms']} should be two sets"
        key = "diastereotopic_to" if relation == "diastereotopic" else "enantiotopic_to"
        assert sb["index"] in sa["topicity"].get(key, []), f"set {sa['index']}: {sa['topicity']}"
        assert sa["index"] in sb["topicity"].get(key, []), f"set {sb['index']}: {sb['topicity']}"

    for heavy, relation in case.split:
        ha, hb = sorted(h_on[heavy])[:2]
        related(_set_of(report, ("atom", ha, None), h_on), _set_of(report, ("atom", hb, None), h_on), relation)

    for sa, sb, relation in case.pairs:
        related(_set_of(report, sa, h_on), _set_of(report, sb, h_on), relation)

    for sel, copies in case.copies:
        s = _set_of(report, sel, h_on)
        assert report["fragments"][s["fragment"]]["copies"] == copies, report["fragments"][s["fragment"]]

