"""Shift estimates checked against measured shifts of simple compounds from handbook tables.

Sources of the measured values (all in CDCl3 unless noted; every value is recalled from memory of
the printed table or spectrum and should be checked against it):
  [G97]   Gottlieb, Kotlyar, Nudelman, J. Org. Chem. 62, 7512 (1997), tables of solvent impurity
          shifts in CDCl3 (1H table 1, 13C table 2).
  [SDBS]  Spectral Database for Organic Compounds (AIST, Japan), CDCl3 spectra.
  [PBB]   Pretsch, Buhlmann, Badertscher, "Structure Determination of Organic Compounds: Tables of
          Spectral Data", reference spectra of the parent compounds.
  [DOL]   Dolbier, "Guide to Fluorine NMR for Organic Chemists" (19F, vs CFCl3).
  [KUHL]  Kuhl, "Phosphorus-31 NMR Spectroscopy" (31P, vs 85 % H3PO4).
Entries marked "calibration" are values a hand-fitted correction of data/ (named in its header) was
fitted to; the others were held out of that fit. Entries marked "parent" are compounds of the kind the
published increments were derived from (monosubstituted methanes/ethanes/propanes, ethylenes, benzenes, or the parent heterocycle): for them
the check is of structure perception and of the recalled table, not of additivity. The entries not
so marked (polysubstituted compounds) test the additive rules themselves.

In each SMILES the observed nucleus is the atom with map number 1 (for 1H: the hydrogens on that
atom). For terminal alkenes, "cis"/"trans" selects the H cis or trans to the atom with map number 2.
"""

from __future__ import annotations

import statistics

import pytest
from rdkit import Chem, RDConfig
from rdkit.Chem import AllChem, rdMolTransforms

from equivclass.shifts import ShiftEstimate, estimate

# (class, SMILES with map 1 on the observed atom, isotope, measured ppm, source, geometry)
REFERENCE = [
    # ---------------------------------------------------------------- alkyl 1H
    ("alkyl", "[CH3:1]C(=O)OCC", "1H", 2.05, "G97 ethyl acetate (parent)", None),
    ("alkyl", "CC(=O)O[CH2:1]C", "1H", 4.12, "G97 ethyl acetate (parent)", None),
    ("alkyl", "CC(=O)OC[CH3:1]", "1H", 1.26, "G97 ethyl acetate (parent)", None),
    ("alkyl", "[CH3:1]C(C)=O", "1H", 2.17, "G97 acetone (parent)", None),
    ("alkyl", "[CH3:1]S(C)=O", "1H", 2.62, "G97 DMSO (parent)", None),
    ("alkyl", "[CH3:1]C(=O)O", "1H", 2.10, "G97 acetic acid (parent)", None),
    ("alkyl", "C[CH2:1]OCC", "1H", 3.48, "G97 diethyl ether (parent)", None),
    ("alkyl", "[CH3:1]COCC", "1H", 1.21, "G97 diethyl ether (parent)", None),
    ("alkyl", "[CH3:1]c1ccccc1", "1H", 2.36, "G97 toluene (parent)", None),
    ("alkyl", "[CH3:1]Oc1ccccc1", "1H", 3.80, "SDBS anisole (parent)", None),
    ("alkyl", "C[CH:1](C)O", "1H", 4.04, "G97 2-propanol (parent)", None),
    ("alkyl", "[CH3:1]C(C)O", "1H", 1.22, "G97 2-propanol (parent)", None),
    ("alkyl", "C[CH2:1]O", "1H", 3.72, "G97 ethanol (parent)", None),
    ("alkyl", "[CH3:1]CO", "1H", 1.25, "G97 ethanol (parent)", None),
    ("alkyl", "[CH3:1]O", "1H", 3.49, "G97 methanol (parent)", None),
    ("alkyl", "C[CH2:1]N(CC)CC", "1H", 2.53, "G97 triethylamine (parent)", None),
    ("alkyl", "[CH3:1]CN(CC)CC", "1H", 1.03, "G97 triethylamine (parent)", None),
    ("alkyl", "[CH3:1]OC(C)(C)C", "1H", 3.22, "G97 tert-butyl methyl ether", None),
    ("alkyl", "COC([CH3:1])(C)C", "1H", 1.19, "G97 tert-butyl methyl ether", None),
    ("alkyl", "[CH3:1]OCCOC", "1H", 3.40, "G97 1,2-dimethoxyethane", None),
    ("alkyl", "CO[CH2:1]COC", "1H", 3.55, "G97 1,2-dimethoxyethane (calibration)", None),
    ("alkyl", "C1C[CH2:1]OC1", "1H", 3.76, "G97 tetrahydrofuran (calibration)", None),
    ("alkyl", "C1[CH2:1]COC1", "1H", 1.85, "G97 tetrahydrofuran (calibration)", None),
    ("alkyl", "C1CO[CH2:1]CO1", "1H", 3.71, "G97 1,4-dioxane", None),
    ("alkyl", "C1CC[CH2:1]CC1", "1H", 1.43, "G97 cyclohexane", None),
    ("alkyl", "[CH3:1]CCCCC", "1H", 0.88, "G97 n-hexane", None),
    ("alkyl", "CC[CH2:1]CCC", "1H", 1.26, "G97 n-hexane", None),
    ("alkyl", "Cl[CH2:1]Cl", "1H", 5.30, "G97 dichloromethane", None),
    ("alkyl", "Cl[CH:1](Cl)Cl", "1H", 7.26, "G97 chloroform", None),
    ("alkyl", "Cl[CH2:1]CCl", "1H", 3.73, "G97 1,2-dichloroethane", None),
    ("alkyl", "[CH3:1][N+](=O)[O-]", "1H", 4.33, "G97 nitromethane (parent)", None),
    ("alkyl", "[CH3:1]C#N", "1H", 2.10, "G97 acetonitrile (parent)", None),
    ("alkyl", "O=CN(C)[CH3:1]", "1H", 2.96, "G97 DMF (one of the two N-CH3)", None),
    ("alkyl", "O=CN([CH3:1])C", "1H", 2.88, "G97 DMF (the other N-CH3)", None),
    ("alkyl", "[CH3:1]C(=O)N(C)C", "1H", 2.09, "G97 N,N-dimethylacetamide", None),
    ("alkyl", "O[CH2:1]CO", "1H", 3.76, "G97 ethylene glycol (calibration)", None),
    ("alkyl", "C[CH2:1]c1ccccc1", "1H", 2.65, "SDBS ethylbenzene (parent)", None),
    ("alkyl", "[CH3:1]Cc1ccccc1", "1H", 1.23, "SDBS ethylbenzene (parent)", None),
    ("alkyl", "O[CH2:1]c1ccccc1", "1H", 4.67, "SDBS benzyl alcohol", None),
    ("alkyl", "Cl[CH2:1]c1ccccc1", "1H", 4.58, "SDBS benzyl chloride", None),
    ("alkyl", "CCOC(=O)[CH2:1]C(=O)OCC", "1H", 3.36, "SDBS diethyl malonate", None),
    ("alkyl", "Br[CH2:1]C(=O)OCC", "1H", 3.83, "SDBS ethyl bromoacetate", None),
    ("alkyl", "[CH3:1]C(=O)c1ccccc1", "1H", 2.61, "SDBS acetophenone (parent)", None),
    ("alkyl", "[CH3:1]OC(=O)c1ccccc1", "1H", 3.92, "SDBS methyl benzoate (parent)", None),
    ("alkyl", "C[CH2:1]C(C)=O", "1H", 2.44, "SDBS 2-butanone (parent)", None),
    ("alkyl", "[CH3:1]CC(C)=O", "1H", 1.06, "SDBS 2-butanone (parent)", None),
    ("alkyl", "O=C1[CH2:1]CCCC1", "1H", 2.33, "SDBS cyclohexanone", None),
    ("alkyl", "Br[CH2:1]CCC", "1H", 3.41, "SDBS 1-bromobutane", None),
    ("alkyl", "OC(=O)[CH2:1]c1ccccc1", "1H", 3.64, "SDBS phenylacetic acid", None),
    ("alkyl", "[CH3:1]N(C)P(=O)(N(C)C)N(C)C", "1H", 2.65, "G97 HMPA", None),
    ("alkyl", "[CH3:1]OP(=O)(OC)OC", "1H", 3.78, "SDBS trimethyl phosphate (parent)", None),
    # N-CH3 on aromatic, imine and sulfonyl N; amide / aniline N-CH3 (recalled from memory)
    ("alkyl", "c1cn([CH3:1])cc1", "1H", 3.62, "SDBS N-methylpyrrole (parent)", None),
    ("alkyl", "c1ncn([CH3:1])c1", "1H", 3.64, "SDBS N-methylimidazole (parent)", None),
    ("alkyl", "c1ccc2c(c1)ccn2[CH3:1]", "1H", 3.75, "SDBS N-methylindole (parent)", None),
    ("alkyl", "c1cc[n+]([CH3:1])cc1.[I-]", "1H", 4.40, "SDBS N-methylpyridinium iodide (parent)", None),
    ("alkyl", "CN([CH3:1])c1ccccc1", "1H", 2.93, "SDBS N,N-dimethylaniline", None),
    ("alkyl", "CC(=O)N(C)[CH3:1]", "1H", 3.02, "G97 N,N-dimethylacetamide (one N-CH3)", None),
    ("alkyl", "CC(=O)N([CH3:1])C", "1H", 2.94, "G97 N,N-dimethylacetamide (other N-CH3)", None),
    ("alkyl", "Cc1ccc(S(=O)(=O)N(C)[CH3:1])cc1", "1H", 2.70, "SDBS N,N-dimethyl-p-toluenesulfonamide (parent)",
     None),
    ("alkyl", "[CH3:1]N=Cc1ccccc1", "1H", 3.49, "SDBS N-benzylidenemethylamine (parent)", None),
    # several electronegative groups on one carbon, fluorinated carbons (recalled from memory)
    ("alkyl", "C[CH:1](F)F", "1H", 5.9, "PBB 1,1-difluoroethane (parent)", None),
    ("alkyl", "F[CH:1](F)c1ccccc1", "1H", 6.63, "SDBS (difluoromethyl)benzene (parent)", None),
    ("alkyl", "F[CH:1](F)C(=O)O", "1H", 5.95, "SDBS difluoroacetic acid (parent)", None),
    ("alkyl", "F[CH2:1]c1ccccc1", "1H", 5.35, "SDBS benzyl fluoride (parent)", None),
    ("alkyl", "CCC[CH2:1]F", "1H", 4.45, "SDBS 1-fluorobutane (parent)", None),
    ("alkyl", "O[CH2:1]C(F)(F)F", "1H", 3.93, "G97-type 2,2,2-trifluoroethanol", None),
    ("alkyl", "Br[CH:1](Br)Br", "1H", 6.82, "SDBS bromoform (parent)", None),
    ("alkyl", "Br[CH2:1]Br", "1H", 4.95, "SDBS dibromomethane (parent)", None),
    ("alkyl", "CO[CH:1](OC)OC", "1H", 4.97, "SDBS trimethyl orthoformate (parent)", None),
    ("alkyl", "CO[CH2:1]OC", "1H", 4.58, "SDBS dimethoxymethane (parent)", None),
    ("alkyl", "C[CH:1](Cl)Cl", "1H", 5.89, "SDBS 1,1-dichloroethane (parent)", None),
    ("alkyl", "CO[CH:1](OC)c1ccccc1", "1H", 5.38, "SDBS benzaldehyde dimethyl acetal (parent)", None),
    ("alkyl", "c1ccc2O[CH2:1]Oc2c1", "1H", 5.95, "SDBS 1,3-benzodioxole (parent)", None),
    ("alkyl", "C=C[CH2:1]O", "1H", 4.13, "SDBS allyl alcohol", None),
    ("alkyl", "C#C[CH2:1]O", "1H", 4.28, "SDBS propargyl alcohol", None),
    ("alkyl", "C=C[CH2:1]Br", "1H", 3.93, "SDBS allyl bromide", None),
    ("alkyl", "CCOC(=O)[CH2:1]Cl", "1H", 4.06, "SDBS ethyl chloroacetate", None),
    ("alkyl", "CC(=O)O[CH2:1]c1ccccc1", "1H", 5.10, "SDBS benzyl acetate", None),
    # methines R2CH-X and RCH(X)Y (recalled from memory). "calibration" marks values the corrections of
    # data/shifts_1h_methine.csv were fitted to; the others were held out of that fit.
    ("alkyl", "O[CH:1]1CCCCC1", "1H", 3.58, "SDBS cyclohexanol (calibration)", None),
    ("alkyl", "C[CH:1](O)c1ccccc1", "1H", 4.89, "SDBS 1-phenylethanol (calibration)", None),
    ("alkyl", "CCCCCC[CH:1](C)O", "1H", 3.79, "SDBS 2-octanol", None),
    ("alkyl", "CC[CH:1](O)c1ccccc1", "1H", 4.58, "SDBS 1-phenyl-1-propanol", None),
    ("alkyl", "CCOC(=O)[CH:1](O)c1ccccc1", "1H", 5.17, "SDBS ethyl mandelate", None),
    ("alkyl", "C[CH:1](O)Cc1ccccc1", "1H", 4.03, "SDBS 1-phenyl-2-propanol", None),
    ("alkyl", "CCOC(=O)[CH:1](C)Cl", "1H", 4.39, "SDBS ethyl 2-chloropropanoate", None),
    # beta groups on CH2 (data/shifts_1h_beta.csv; recalled from memory, held out of its calibration)
    ("alkyl", "IC[CH2:1]CC", "1H", 1.81, "SDBS 1-iodobutane C2-H2", None),
    ("alkyl", "C[CH2:1]Cc1ccccc1", "1H", 1.65, "SDBS propylbenzene C2-H2", None),
    ("alkyl", "OC[CH2:1]CO", "1H", 1.81, "SDBS 1,3-propanediol C2-H2", None),
    # small rings (recalled from memory; ring4/ring5 terms of shifts_1h_base.csv, these held out of them)
    ("alkyl", "C1=CCC[CH2:1]1", "1H", 2.30, "SDBS cyclopentene allylic CH2", None),
    ("alkyl", "C1=CC[CH2:1]C1", "1H", 1.82, "SDBS cyclopentene C4-H2", None),
    ("alkyl", "C1CO[CH2:1]1", "1H", 4.73, "SDBS oxetane OCH2", None),
    # allylic C-H on a C=C conjugated with C=O (alkenyl-conj row; recalled from memory)
    ("alkyl", "[CH3:1]/C=C/C(=O)OC", "1H", 1.87, "SDBS methyl crotonate CH3 (calibration)", None),
    ("alkyl", "[CH3:1]C1=CC(=O)CCC1", "1H", 1.95, "SDBS 3-methylcyclohex-2-enone CH3", None),
    ("alkyl", "C[CH:1](C(=O)O)c1ccccc1", "1H", 3.73, "SDBS 2-phenylpropanoic acid (calibration)", None),
    ("alkyl", "CC(C)Cc1ccc(cc1)[CH:1](C)C(=O)O", "1H", 3.70, "SDBS ibuprofen CH", None),
    ("alkyl", "C[CH:1](C(=O)OC)c1ccccc1", "1H", 3.72, "SDBS methyl 2-phenylpropanoate", None),
    ("alkyl", "C[CH:1](N)C(=O)OC", "1H", 3.55, "SDBS alanine methyl ester, free base (calibration)", None),
    ("alkyl", "CC(C)[CH:1](N)C(=O)OC", "1H", 3.30, "SDBS valine methyl ester, free base", None),
    ("alkyl", "N[CH:1](Cc1ccccc1)C(=O)OC", "1H", 3.74, "SDBS phenylalanine methyl ester, free base", None),
    ("alkyne", "[CH:1]#CCO", "1H", 2.50, "SDBS propargyl alcohol, alkyne H (calibration)", None),
    ("alkyne", "[CH:1]#CCCCC", "1H", 1.94, "SDBS 1-hexyne (parent)", None),
    # ---------------------------------------------------------------- alkene 1H
    ("alkene", "C=[CH:1]c1ccccc1", "1H", 6.72, "SDBS styrene, H-alpha (parent)", None),
    ("alkene", "[CH2:1]=C[c:2]1ccccc1", "1H", 5.75, "SDBS styrene, H cis to Ph (parent)", "cis"),
    ("alkene", "[CH2:1]=C[c:2]1ccccc1", "1H", 5.24, "SDBS styrene, H trans to Ph (parent)", "trans"),
    ("alkene", "C1C[CH:1]=CCC1", "1H", 5.67, "SDBS cyclohexene", None),
    ("alkene", "C=[CH:1]C(=O)OC", "1H", 6.13, "SDBS methyl acrylate, H-alpha (parent)", None),
    ("alkene", "[CH2:1]=C[C:2](=O)OC", "1H", 6.40, "SDBS methyl acrylate, H cis to CO2Me (parent)", "cis"),
    ("alkene", "[CH2:1]=C[C:2](=O)OC", "1H", 5.82, "SDBS methyl acrylate, H trans to CO2Me (parent)", "trans"),
    ("alkene", "C=[CH:1]OC(C)=O", "1H", 7.27, "SDBS vinyl acetate, H gem to OAc (parent)", None),
    ("alkene", "[CH2:1]=C[O:2]C(C)=O", "1H", 4.88, "SDBS vinyl acetate, H cis to OAc (parent)", "cis"),
    ("alkene", "[CH2:1]=C[O:2]C(C)=O", "1H", 4.57, "SDBS vinyl acetate, H trans to OAc (parent)", "trans"),
    ("alkene", "C=[CH:1]CCCC", "1H", 5.80, "SDBS 1-hexene, H2", None),
    ("alkene", "CC(C)=[CH:1]C(C)=O", "1H", 6.09, "SDBS mesityl oxide", None),
    ("alkene", "C/C=[CH:1]/C(=O)OC", "1H", 5.84, "SDBS methyl (E)-crotonate, H2", None),
    ("alkene", "C/[CH:1]=C/C(=O)OC", "1H", 6.97, "SDBS methyl (E)-crotonate, H3", None),
    # ---------------------------------------------------------------- aromatic 1H
    ("aromatic", "c1cc[cH:1]cc1", "1H", 7.36, "G97 benzene (parent)", None),
    ("aromatic", "Cc1[cH:1]cccc1", "1H", 7.17, "G97 toluene, ortho (parent)", None),
    ("aromatic", "Cc1c[cH:1]ccc1", "1H", 7.25, "G97 toluene, meta (parent)", None),
    ("aromatic", "Clc1[cH:1]cccc1", "1H", 7.33, "SDBS chlorobenzene, ortho (parent)", None),
    ("aromatic", "Clc1c[cH:1]ccc1", "1H", 7.29, "SDBS chlorobenzene, meta (parent)", None),
    ("aromatic", "Clc1cc[cH:1]cc1", "1H", 7.23, "SDBS chlorobenzene, para (parent)", None),
    ("aromatic", "O=[N+]([O-])c1[cH:1]cccc1", "1H", 8.23, "SDBS nitrobenzene, ortho (parent)", None),
    ("aromatic", "O=[N+]([O-])c1c[cH:1]ccc1", "1H", 7.56, "SDBS nitrobenzene, meta (parent)", None),
    ("aromatic", "O=[N+]([O-])c1cc[cH:1]cc1", "1H", 7.71, "SDBS nitrobenzene, para (parent)", None),
    ("aromatic", "COc1[cH:1]cccc1", "1H", 6.90, "SDBS anisole, ortho (parent)", None),
    ("aromatic", "COc1c[cH:1]ccc1", "1H", 7.29, "SDBS anisole, meta (parent)", None),
    ("aromatic", "COc1cc[cH:1]cc1", "1H", 6.94, "SDBS anisole, para (parent)", None),
    ("aromatic", "O=Cc1[cH:1]cccc1", "1H", 7.88, "SDBS benzaldehyde, ortho (parent)", None),
    ("aromatic", "O=Cc1c[cH:1]ccc1", "1H", 7.53, "SDBS benzaldehyde, meta (parent)", None),
    ("aromatic", "O=Cc1cc[cH:1]cc1", "1H", 7.63, "SDBS benzaldehyde, para (parent)", None),
    ("aromatic", "Fc1[cH:1]cccc1", "1H", 7.03, "SDBS fluorobenzene, ortho (parent)", None),
    ("aromatic", "Fc1c[cH:1]ccc1", "1H", 7.29, "SDBS fluorobenzene, meta (parent)", None),
    ("aromatic", "Fc1cc[cH:1]cc1", "1H", 7.10, "SDBS fluorobenzene, para (parent)", None),
    ("aromatic", "Nc1[cH:1]cccc1", "1H", 6.70, "SDBS aniline, ortho (parent)", None),
    ("aromatic", "Nc1c[cH:1]ccc1", "1H", 7.18, "SDBS aniline, meta (parent)", None),
    ("aromatic", "Nc1cc[cH:1]cc1", "1H", 6.78, "SDBS aniline, para (parent)", None),
    ("aromatic", "COC(=O)c1[cH:1]cccc1", "1H", 8.04, "SDBS methyl benzoate, ortho (parent)", None),
    ("aromatic", "COC(=O)c1c[cH:1]ccc1", "1H", 7.42, "SDBS methyl benzoate, meta (parent)", None),
    ("aromatic", "COC(=O)c1cc[cH:1]cc1", "1H", 7.54, "SDBS methyl benzoate, para (parent)", None),
    ("aromatic", "Cc1cc[cH:1]c(C)c1", "1H", 7.05, "SDBS p-xylene", None),
    ("aromatic", "Cc1[cH:1]c(C)cc(C)c1", "1H", 6.78, "SDBS mesitylene", None),
    # ---------------------------------------------------------------- heteroaromatic 1H
    ("heteroaromatic", "n1[cH:1]cccc1", "1H", 8.62, "G97 pyridine H2 (parent)", None),
    ("heteroaromatic", "n1c[cH:1]ccc1", "1H", 7.29, "G97 pyridine H3 (parent)", None),
    ("heteroaromatic", "n1cc[cH:1]cc1", "1H", 7.68, "G97 pyridine H4 (parent)", None),
    ("heteroaromatic", "Cc1ccc[cH:1]n1", "1H", 8.49, "SDBS 2-methylpyridine H6", None),
    ("heteroaromatic", "Cc1[cH:1]cccn1", "1H", 7.13, "SDBS 2-methylpyridine H3", None),
    ("heteroaromatic", "Cc1c[cH:1]ccn1", "1H", 7.55, "SDBS 2-methylpyridine H4", None),
    ("heteroaromatic", "Cc1cc[cH:1]cn1", "1H", 7.07, "SDBS 2-methylpyridine H5", None),
    ("heteroaromatic", "Cc1[cH:1]cncc1", "1H", 7.10, "SDBS 4-methylpyridine H3", None),
    ("heteroaromatic", "Cc1c[cH:1]ncc1", "1H", 8.46, "SDBS 4-methylpyridine H2", None),
    ("heteroaromatic", "o1[cH:1]ccc1", "1H", 7.42, "SDBS furan H2 (parent)", None),
    ("heteroaromatic", "o1c[cH:1]cc1", "1H", 6.38, "SDBS furan H3 (parent)", None),
    ("heteroaromatic", "O=Cc1cc[cH:1]o1", "1H", 7.68, "SDBS furfural H5", None),
    ("heteroaromatic", "O=Cc1[cH:1]cco1", "1H", 7.25, "SDBS furfural H3", None),
    ("heteroaromatic", "O=Cc1c[cH:1]co1", "1H", 6.59, "SDBS furfural H4", None),
    ("heteroaromatic", "s1[cH:1]ccc1", "1H", 7.33, "SDBS thiophene H2 (parent)", None),
    ("heteroaromatic", "s1c[cH:1]cc1", "1H", 7.12, "SDBS thiophene H3 (parent)", None),
    ("heteroaromatic", "CC(=O)c1[cH:1]ccs1", "1H", 7.70, "SDBS 2-acetylthiophene H3", None),
    ("heteroaromatic", "CC(=O)c1c[cH:1]cs1", "1H", 7.12, "SDBS 2-acetylthiophene H4", None),
    ("heteroaromatic", "CC(=O)c1cc[cH:1]s1", "1H", 7.63, "SDBS 2-acetylthiophene H5", None),
    ("heteroaromatic", "[nH]1[cH:1]ccc1", "1H", 6.74, "SDBS pyrrole H2 (parent)", None),
    ("heteroaromatic", "[nH]1c[cH:1]cc1", "1H", 6.24, "SDBS pyrrole H3 (parent)", None),
    # ---------------------------------------------------------------- aldehyde 1H
    ("aldehyde", "O=[CH:1]c1ccccc1", "1H", 10.02, "SDBS benzaldehyde (parent)", None),
    ("aldehyde", "C[CH:1]=O", "1H", 9.80, "SDBS acetaldehyde (parent)", None),
    ("aldehyde", "CC[CH:1]=O", "1H", 9.79, "SDBS propanal (parent)", None),
    ("aldehyde", "O=[CH:1]N(C)C", "1H", 8.02, "G97 DMF", None),
    ("aldehyde", "O=[CH:1]c1ccco1", "1H", 9.66, "SDBS furfural", None),
    ("aldehyde", "C/C=C/[CH:1]=O", "1H", 9.50, "SDBS (E)-crotonaldehyde", None),
    ("aldehyde", "O=[CH:1]OCC", "1H", 8.06, "SDBS ethyl formate", None),
    # ---------------------------------------------------------------- labile 1H
    ("labile", "CC(=O)[OH:1]", "1H", 11.4, "SDBS acetic acid (concentration dependent)", None),
    ("labile", "CC[OH:1]", "1H", 1.32, "G97 ethanol", None),
    ("labile", "C[OH:1]", "1H", 1.09, "G97 methanol", None),
    ("labile", "[OH:1]c1ccccc1", "1H", 4.9, "SDBS phenol (concentration dependent)", None),
    ("labile", "[NH2:1]c1ccccc1", "1H", 3.6, "SDBS aniline", None),
    ("labile", "[nH:1]1cccc1", "1H", 7.9, "SDBS pyrrole (broad)", None),
    ("labile", "CC(C)[OH:1]", "1H", 1.6, "SDBS 2-propanol (dilute, concentration dependent)", None),
    # ---------------------------------------------------------------- H on P, Si, Sn, B
    # (recalled from memory; P-H, Si-H and Sn-H show large one-bond couplings to the heteroatom)
    ("hydride", "CO[PH:1](=O)OC", "1H", 6.77, "SDBS dimethyl phosphite, 1J(P,H) ~700 Hz", None),
    ("hydride", "CCO[PH:1](=O)OCC", "1H", 6.81, "SDBS diethyl phosphite", None),
    ("hydride", "O=[PH:1](c1ccccc1)c1ccccc1", "1H", 8.07, "SDBS diphenylphosphine oxide", None),
    ("hydride", "c1ccc([PH:1]c2ccccc2)cc1", "1H", 5.2, "SDBS diphenylphosphine", None),
    ("hydride", "[PH3:1]", "1H", 1.6, "PBB phosphine", None),
    ("hydride", "CC[SiH:1](CC)CC", "1H", 3.61, "SDBS triethylsilane", None),
    ("hydride", "c1ccc([SiH:1](c2ccccc2)c2ccccc2)cc1", "1H", 5.47, "SDBS triphenylsilane", None),
    ("hydride", "C[SiH:1](C)c1ccccc1", "1H", 4.42, "SDBS dimethylphenylsilane", None),
    ("hydride", "CCCC[SnH:1](CCCC)CCCC", "1H", 4.8, "SDBS tributyltin hydride", None),
    ("hydride", "C[N+](C)(C)[BH3-:1]", "1H", 1.5, "PBB trimethylamine-borane (broad q)", None),
    # ---------------------------------------------------------------- 13C
    ("13C", "[CH3:1]C(C)=O", "13C", 30.92, "G97 acetone (parent)", None),
    ("13C", "C[C:1](C)=O", "13C", 207.07, "G97 acetone", None),
    ("13C", "CC(=O)O[CH2:1]C", "13C", 60.49, "G97 ethyl acetate", None),
    ("13C", "[CH3:1]C(=O)OCC", "13C", 21.04, "G97 ethyl acetate (parent)", None),
    ("13C", "CC(=O)OC[CH3:1]", "13C", 14.19, "G97 ethyl acetate", None),
    ("13C", "C[C:1](=O)OCC", "13C", 171.36, "G97 ethyl acetate", None),
    ("13C", "[CH3:1]c1ccccc1", "13C", 21.46, "G97 toluene (parent)", None),
    ("13C", "C[c:1]1ccccc1", "13C", 137.89, "G97 toluene ipso", None),
    ("13C", "Cc1[cH:1]cccc1", "13C", 129.07, "G97 toluene ortho", None),
    ("13C", "Cc1cc[cH:1]cc1", "13C", 125.33, "G97 toluene para", None),
    ("13C", "C[CH2:1]OCC", "13C", 65.91, "G97 diethyl ether", None),
    ("13C", "[CH3:1]COCC", "13C", 15.20, "G97 diethyl ether", None),
    ("13C", "C[CH2:1]O", "13C", 58.28, "G97 ethanol", None),
    ("13C", "C1CC[CH2:1]CC1", "13C", 26.94, "G97 cyclohexane (parent)", None),
    # ring carbons (SDBS-type spectra, recalled from memory; ring corrections of shifts_13c_alkane.csv)
    ("13C", "O[CH:1]1CCCCC1", "13C", 70.0, "SDBS cyclohexanol C1 (calibration)", None),
    ("13C", "OC1[CH2:1]CCCC1", "13C", 35.5, "SDBS cyclohexanol C2", None),
    ("13C", "OC1C[CH2:1]CCC1", "13C", 24.4, "SDBS cyclohexanol C3", None),
    ("13C", "OC1CC[CH2:1]CC1", "13C", 25.9, "SDBS cyclohexanol C4", None),
    ("13C", "C[CH:1]1CCCCC1", "13C", 32.9, "SDBS methylcyclohexane C1 (calibration)", None),
    ("13C", "CC1[CH2:1]CCCC1", "13C", 35.7, "SDBS methylcyclohexane C2", None),
    ("13C", "CC1CC[CH2:1]CC1", "13C", 26.4, "SDBS methylcyclohexane C4", None),
    ("13C", "O[CH:1]1CCCC1", "13C", 73.9, "SDBS cyclopentanol C1", None),
    ("13C", "OC1[CH2:1]CCC1", "13C", 35.5, "SDBS cyclopentanol C2", None),
    ("13C", "Cl[CH:1]1CCCCC1", "13C", 60.0, "SDBS chlorocyclohexane C1", None),
    ("13C", "N[CH:1]1CCCCC1", "13C", 50.4, "SDBS cyclohexylamine C1", None),
    ("13C", "[CH3:1]CCCCC", "13C", 14.14, "G97 n-hexane", None),
    ("13C", "C[CH2:1]CCCC", "13C", 22.70, "G97 n-hexane", None),
    ("13C", "CC[CH2:1]CCC", "13C", 31.64, "G97 n-hexane", None),
    ("13C", "C[CH:1](C)O", "13C", 64.50, "G97 2-propanol", None),
    ("13C", "C[CH2:1]N(CC)CC", "13C", 46.25, "G97 triethylamine", None),
    ("13C", "O=[N+]([O-])[c:1]1ccccc1", "13C", 148.3, "SDBS nitrobenzene ipso", None),
    ("13C", "O=[N+]([O-])c1cc[cH:1]cc1", "13C", 134.7, "SDBS nitrobenzene para", None),
    ("13C", "CO[c:1]1ccccc1", "13C", 159.6, "SDBS anisole ipso", None),
    ("13C", "COc1[cH:1]cccc1", "13C", 114.0, "SDBS anisole ortho", None),
    ("13C", "[CH3:1]Oc1ccccc1", "13C", 55.1, "SDBS anisole OCH3 (parent)", None),
    ("13C", "[CH2:1]=Cc1ccccc1", "13C", 113.8, "SDBS styrene C-beta", None),
    ("13C", "C=[CH:1]c1ccccc1", "13C", 136.9, "SDBS styrene C-alpha", None),
    ("13C", "c1cn([CH3:1])cc1", "13C", 36.2, "SDBS N-methylpyrrole N-CH3 (parent)", None),
    ("13C", "[CH3:1]S(C)(=O)=O", "13C", 42.6, "SDBS dimethyl sulfone (parent)", None),
    ("13C", "[CH3:1]S(C)=O", "13C", 40.76, "G97 DMSO (parent)", None),
    # CH3-X held out of shifts_13c_methyl.csv (SDBS-type spectra, recalled from memory)
    ("13C", "CCC(=O)O[CH3:1]", "13C", 51.5, "SDBS methyl propanoate OCH3", None),
    ("13C", "[CH3:1]C(=O)CC", "13C", 29.4, "SDBS 2-butanone C1", None),
    ("13C", "Cc1ccc(O[CH3:1])cc1", "13C", 55.2, "SDBS 4-methylanisole OCH3", None),
    ("13C", "[CH3:1]c1ccc(C)cc1", "13C", 21.0, "SDBS p-xylene CH3", None),
    ("13C", "N[C:1](N)=S", "13C", 183.0, "SDBS thiourea (DMSO-d6)", None),
    ("13C", "P(c1ccccc1)(c1ccccc1)[c:1]1ccccc1", "13C", 137.2, "SDBS triphenylphosphine ipso", None),
    # ---------------------------------------------------------------- 19F (vs CFCl3)
    ("19F", "[F:1]c1ccccc1", "19F", -113.1, "DOL fluorobenzene (parent)", None),
    ("19F", "[F:1]C(F)(F)c1ccccc1", "19F", -63.7, "DOL benzotrifluoride", None),
    ("19F", "[F:1]C(F)(F)C(=O)O", "19F", -76.5, "DOL trifluoroacetic acid", None),
    ("19F", "Cc1ccc([F:1])cc1", "19F", -118.5, "DOL 4-fluorotoluene", None),
    ("19F", "O=[N+]([O-])c1ccc([F:1])cc1", "19F", -103.0, "DOL 1-fluoro-4-nitrobenzene", None),
    ("19F", "COc1ccc([F:1])cc1", "19F", -124.4, "DOL 4-fluoroanisole (parent)", None),
    ("19F", "Fc1cccc([F:1])c1", "19F", -110.0, "DOL 1,3-difluorobenzene (parent)", None),
    ("19F", "Fc1c(F)c(F)c(F)c(F)c1[F:1]", "19F", -164.9, "DOL hexafluorobenzene", None),
    ("19F", "[F:1]c1cc(F)c(F)c(F)c1F", "19F", -139.0, "DOL pentafluorobenzene F2/F6", None),
    ("19F", "Fc1cc(F)c([F:1])c(F)c1F", "19F", -162.0, "DOL pentafluorobenzene F3/F5", None),
    ("19F", "Fc1cc(F)c(F)c([F:1])c1F", "19F", -154.0, "DOL pentafluorobenzene F4", None),
    ("19F", "OCC([F:1])(F)F", "19F", -77.8, "DOL 2,2,2-trifluoroethanol (parent)", None),
    ("19F", "CCCC[F:1]", "19F", -219.0, "DOL 1-fluorobutane", None),
    ("19F", "O=C([F:1])c1ccccc1", "19F", 17.9, "DOL benzoyl fluoride", None),
    # ---------------------------------------------------------------- 31P (vs 85 % H3PO4)
    ("31P", "c1ccc([P:1](c2ccccc2)c2ccccc2)cc1", "31P", -5.4, "KUHL triphenylphosphine", None),
    ("31P", "CO[P:1](=O)(OC)OC", "31P", 2.1, "KUHL trimethyl phosphate", None),
    ("31P", "CCO[P:1](=O)(OCC)OCC", "31P", -1.0, "KUHL triethyl phosphate", None),
    ("31P", "O=[P:1](c1ccccc1)(c1ccccc1)c1ccccc1", "31P", 29.2, "KUHL triphenylphosphine oxide", None),
    ("31P", "CCO[P:1](OCC)OCC", "31P", 139.0, "KUHL triethyl phosphite", None),
    ("31P", "C[P:1](=O)(OC)OC", "31P", 32.4, "KUHL dimethyl methylphosphonate", None),
    ("31P", "CCO[PH:1](=O)OCC", "31P", 7.8, "KUHL diethyl phosphite", None),
    ("31P", "CN(C)[P:1](=O)(N(C)C)N(C)C", "31P", 23.4, "KUHL HMPA (parent)", None),
    ("31P", "c1ccc([P+:1](c2ccccc2)(c2ccccc2)c2ccccc2)cc1", "31P", 23.0,
     "KUHL tetraphenylphosphonium (parent)", None),
    ("31P", "F[P-:1](F)(F)(F)(F)F", "31P", -144.0, "KUHL hexafluorophosphate (parent)", None),
]

CH_CLASSES = ("alkyl", "alkene", "aromatic", "heteroaromatic", "aldehyde", "alkyne")
# ppm, stated before measuring; "hydride" (H on P, Si, Sn, B) has a wide range per class
BOUNDS = {"13C": 3.5, "19F": 2.0, "31P": 8.0, "labile": 1.0, "hydride": 0.5}


def _prepare(smiles: str, geometry: str | None):
    mol = Chem.AddHs(Chem.MolFromSmiles(smiles))
    if geometry is not None:
        params = AllChem.ETKDGv3()
        params.randomSeed = 0xEC
        assert AllChem.EmbedMolecule(mol, params) == 0
    return mol


def observed_atom(mol, isotope: str, geometry: str | None) -> int:
    """Index of the observed nucleus of a reference entry."""
    heavy = next(a for a in mol.GetAtoms() if a.GetAtomMapNum() == 1)
    if isotope != "1H":
        return heavy.GetIdx()
    hs = [n.GetIdx() for n in heavy.GetNeighbors() if n.GetAtomicNum() == 1]
    if geometry is None:
        return hs[0]
    partner = next(a for a in mol.GetAtoms() if a.GetAtomMapNum() == 2)
    other = next(n for n in heavy.GetNeighbors()
                 if n.GetAtomicNum() == 6 and any(m.GetIdx() == partner.GetIdx()
                                                  for m in n.GetNeighbors()))
    conf = mol.GetConformer()
    for h in hs:
        d = abs(rdMolTransforms.GetDihedralDeg(conf, h, heavy.GetIdx(), other.GetIdx(),
                                               partner.GetIdx()))
        if (d < 90.0) == (geometry == "cis"):
            return h
    raise AssertionError("no H with the requested geometry")


def evaluate(reference=REFERENCE):
    """(class, measured, estimated, basis, source) for every reference entry."""
    out = []
    for cls, smi, iso, ppm, src, geom in reference:
        mol = _prepare(smi, geom)
        est = estimate(mol, observed_atom(mol, iso, geom), iso)
        out.append((cls, ppm, est.ppm, est.basis, src))
    return out


def mae_by_class(rows):
    by: dict[str, list[float]] = {}
    for cls, ppm, est, _, _ in rows:
        by.setdefault(cls, []).append(abs(est - ppm))
    result = {k: (statistics.fmean(v), len(v)) for k, v in by.items()}
    ch = [abs(e - p) for c, p, e, _, _ in rows if c in CH_CLASSES]
    result["1H (C-H classes)"] = (statistics.fmean(ch), len(ch))
    all_h = [abs(e - p) for c, p, e, _, _ in rows if c in CH_CLASSES + ("labile",)]
    result["1H (all incl. labile)"] = (statistics.fmean(all_h), len(all_h))
    np_ = [abs(e - p) for c, p, e, _, s in rows if c in CH_CLASSES and "(parent)" not in s]
    result["1H (C-H, not parent)"] = (statistics.fmean(np_), len(np_))
    return result


@pytest.fixture(scope="module")
def rows():
    return evaluate()


def test_reference_set_size():
    # the issue asks for at least 60 measured shifts
    assert len(REFERENCE) >= 60


def test_1h_mae_ch(rows):
    mae, n = mae_by_class(rows)["1H (C-H classes)"]
    assert mae <= 0.25, f"1H C-H MAE {mae:.3f} ppm over {n} shifts"


def test_1h_mae_polysubstituted(rows):
    # the compounds the increments were not derived from: the real test of additivity
    mae, n = mae_by_class(rows)["1H (C-H, not parent)"]
    assert mae <= 0.25, f"1H C-H MAE (not parent) {mae:.3f} ppm over {n} shifts"


def test_1h_mae_including_labile(rows):
    mae, n = mae_by_class(rows)["1H (all incl. labile)"]
    assert mae <= 0.25, f"1H MAE incl. labile {mae:.3f} ppm over {n} shifts"


@pytest.mark.parametrize("cls", sorted(BOUNDS))
def test_class_bounds(rows, cls):
    mae, n = mae_by_class(rows)[cls]
    assert mae <= BOUNDS[cls], f"{cls} MAE {mae:.2f} ppm over {n} shifts"


def test_each_estimate_has_a_rule(rows):
    for cls, ppm, est, basis, src in rows:
        assert "no rule" not in basis and "no increment" not in basis, (src, basis)


# ---------------------------------------------------------------- interface properties


def _nci_mols():
    path = f"{RDConfig.RDDataDir}/NCI/first_200.props.sdf"
    for m in Chem.SDMolSupplier(path):
        if m is not None:
            m = Chem.AddHs(m)
            m.RemoveAllConformers()
            yield m


_ISO = {1: "1H", 6: "13C", 9: "19F", 15: "31P"}


def test_nci_set_never_raises_and_symmetry_equivalent_atoms_agree():
    # NCI molecule set shipped with RDKit; symmetry classes from RDKit's canonical ranking with
    # ties kept (an independent symmetry perception): equal rank => equal estimate.
    for mol in _nci_mols():
        ranks = list(Chem.CanonicalRankAtoms(mol, breakTies=False, includeChirality=True))
        seen: dict[int, ShiftEstimate] = {}
        for a in mol.GetAtoms():
            iso = _ISO.get(a.GetAtomicNum())
            if iso is None:
                continue
            est = estimate(mol, a.GetIdx(), iso)
            assert isinstance(est.ppm, float) and est.basis
            r = ranks[a.GetIdx()]
            if r in seen:
                assert seen[r] == est, (Chem.MolToSmiles(mol), a.GetIdx())
            seen[r] = est
            assert estimate(mol, a.GetIdx(), iso) == est  # deterministic


def test_other_isotopes_and_wrong_atoms_give_placeholder():
    mol = Chem.AddHs(Chem.MolFromSmiles("C[Si](C)(C)C"))
    si = next(a.GetIdx() for a in mol.GetAtoms() if a.GetSymbol() == "Si")
    assert estimate(mol, si, "29Si").ppm == 0.0
    assert "no rule" in estimate(mol, si, "29Si").basis
    assert "placeholder" in estimate(mol, si, "1H").basis
    assert "placeholder" in estimate(mol, 10_000, "1H").basis


def test_basis_names_the_rule():
    mol = Chem.AddHs(Chem.MolFromSmiles("COc1ccc(Cl)cc1"))
    h = next(n.GetIdx() for n in mol.GetAtomWithIdx(3).GetNeighbors() if n.GetAtomicNum() == 1)
    est = estimate(mol, h, "1H")
    # H ortho to OMe and meta to Cl: 7.26 - 0.48 - 0.02 (benzene increment table)
    assert est.basis == "benzene increments (m-Cl, o-OR)"
    assert est.ppm == pytest.approx(6.76, abs=1e-9)


def test_tables_name_their_source():
    from pathlib import Path

    root = Path(__file__).resolve().parent.parent / "data"
    files = sorted(root.glob("shifts_*.csv"))
    assert files
    for f in files:
        head = "".join(ln for ln in f.read_text(encoding="utf-8").splitlines(True)
                       if ln.startswith("#"))
        assert "Source" in head and "recalled from memory" in head, f.name
