"""Chemical-shift estimates for 1H, 13C, 19F and 31P from published additive methods.

Rules (tables with their sources in ``equivclass.data``, files ``shifts_*.csv``):

* 1H on sp3 carbon: base (CH3 0.86, CH2 1.37, CH 1.50) + alpha increments of the groups on the
  carbon + beta increments of groups on neighbouring sp3 carbons (Shoolery-type additivity, tables
  for CH3/CH2/CH as in Pretsch et al. and Silverstein et al.).
  Carbons with several halogen / oxygen groups, or with fluorine (CHX3, CH2X2, CHX2R, CHF2R, CH2FR,
  acetals) take dedicated values of their parent compounds; other X-CH2-Y with two functional groups
  follow Shoolery's rule (0.23 + sigma X + sigma Y, Shoolery 1959). Methines beside one O / halogen
  group damp the increments of further carbon-type groups, and methines beside one O / N group move
  -0.20 ppm per beta carbon (corrections fitted to recalled shifts, data/shifts_1h_methine.csv).
* 1H on P, Si, B, Sn, Ge: hydride base values by the class of the centre.
* 1H on C=C: 5.25 + Z(gem) + Z(cis) + Z(trans) (Pascual, Meier & Simon 1966).
* 1H on aromatic rings: base value of the ring position (benzene, naphthalene, heteroaromatics)
  + benzene ortho/meta/para increments of the ring substituents.
* Aldehydes, alkynes, imines, labile O-H/N-H/S-H: class base values.
* 13C: Grant-Paul alkane rule + substituent increments, with ring corrections for carbocycles and
  parent values for CH3-X (shifts_13c_methyl.csv); benzene increments; alkene increments;
  carbonyl / nitrile / alkyne base values.
* 19F and 31P: group base values chosen by the atoms bonded to the nucleus; F on benzene rings
  adds ortho (F only), meta and para increments to fluorobenzene (data/shifts_19f_arene.csv).

Every estimate depends only on constitution, bond orders and (for cis/trans on C=C) the double-bond
configuration, so symmetry-equivalent atoms receive equal estimates. Estimates, not measurements.
"""

from __future__ import annotations

from dataclasses import dataclass

from rdkit import Chem
from equivclass.tables import table_rows

__all__ = ["ShiftEstimate", "estimate"]


@dataclass(frozen=True)
class ShiftEstimate:
    """An estimated shift (ppm) and the rule that produced it."""

    ppm: float
    basis: str


# --------------------------------------------------------------------------- tables


def _rows(name: str):
    return table_rows(name)


def _num(s: str | None) -> float | None:
    return float(s) if s not in (None, "") else None


_H_ALKYL = {r["group"]: (float(r["alpha_ch3"]), float(r["alpha_ch2"]), float(r["alpha_ch"]),
                         float(r["beta"])) for r in _rows("shifts_1h_alkyl.csv")}
_H_BETA = {r["group"]: float(r["beta_ch2"]) for r in _rows("shifts_1h_beta.csv")}
_H_ALKENE = {r["group"]: (float(r["gem"]), float(r["cis"]), float(r["trans"]))
             for r in _rows("shifts_1h_alkene.csv")}
_H_BENZENE = {r["group"]: (float(r["ortho"]), float(r["meta"]), float(r["para"]))
              for r in _rows("shifts_1h_benzene.csv")}
_H_BASE = {r["key"]: float(r["shift_ppm"]) for r in _rows("shifts_1h_base.csv")}
_C_ALKANE = {r["param"]: float(r["value"]) for r in _rows("shifts_13c_alkane.csv")}
_C_METHYL = {r["group"]: (float(r["shift_ppm"]), r["note"]) for r in _rows("shifts_13c_methyl.csv")}
_C_SUBST = {}
for _r in _rows("shifts_13c_substituent.csv"):
    _an, _bn = float(_r["alpha_n"]), float(_r["beta_n"])
    _ai, _bi = _num(_r["alpha_iso"]), _num(_r["beta_iso"])
    _C_SUBST[_r["group"]] = (_an, _an if _ai is None else _ai, _bn, _bn if _bi is None else _bi,
                             float(_r["gamma"]))
_C_BENZENE = {r["group"]: (float(r["ipso"]), float(r["ortho"]), float(r["meta"]), float(r["para"]))
              for r in _rows("shifts_13c_benzene.csv")}
_C_BASE = {r["key"]: float(r["shift_ppm"]) for r in _rows("shifts_13c_base.csv")}
_C_ALKENE = {r["group"]: (float(r["z1"]), float(r["z2"])) for r in _rows("shifts_13c_alkene.csv")}
_H_MULTI = {(r["kind"], r["groups"], r["other"], r["ring"]): (float(r["shift_ppm"]), r["note"])
            for r in _rows("shifts_1h_polysubstituted.csv")}
_H_SHOOLERY = {r["group"]: float(r["sigma"]) for r in _rows("shifts_1h_shoolery.csv")}
_H_METHINE_DAMP = {r["group"]: float(r["value"]) for r in _rows("shifts_1h_methine.csv") if r["rule"] == "damp"}
_H_METHINE_DAMP_N = {r["group"]: float(r["value"]) for r in _rows("shifts_1h_methine.csv") if r["rule"] == "damp_n"}
_H_METHINE_DAMP_ARYL = {r["group"]: float(r["value"]) for r in _rows("shifts_1h_methine.csv")
                        if r["rule"] == "damp_aryl"}
_H_METHINE_BETA_C = next(float(r["value"]) for r in _rows("shifts_1h_methine.csv") if r["rule"] == "beta_carbon")
_F_BASE = {r["key"]: float(r["shift_ppm"]) for r in _rows("shifts_19f.csv")}
_F_ARENE = {r["group"]: tuple(float(r[k]) if r[k] else None for k in ("ortho", "meta", "para"))
            for r in _rows("shifts_19f_arene.csv")}
_P_BASE = {r["key"]: float(r["shift_ppm"]) for r in _rows("shifts_31p.csv")}

# A fine group class falls back to a coarser one when a table has no row for it (rule logic).
_FALLBACK = {
    "CH3": "alkyl", "tBu": "alkyl", "CH2O": "alkyl", "CH2N": "alkyl", "CH2S": "alkyl",
    "CH2Cl": "alkyl", "CH2I": "CH2Cl", "CH2Ar": "alkyl", "CH2C=O": "alkyl", "alkyl-ring": "alkyl",
    "NH2": "NR2", "NAr": "NR2", "OAr": "OR", "OC(O)Ar": "OC(O)R", "C(O)Ar": "C(O)R",
    "COO-": "COOH", "O-": "OH", "SO2Cl": "SO2R", "P+": "P", "P(O)": "P", "C=N": "alkenyl",
    "OP": "OC(O)R", "OS": "OC(O)R", "OSi": "OR", "NSO2": "NC(O)R",
    "N+ar5": "N+ar", "N=N": "N=C", "N=": "N=C", "C(O)N": "COOR",
}

_UNSATURATED = {"aryl", "alkenyl", "alkynyl", "C(O)R", "C(O)Ar", "CHO", "COOR", "COOH", "C(O)N",
                "CN", "COCl", "NO2"}


def _lookup(table: dict, key: str):
    k = key
    while k is not None:
        if k in table:
            return k, table[k]
        k = _FALLBACK.get(k)
    return None, None


# --------------------------------------------------------------------------- group classes


def _is_h(atom) -> bool:
    return atom.GetAtomicNum() == 1


def _bond_order(mol, i: int, j: int) -> float:
    b = mol.GetBondBetweenAtoms(i, j)
    return b.GetBondTypeAsDouble() if b is not None else 0.0


def _is_sp3_carbon(atom) -> bool:
    if atom.GetAtomicNum() != 6 or atom.GetIsAromatic():
        return False
    return all(b.GetBondType() == Chem.BondType.SINGLE for b in atom.GetBonds())


def _has_double_o(mol, atom, exclude: int = -1) -> bool:
    for b in atom.GetBonds():
        o = b.GetOtherAtom(atom)
        if o.GetIdx() != exclude and o.GetAtomicNum() == 8 and b.GetBondType() == Chem.BondType.DOUBLE:
            return True
    return False


def _carbonyl_class(mol, a, t: int) -> str:
    """Class of an acyl group C(=O)X attached through its carbon ``a`` to atom ``t``."""
    others = [n for n in a.GetNeighbors() if n.GetIdx() != t
              and not (n.GetAtomicNum() == 8 and _bond_order(mol, a.GetIdx(), n.GetIdx()) == 2.0)]
    if not others or all(_is_h(n) for n in others):
        return "CHO"
    x = others[0]
    z = x.GetAtomicNum()
    if z == 8:
        if x.GetFormalCharge() < 0:
            return "COO-"
        return "COOH" if any(_is_h(n) for n in x.GetNeighbors()) else "COOR"
    if z == 7:
        return "C(O)N"
    if z == 17:
        return "COCl"
    if z == 6:
        return "C(O)Ar" if x.GetIsAromatic() else "C(O)R"
    return "C(O)R"


def _group(mol, a, t: int) -> str:
    """Substituent class of the group entered through atom ``a`` from atom index ``t``."""
    z = a.GetAtomicNum()
    ai = a.GetIdx()
    if z == 1:
        return "H"
    if z in (9, 17, 35, 53):
        return {9: "F", 17: "Cl", 35: "Br", 53: "I"}[z]
    if z == 6:
        if a.GetIsAromatic():
            return "aryl"
        nbrs = [n for n in a.GetNeighbors() if n.GetIdx() != t]
        for b in a.GetBonds():
            o = b.GetOtherAtom(a)
            if b.GetBondType() == Chem.BondType.TRIPLE:
                return "CN" if o.GetAtomicNum() == 7 else "alkynyl"
        if _has_double_o(mol, a):
            return _carbonyl_class(mol, a, t)
        for b in a.GetBonds():
            if b.GetBondType() == Chem.BondType.DOUBLE:
                return "C=N" if b.GetOtherAtom(a).GetAtomicNum() == 7 else "alkenyl"
        # sp3 carbon: refine by what it carries
        zs = [n.GetAtomicNum() for n in nbrs]
        if zs.count(9) == 3:
            return "CF3"
        nh = zs.count(1)
        if nh == 3:
            return "CH3"
        heavy = [n for n in nbrs if not _is_h(n)]
        if nh == 0 and len(heavy) == 3 and all(_is_sp3_carbon(n) for n in heavy):
            return "tBu"
        for n in heavy:
            if n.GetAtomicNum() == 8:
                return "CH2O"
        for n in heavy:
            if n.GetAtomicNum() == 7:
                return "CH2N"
        for n in heavy:
            if n.GetAtomicNum() == 16:
                return "CH2S"
        for n in heavy:
            if n.GetAtomicNum() in (17, 35):
                return "CH2Cl"
            if n.GetAtomicNum() == 53:
                return "CH2I"
        for n in heavy:
            if n.GetIsAromatic():
                return "CH2Ar"
        for n in heavy:
            g = _group(mol, n, ai) if n.GetAtomicNum() == 6 and not _is_sp3_carbon(n) else ""
            if g in ("C(O)R", "C(O)Ar", "CHO", "COOR", "COOH", "C(O)N", "CN", "COO-"):
                return "CH2C=O"
        return "alkyl"
    if z == 8:
        if a.GetFormalCharge() < 0:
            return "O-"
        nbrs = [n for n in a.GetNeighbors() if n.GetIdx() != t]
        if any(_is_h(n) for n in nbrs):
            return "OH"
        x = next((n for n in nbrs), None)
        if x is None:
            return "O-"
        zx = x.GetAtomicNum()
        if zx == 6:
            if x.GetIsAromatic():
                return "OAr"
            if _has_double_o(mol, x):
                cls = _carbonyl_class(mol, x, ai)
                return "OC(O)Ar" if cls == "C(O)Ar" else "OC(O)R"
            return "OR"
        if zx == 15:
            return "OP"
        if zx == 16:
            return "OS"
        if zx == 14:
            return "OSi"
        return "OR"
    if z == 7:
        nbrs = [n for n in a.GetNeighbors() if n.GetIdx() != t]
        if sum(1 for n in nbrs if n.GetAtomicNum() == 8) >= 2:
            return "NO2"
        if a.GetFormalCharge() > 0 and a.GetDegree() == 4:
            return "N+"
        if a.GetIsAromatic():
            if a.GetFormalCharge() > 0:
                five = a.IsInRingSize(5)
                return "N+ar5" if five else "N+ar"
            return "Nar"
        for b in a.GetBonds():
            if b.GetBondType() == Chem.BondType.DOUBLE:
                zo = b.GetOtherAtom(a).GetAtomicNum()
                if zo == 6:
                    return "N=C"
                if zo == 7:
                    return "N=N"
        if any(b.GetBondType() != Chem.BondType.SINGLE for b in a.GetBonds()):
            return "N="
        for n in nbrs:
            if n.GetAtomicNum() == 6 and _has_double_o(mol, n):
                return "NC(O)R"
            if n.GetAtomicNum() == 16 and _has_double_o(mol, n):
                return "NSO2"
        if any(n.GetIsAromatic() for n in nbrs):
            return "NAr"
        if sum(1 for n in nbrs if _is_h(n)) == 2:
            return "NH2"
        return "NR2"
    if z == 16:
        ndo = sum(1 for b in a.GetBonds() if b.GetBondType() == Chem.BondType.DOUBLE
                  and b.GetOtherAtom(a).GetAtomicNum() == 8)
        if ndo >= 2 or (ndo == 1 and a.GetDegree() == 4):
            if any(n.GetAtomicNum() == 17 for n in a.GetNeighbors()):
                return "SO2Cl"
            return "SO2R"
        if ndo == 1 or (a.GetFormalCharge() > 0 and a.GetDegree() == 3):
            return "S(O)R"
        if any(_is_h(n) for n in a.GetNeighbors()):
            return "SH"
        return "SR"
    if z == 15:
        if a.GetFormalCharge() > 0:
            return "P+"
        if _has_double_o(mol, a) or any(n.GetAtomicNum() == 8 and n.GetFormalCharge() < 0
                                        for n in a.GetNeighbors()):
            return "P(O)"
        return "P"
    if z == 14:
        return "Si"
    return a.GetSymbol()


def _fmt(keys: list[str]) -> str:
    return ", ".join(sorted(keys))


# --------------------------------------------------------------------------- 1H rules


_HETERO_CLASS = {"F": "F", "Cl": "Cl", "Br": "Br", "I": "I", "OH": "OR", "OR": "OR", "OSi": "OR",
                 "OAr": "OAr", "OC(O)R": "OCOR", "OC(O)Ar": "OCOR"}
_ACYL = {"CHO", "C(O)R", "C(O)Ar", "COOR", "COOH", "C(O)N", "COO-", "COCl"}


def _h_multi(mol, c, kind: str, heavy: list) -> ShiftEstimate | None:
    """Dedicated value for CHX3, CH2X2, CHX2R, CH2FR (table), or Shoolery's X-CH2-Y form."""
    ci = c.GetIdx()
    groups = [_group(mol, a, ci) for a in heavy]
    het = sorted(_HETERO_CLASS[g] for g in groups if g in _HETERO_CLASS)
    if len(het) >= 2 or "F" in het:
        rest = [(a, g) for a, g in zip(heavy, groups) if g not in _HETERO_CLASS]
        other = ""
        if len(rest) == 1:
            a, g = rest[0]
            other = ("alkyl" if _is_sp3_carbon(a) else "aryl" if g == "aryl"
                     else "C=O" if g in _ACYL else g)
        if len(rest) <= 1:
            ri = mol.GetRingInfo()
            ring = "ring5" if ri.IsAtomInRingOfSize(ci, 5) else "ring6" if ri.IsAtomInRingOfSize(ci, 6) else ""
            key = ",".join(het)
            for rk in ((ring, "") if ring else ("",)):
                hit = _H_MULTI.get((kind, key, other, rk))
                if hit is not None:
                    what = f"{key}" + (f" + {other}" if other else "") + (f", {rk}" if rk else "")
                    return ShiftEstimate(hit[0], f"{kind}: dedicated value for {what} ({hit[1]})")
    if kind == "CH2" and len(heavy) == 2 and het and not any(
            _is_sp3_carbon(a) and g != "CF3" for a, g in zip(heavy, groups)):
        sig = [_lookup(_H_SHOOLERY, g) for g in groups]
        if all(v is not None for _, v in sig) and "F" not in het:
            names = _fmt([k for k, _ in sig])
            return ShiftEstimate(round(_H_BASE["CH4"] + sig[0][1] + sig[1][1], 2),
                                 f"CH2: Shoolery's rule for X-CH2-Y ({names})")
    return None


def _h_sp3(mol, c) -> ShiftEstimate:
    ci = c.GetIdx()
    heavy = [n for n in c.GetNeighbors() if not _is_h(n)]
    nh = c.GetTotalNumHs(includeNeighbors=True)
    if nh == 4 or (not heavy and nh >= 3):
        return ShiftEstimate(_H_BASE["CH4"], "methane base value")
    kind = {3: "CH3", 2: "CH2"}.get(nh, "CH")
    if kind != "CH3":
        hit = _h_multi(mol, c, kind, heavy)
        if hit is not None:
            return hit
    col = {"CH3": 0, "CH2": 1, "CH": 2}[kind]
    terms: list[float] = [_H_BASE[kind]]
    alphas: list[tuple[str, float, object]] = []
    betas: list[tuple[str, float]] = []
    beta_names: list[str] = []
    missing: list[str] = []
    for a in heavy:
        g = _group(mol, a, ci)
        if g == "alkenyl" and _conjugated_alkene_carbon(mol, a):
            g = "alkenyl-conj"
        k, row = _lookup(_H_ALKYL, g)
        if row is None:
            missing.append(g)
            continue
        alphas.append((k, row[col], a))
        if k == "alkyl":  # beta increments through an sp3 carbon neighbour
            ai = a.GetIdx()
            for b in a.GetNeighbors():
                if b.GetIdx() == ci or _is_h(b):
                    continue
                gb = _group(mol, b, ai)
                kb, rowb = _lookup(_H_ALKYL, gb)
                if rowb is None:
                    missing.append(gb)
                    continue
                if kb != "alkyl":
                    betas.append((kb, rowb[3]))
    functional_here = any(k in _BETA_DAMPED_GROUPS for k, _, _ in alphas)   # groups already classed above
    for kb, v in betas:
        if kind != "CH3":
            v = _beta_smaller_carbon(kb, v, functional_here)
        terms.append(v)
        beta_names.append(kb)
    methine = _methine_corrections(mol, c, alphas) if kind == "CH" and not missing else None
    alpha_names = [k for k, _, _ in alphas if k != "alkyl"]
    if methine is None:
        terms.extend(v for _, v, _ in alphas)
    else:
        terms.extend(methine[0])
    ring = ""
    ri = mol.GetRingInfo()
    if ri.IsAtomInRingOfSize(ci, 3):
        terms.append(_H_BASE["ring3"])
        ring = "; three-membered ring"
    elif ri.IsAtomInRingOfSize(ci, 4):
        terms.append(_H_BASE["ring4"])
        ring = "; four-membered ring"
    elif ri.IsAtomInRingOfSize(ci, 5):
        beside_co = any(_has_double_o(mol, n) and any(len(r) == 5 and ci in r and n.GetIdx() in r
                                                      for r in ri.AtomRings()) for n in heavy)
        terms.append(_H_BASE["ring5-alpha-carbonyl" if beside_co else "ring5"])
        ring = "; five-membered ring" + (", beside its C=O" if beside_co else "")
    parts = []
    if alpha_names:
        parts.append(_fmt(alpha_names))
    if beta_names:
        parts.append("beta " + _fmt(beta_names))
    detail = "; ".join(parts) if parts else "alkyl only"
    note = f"; no increment for {_fmt(missing)}" if missing else ""
    if methine is not None:
        note += "; " + methine[1]
    return ShiftEstimate(_sum(terms), f"{kind}: Shoolery-type increments ({detail}){ring}{note}")


_BETA_DAMPED_GROUPS = {"OH", "OR", "OAr", "OC(O)R", "OC(O)Ar", "OP", "OS", "NR2", "NAr", "NC(O)R", "NO2",
                       "F", "Cl", "Br", "I"}


def _beta_smaller_carbon(key: str, ch3_value: float, functional_here: bool) -> float:
    """Beta increment on a CH2 or CH (data/shifts_1h_beta.csv): the calibrated CH2 value, else the mean
    ratio times the CH3 value; an O/N/halogen beta group beside a carbon that carries one itself adds
    only the damped value."""
    if functional_here and key in _BETA_DAMPED_GROUPS:
        return _H_BETA["ON_FUNCTIONAL_CARBON"]
    return _H_BETA.get(key, _H_BETA["RATIO"] * ch3_value)


_METHINE_STRONG = {"OH", "OR", "OAr", "OC(O)R", "OC(O)Ar", "Cl", "Br", "I"}
_METHINE_BETA_GROUPS = {"OH", "OR", "OAr", "OC(O)R", "OC(O)Ar", "NR2", "NAr", "NC(O)R"}


def _methine_class(key: str) -> str:
    return "acyl" if key in _ACYL else key


def _methine_corrections(mol, c, alphas) -> tuple[list[float], str] | None:
    """Alpha terms of a methine with the corrections of data/shifts_1h_methine.csv (saturation of a
    carbon-type group beside one O / heavy-halogen group; beta-carbon shielding beside one O / N group),
    and their note; None where neither applies."""
    ci = c.GetIdx()
    functional = [k for k, _, _ in alphas if k != "alkyl"]
    hetero = [k for k in functional if k in _METHINE_STRONG or k in _METHINE_BETA_GROUPS]
    if not hetero and functional.count("aryl") == 1 and len(functional) == 2:
        other = next(k for k in functional if k != "aryl")
        f = _H_METHINE_DAMP_ARYL.get(_methine_class(other))
        if f is None:
            return None
        out = [v * f if k == other else v for k, v, _ in alphas]
        return out, f"methine saturation beside aryl ({other} x{f:g})"
    if len(hetero) != 1:
        return None
    carbon_type = [k for k in functional if k != hetero[0]]
    notes, out = [], [v for _, v, _ in alphas]
    table = _H_METHINE_DAMP if hetero[0] in _METHINE_STRONG else _H_METHINE_DAMP_N
    if carbon_type and all(_methine_class(k) in table for k in carbon_type):
        damped = []
        for i, (k, v, _) in enumerate(alphas):
            if k in carbon_type:
                f = table[_methine_class(k)]
                out[i] = v * f
                damped.append(f"{k} x{f:g}")
        notes.append(f"methine saturation beside {hetero[0]} ({', '.join(damped)})")
    elif carbon_type:
        return None
    if hetero[0] in _METHINE_BETA_GROUPS and \
            not any(mol.GetRingInfo().IsAtomInRingOfSize(ci, n) for n in (3, 4, 5)):
        n_beta = sum(1 for k, _, a in alphas if k == "alkyl"
                     for b in a.GetNeighbors() if b.GetIdx() != ci and b.GetAtomicNum() == 6)
        if n_beta:
            out.append(_H_METHINE_BETA_C * min(n_beta, 4))
            notes.append(f"{n_beta} beta carbon{'s' if n_beta > 1 else ''}, {_H_METHINE_BETA_C:+.2f} each")
    return (out, "; ".join(notes)) if notes else None


def _conjugated_alkene_carbon(mol, a) -> bool:
    """True when the C=C that carbon `a` belongs to carries a C=O or C≡N on either end (enone, enal,
    enoate, acrylonitrile)."""
    partner = next((b.GetOtherAtom(a) for b in a.GetBonds()
                    if b.GetBondType() == Chem.BondType.DOUBLE and not b.GetIsAromatic()), None)
    if partner is None or partner.GetAtomicNum() != 6:
        return False
    for end in (a, partner):
        for n in end.GetNeighbors():
            if n.GetIdx() in (a.GetIdx(), partner.GetIdx()) or n.GetAtomicNum() != 6:
                continue
            if _has_double_o(mol, n) or any(b.GetBondType() == Chem.BondType.TRIPLE for b in n.GetBonds()):
                return True
    return False


def _sum(terms: list[float]) -> float:
    return round(sum(sorted(terms)), 2)


def _cis(mol, h: int, c1, c2, s: int, bond) -> bool | None:
    """True if atom ``s`` on ``c2`` is cis to atom ``h`` on ``c1`` across the double bond c1=c2."""
    c1i, c2i = c1.GetIdx(), c2.GetIdx()
    ri = mol.GetRingInfo()
    # small rings fix the geometry: ring neighbours of both ends are cis to each other
    if bond.IsInRing():
        for ring in ri.AtomRings():
            if len(ring) <= 7 and c1i in ring and c2i in ring:
                s_in = s in ring
                h_in = h in ring
                if s_in != h_in:
                    return False
                if s_in and h_in:
                    return True
    st = bond.GetStereo()
    if st in (Chem.BondStereo.STEREOZ, Chem.BondStereo.STEREOE, Chem.BondStereo.STEREOCIS,
              Chem.BondStereo.STEREOTRANS):
        sa = list(bond.GetStereoAtoms())
        if len(sa) == 2:
            same = st in (Chem.BondStereo.STEREOZ, Chem.BondStereo.STEREOCIS)
            if bond.GetBeginAtomIdx() != c1i:
                sa = [sa[1], sa[0]]
            flip = (h != sa[0]) ^ (s != sa[1])
            return same ^ flip
    if mol.GetNumConformers():
        from rdkit.Chem import rdMolTransforms
        conf = mol.GetConformer()
        try:
            d = rdMolTransforms.GetDihedralDeg(conf, h, c1i, c2i, s)
        except (RuntimeError, ValueError):
            return None
        if (conf.GetAtomPosition(c1i) - conf.GetAtomPosition(c2i)).Length() < 0.1:
            return None  # no usable coordinates
        return abs(d) < 90.0
    return None


def _alkene_group(mol, a, t: int, c1, c2, other_keys: list[str]) -> str:
    g = _group(mol, a, t)
    if g in ("CH3", "alkyl", "tBu"):
        ri = mol.GetRingInfo()
        if ri.NumAtomRings(a.GetIdx()) and any(
                a.GetIdx() in r and c1.GetIdx() in r and c2.GetIdx() in r for r in ri.AtomRings()):
            return "alkyl-ring"
    if g in ("alkenyl", "C(O)R", "C(O)Ar", "COOH", "COOR", "OR", "NR2", "NAr", "NH2"):
        if any(k in _UNSATURATED for k in other_keys):
            base = _lookup(_H_ALKENE, g)[0] or g
            if base + "-conj" in _H_ALKENE:
                return base + "-conj"
    return g


def _h_alkene(mol, h: int, c1, c2, bond) -> ShiftEstimate:
    c1i, c2i = c1.GetIdx(), c2.GetIdx()
    gem = [n for n in c1.GetNeighbors() if n.GetIdx() not in (h, c2i)]
    far = [n for n in c2.GetNeighbors() if n.GetIdx() != c1i]
    gem_idx = {n.GetIdx() for n in gem}
    raw = {n.GetIdx(): _group(mol, n, c1i if n.GetIdx() in gem_idx else c2i) for n in gem + far}
    terms = [_H_BASE["alkene"]]
    names: list[str] = []
    missing: list[str] = []
    unresolved = False
    for n in gem + far:
        others = [raw[m.GetIdx()] for m in gem + far if m.GetIdx() != n.GetIdx()]
        on_c1 = n.GetIdx() in gem_idx
        g = _alkene_group(mol, n, c1i if on_c1 else c2i, c1, c2, others)
        if g == "H":
            continue
        k, row = _lookup(_H_ALKENE, g)
        if row is None:
            missing.append(g)
            continue
        if on_c1:
            terms.append(row[0])
            names.append(f"gem-{k}")
            continue
        cis = _cis(mol, h, c1, c2, n.GetIdx(), bond)
        if cis is None:
            unresolved = True
            terms.append((row[1] + row[2]) / 2.0)
            names.append(f"cis/trans-{k}")
        else:
            terms.append(row[1] if cis else row[2])
            names.append(("cis-" if cis else "trans-") + k)
    note = "; cis/trans not resolved, mean used" if unresolved else ""
    if missing:
        note += f"; no increment for {_fmt(missing)}"
    detail = _fmt(names) if names else "none"
    return ShiftEstimate(_sum(terms), f"alkene: Pascual-Meier-Simon increments ({detail}){note}")


# aromatic rings ------------------------------------------------------------


def _ring_symbol(mol, atom, ring: tuple[int, ...]) -> str:
    z = atom.GetAtomicNum()
    if z == 6:
        ri = mol.GetRingInfo()
        for b in atom.GetBonds():
            o = b.GetOtherAtomIdx(atom.GetIdx())
            if o not in ring and b.IsInRing() and mol.GetAtomWithIdx(o).GetIsAromatic():
                # fused to another aromatic ring: size of the smallest aromatic ring through that bond
                sizes = [len(r) for r in ri.AtomRings()
                         if o in r and atom.GetIdx() in r and r != ring]
                return "g" if sizes and min(sizes) == 5 else "f"
        return "c"
    if z == 7:
        return "N" if atom.GetDegree() == 3 else "n"
    return atom.GetSymbol().lower()


def _ring_key(mol, ci: int, ring: tuple[int, ...]) -> str:
    n = len(ring)
    p = ring.index(ci)
    fwd = [ring[(p + k) % n] for k in range(n)]
    rev = [ring[(p - k) % n] for k in range(n)]
    sym = {i: _ring_symbol(mol, mol.GetAtomWithIdx(i), ring) for i in ring}
    return min("".join(sym[i] for i in fwd), "".join(sym[i] for i in rev))


def _aromatic_ring(mol, ci: int):
    rings = [r for r in mol.GetRingInfo().AtomRings()
             if ci in r and all(mol.GetAtomWithIdx(i).GetIsAromatic() for i in r)]
    if len(rings) < 2:
        return rings[0] if rings else None
    rings.sort(key=lambda r: (len(r), _ring_key(mol, ci, r)))
    return rings[0]


def _build_ring_table() -> dict[str, tuple[str, float, float]]:
    table: dict[str, tuple[str, float, float]] = {}
    for r in _rows("shifts_aromatic_rings.csv"):
        m = Chem.AddHs(Chem.MolFromSmiles(r["smiles"]))
        idx = next(a.GetIdx() for a in m.GetAtoms() if a.GetAtomMapNum() == 1)
        for a in m.GetAtoms():
            a.SetAtomMapNum(0)
        ring = _aromatic_ring(m, idx)
        h = float(r["shift_1h"]) if r["shift_1h"] else None
        table[_ring_key(m, idx, ring)] = (r["name"], h, float(r["shift_13c"]))
    return table


_RINGS = _build_ring_table()


def _ring_substituents(mol, ci: int, ring: tuple[int, ...]):
    """(distance along ring, group class) for every non-H, non-fused substituent of the ring."""
    n = len(ring)
    p = ring.index(ci)
    out = []
    for k, ri_ in enumerate(ring):
        d = min((k - p) % n, (p - k) % n)
        atom = mol.GetAtomWithIdx(ri_)
        for b in atom.GetBonds():
            o = b.GetOtherAtom(atom)
            if o.GetIdx() in ring or _is_h(o):
                continue
            if b.IsInRing() and o.GetIsAromatic():
                continue  # fused aromatic ring: part of the ring base value
            if o.GetAtomicNum() == 8 and b.GetBondType() == Chem.BondType.DOUBLE:
                continue
            out.append((d, _group(mol, o, ri_)))
    return out


_POS = {1: "o", 2: "m", 3: "p"}


def _aromatic(mol, ci: int, isotope: str) -> ShiftEstimate:
    ring = _aromatic_ring(mol, ci)
    key = _ring_key(mol, ci, ring)
    hit = _RINGS.get(key)
    if hit is None:
        name, base = "benzene (ring type not tabulated)", (_RINGS["cccccc"][1], _RINGS["cccccc"][2])
    else:
        name, base = hit[0], (hit[1], hit[2])
    table = _H_BENZENE if isotope == "1H" else _C_BENZENE
    terms = [base[0] if isotope == "1H" else base[1]]
    names: list[str] = []
    missing: list[str] = []
    for d, g in _ring_substituents(mol, ci, ring):
        if isotope == "1H" and d == 0:
            continue
        k, row = _lookup(table, g)
        if row is None:
            missing.append(g)
            continue
        if isotope == "1H":
            terms.append(row[d - 1])
            names.append(f"{_POS[d]}-{k}")
        else:
            terms.append(row[d])
            names.append(f"{'i' if d == 0 else _POS[d]}-{k}")
    what = "benzene increments" if name == "benzene" else f"{name} base value + benzene increments"
    detail = f" ({_fmt(names)})" if names else ""
    if not names:
        what = f"{name} base value"
    note = f"; no increment for {_fmt(missing)}" if missing else ""
    return ShiftEstimate(_sum(terms), f"{what}{detail}{note}")


# other 1H classes ----------------------------------------------------------


def _base(key: str, basis: str) -> ShiftEstimate:
    return ShiftEstimate(_H_BASE[key], basis)


def _h_aldehyde(mol, c) -> ShiftEstimate:
    ci = c.GetIdx()
    others = [n for n in c.GetNeighbors() if not _is_h(n)
              and not (n.GetAtomicNum() == 8 and _bond_order(mol, ci, n.GetIdx()) == 2.0)]
    if not others:
        return _base("formaldehyde", "formaldehyde base value")
    x = others[0]
    if x.GetAtomicNum() == 8:
        return _base("formate", "formate H-C(=O)O base value")
    if x.GetAtomicNum() == 7:
        return _base("formamide", "formamide H-C(=O)N base value")
    if x.GetIsAromatic():
        return _base("aldehyde-aryl", "aromatic aldehyde base value")
    g = _group(mol, x, ci)
    if g in ("alkenyl", "alkynyl"):
        return _base("aldehyde-conj", "conjugated aldehyde base value")
    return _base("aldehyde-alkyl", "aliphatic aldehyde base value")


def _h_labile(mol, x) -> ShiftEstimate:
    z = x.GetAtomicNum()
    heavy = [n for n in x.GetNeighbors() if not _is_h(n)]
    if z == 8:
        if not heavy:
            return _base("water", "water base value (CDCl3)")
        y = heavy[0]
        if y.GetAtomicNum() == 6:
            if _has_double_o(mol, y):
                return _base("OH-acid", "labile O-H base value (carboxylic acid)")
            if y.GetIsAromatic():
                return _base("OH-phenol", "labile O-H base value (phenol)")
            if any(b.GetBondType() == Chem.BondType.DOUBLE for b in y.GetBonds()):
                return _base("OH-enol", "labile O-H base value (enol)")
            return _base("OH-alcohol", "labile O-H typical value (alcohol, dilute CDCl3; "
                                       "concentration dependent)")
        if y.GetAtomicNum() == 7:
            return _base("OH-oxime", "labile O-H base value (oxime / N-OH)")
        if y.GetAtomicNum() in (15, 16):
            return _base("OH-oxyacid", "labile O-H base value (P/S oxyacid)")
        return _base("OH-alcohol", "labile O-H base value (alcohol)")
    if z == 7:
        if x.GetFormalCharge() > 0:
            return _base("NH-ammonium", "labile N-H base value (ammonium)")
        if x.GetIsAromatic():
            return _base("NH-heteroaromatic", "labile N-H base value (pyrrole-type)")
        acyl = [n for n in heavy if n.GetAtomicNum() == 6 and _has_double_o(mol, n)]
        if acyl:
            if any(n.GetIsAromatic() for n in heavy):
                return _base("NH-anilide", "labile N-H base value (N-aryl amide)")
            return _base("NH-amide", "labile N-H base value (amide)")
        if any(n.GetAtomicNum() == 16 and _has_double_o(mol, n) for n in heavy):
            return _base("NH-sulfonamide", "labile N-H base value (sulfonamide)")
        if any(n.GetIsAromatic() for n in heavy):
            return _base("NH-arylamine", "labile N-H base value (aromatic amine)")
        return _base("NH-amine", "labile N-H base value (aliphatic amine)")
    if z == 16:
        if any(n.GetIsAromatic() for n in heavy):
            return _base("SH-aryl", "labile S-H base value (arenethiol)")
        return _base("SH-alkyl", "labile S-H base value (alkanethiol)")
    return _NO_RULE


def _h_alkyne(mol, c, partner) -> ShiftEstimate:
    far = [n for n in partner.GetNeighbors() if n.GetIdx() != c.GetIdx()]
    if not far or _is_h(far[0]):
        return _base("alkyne-H", "acetylene base value")
    g = _group(mol, far[0], partner.GetIdx())
    if g == "aryl":
        return _base("alkyne-aryl", "aryl-C#C-H base value")
    if g in ("C(O)R", "C(O)Ar", "CHO", "COOR", "COOH", "C(O)N"):
        return _base("alkyne-conj", "acyl-C#C-H base value")
    if _is_sp3_carbon(far[0]) and any(n.GetAtomicNum() in (7, 8, 9, 17, 35, 53) for n in far[0].GetNeighbors()):
        return _base("alkyne-propargyl-X", "propargylic X-C-C#C-H base value")
    return _base("alkyne-alkyl", "alkyl-C#C-H base value")


def _n_aryl(atom) -> int:
    return sum(1 for n in atom.GetNeighbors() if n.GetIsAromatic())


def _h_on_p(mol, p) -> ShiftEstimate:
    if p.GetFormalCharge() > 0 and p.GetDegree() == 4:
        return _base("PH-phosphonium", "P-H base value (phosphonium)")
    oxo = _has_double_o(mol, p) or any(n.GetAtomicNum() == 8 and n.GetFormalCharge() < 0
                                       and n.GetDegree() == 1 for n in p.GetNeighbors())
    heavy = [n for n in p.GetNeighbors() if not _is_h(n)]
    if oxo:
        single_o = sum(1 for n in heavy if n.GetAtomicNum() == 8
                       and _bond_order(mol, p.GetIdx(), n.GetIdx()) == 1.0 and n.GetFormalCharge() == 0)
        carbons = [n for n in heavy if n.GetAtomicNum() == 6]
        if single_o >= 2:
            return _base("PH-phosphonate", "P-H base value (H-phosphonate)")
        if single_o == 1 and carbons:
            return _base("PH-phosphinate", "P-H base value (H-phosphinate)")
        if len(carbons) == 2:
            if _n_aryl(p):
                return _base("PH-phosphine-oxide-aryl", "P-H base value (diaryl phosphine oxide)")
            return _base("PH-phosphine-oxide-alkyl", "P-H base value (dialkyl phosphine oxide)")
        return _base("PH-other-PV", "P-H base value (other P(V)-H)")
    if not heavy:
        return _base("PH3", "P-H base value (PH3)")
    nar = _n_aryl(p)
    if nar >= 2:
        return _base("PH-phosphine-aryl2", "P-H base value (diarylphosphine)")
    if nar == 1:
        return _base("PH-phosphine-aryl1", "P-H base value (arylphosphine)")
    return _base("PH-phosphine-alkyl", "P-H base value (alkylphosphine)")


def _h_on_si(mol, si) -> ShiftEstimate:
    if any(n.GetAtomicNum() == 8 for n in si.GetNeighbors()):
        return _base("SiH-O", "Si-H base value (alkoxy/siloxy silane)")
    nar = min(_n_aryl(si), 3)
    if nar:
        return _base(f"SiH-aryl{nar}", f"Si-H base value ({nar} aryl on Si)")
    return _base("SiH-alkyl", "Si-H base value (alkylsilane)")


def _h_on_b(mol, b) -> ShiftEstimate:
    if b.GetDegree() >= 4 or b.GetFormalCharge() < 0:
        return _base("BH-tetracoordinate", "B-H base value (borohydride / borane adduct; broad)")
    return _base("BH-tricoordinate", "B-H base value (three-coordinate borane; broad)")


def _h_on_group14(key: str, what: str):
    def rule(mol, x) -> ShiftEstimate:
        if _n_aryl(x):
            return _base(f"{key}-aryl", f"{what}-H base value (arylmetal hydride)")
        return _base(f"{key}-alkyl", f"{what}-H base value (alkylmetal hydride)")
    return rule


_HYDRIDE = {15: _h_on_p, 14: _h_on_si, 5: _h_on_b, 50: _h_on_group14("SnH", "Sn"),
            32: _h_on_group14("GeH", "Ge")}


def _estimate_1h(mol, h) -> ShiftEstimate:
    nbrs = list(h.GetNeighbors())
    if len(nbrs) != 1:
        return _NO_RULE
    x = nbrs[0]
    z = x.GetAtomicNum()
    if z in (7, 8, 16):
        return _h_labile(mol, x)
    if z in _HYDRIDE:
        return _HYDRIDE[z](mol, x)
    if z != 6:
        return _NO_RULE
    if x.GetIsAromatic():
        return _aromatic(mol, x.GetIdx(), "1H")
    if _is_sp3_carbon(x):
        return _h_sp3(mol, x)
    doubles = [b for b in x.GetBonds() if b.GetBondType() == Chem.BondType.DOUBLE]
    triples = [b for b in x.GetBonds() if b.GetBondType() == Chem.BondType.TRIPLE]
    if triples:
        p = triples[0].GetOtherAtom(x)
        return _h_alkyne(mol, x, p) if p.GetAtomicNum() == 6 else _NO_RULE
    if len(doubles) == 1:
        b = doubles[0]
        p = b.GetOtherAtom(x)
        if p.GetAtomicNum() == 8:
            return _h_aldehyde(mol, x)
        if p.GetAtomicNum() == 7:
            return _base("imine", "imine CH=N base value")
        if p.GetAtomicNum() == 6:
            if any(pb.GetBondType() == Chem.BondType.DOUBLE and pb.GetIdx() != b.GetIdx()
                   for pb in p.GetBonds()):
                return _base("allene", "allene base value")
            return _h_alkene(mol, h.GetIdx(), x, p, b)
    return _NO_RULE


# --------------------------------------------------------------------------- 13C rules


def _c_type(atom) -> int:
    return sum(1 for n in atom.GetNeighbors() if _is_sp3_carbon(n))


def _c_sp3(mol, c) -> ShiftEstimate:
    ci = c.GetIdx()
    heavy = [n for n in c.GetNeighbors() if not _is_h(n)]
    if len(heavy) == 1 and c.GetTotalNumHs(includeNeighbors=True) == 3 and not _is_sp3_carbon(heavy[0]):
        g = _group(mol, heavy[0], ci)
        n_h = heavy[0].GetTotalNumHs(includeNeighbors=True) if heavy[0].GetAtomicNum() == 7 else 0
        g = {("NR2", 1): "NHR", ("NC(O)R", 1): "NHC(O)R", ("NAr", 1): "NHAr"}.get((g, n_h), g)
        if g == "aryl" and (_ring_key(mol, heavy[0].GetIdx(), _aromatic_ring(mol, heavy[0].GetIdx()) or ())
                            != "cccccc" or _ortho_substituted(mol, heavy[0], ci)):
            g = ""      # the toluene value holds for benzene rings without ortho substituents only
        if g in ("NR2", "NHR") and any(n.GetAtomicNum() not in (1, 6) or not _is_sp3_carbon(n)
                                       for n in heavy[0].GetNeighbors() if n.GetIdx() != ci):
            g = ""      # amine values: N bonded to sp3 carbon or H only (not nitrosamines, hydrazines)
        if g == "OR" and not _primary_alkyl_ether(mol, heavy[0], ci):
            g = ""      # the value is that of methyl ethers of primary alkyls
        if g in _C_METHYL:   # exact class only: a fallback class would pose as a measured parent
            return ShiftEstimate(_C_METHYL[g][0], f"CH3-X parent value ({g}: {_C_METHYL[g][1]})")
    # Grant-Paul: sp3 carbons by bond distance through the sp3-carbon skeleton
    dist = {ci: 0}
    frontier = [c]
    counts = [0] * 6
    while frontier:
        nxt = []
        for a in frontier:
            d = dist[a.GetIdx()]
            if d >= 5:
                continue
            for n in a.GetNeighbors():
                if n.GetIdx() not in dist and _is_sp3_carbon(n):
                    dist[n.GetIdx()] = d + 1
                    counts[d + 1] += 1
                    nxt.append(n)
        frontier = nxt
    p = _C_ALKANE
    terms = [p["base"], p["alpha"] * counts[1], p["beta"] * counts[2], p["gamma"] * counts[3],
             p["delta"] * counts[4], p["epsilon"] * counts[5]]
    tc = _c_type(c)
    for n in c.GetNeighbors():
        if _is_sp3_carbon(n):
            key = f"corr_{max(tc, 1)}_{max(_c_type(n), 1)}"
            if key in p:
                terms.append(p[key])
    names: list[str] = []
    missing: list[str] = []
    for ai, d in dist.items():
        if d > 2:
            continue
        a = mol.GetAtomWithIdx(ai)
        iso = _c_type(a) > 1
        for n in a.GetNeighbors():
            if _is_h(n) or n.GetIdx() in dist or _is_sp3_carbon(n):
                continue
            g = _group(mol, n, ai)
            k, row = _lookup(_C_SUBST, g)
            if row is None:
                missing.append(g)
                continue
            if d == 0:
                terms.append(row[1] if iso else row[0])
                names.append(k)
            elif d == 1:
                terms.append(row[3] if iso else row[2])
                names.append(f"beta-{k}")
            else:
                terms.append(row[4])
                names.append(f"gamma-{k}")
    detail = f"; substituents {_fmt(names)}" if names else ""
    note = f"; no increment for {_fmt(missing)}" if missing else ""
    ring = _carbocycle_size(mol, ci)
    if ring:
        ch2 = c.GetTotalNumHs(includeNeighbors=True) == 2
        terms.append(p[f"ring{ring}_ch2"] if ch2 else p["ring_substituted"])
        note += f"; {ring}-membered carbocycle correction"
    elif mol.GetRingInfo().NumAtomRings(ci):
        note += "; acyclic rule applied to a ring carbon"
    return ShiftEstimate(round(sum(sorted(terms)), 1),
                         f"sp3 C: Grant-Paul alkane rule{detail}{note}")


def _ortho_substituted(mol, ring_atom, ci: int) -> bool:
    """True when a ring neighbour of the aromatic atom carrying the methyl has a non-H substituent."""
    for n in ring_atom.GetNeighbors():
        if n.GetIdx() == ci or not n.GetIsAromatic():
            continue
        if any(x.GetIdx() != ring_atom.GetIdx() and not x.GetIsAromatic() and not _is_h(x)
               for x in n.GetNeighbors()):
            return True
    return False


def _primary_alkyl_ether(mol, o, ci: int) -> bool:
    """True when the ether O's other partner is an sp3 carbon carrying two or three H (CH3-O-CH2R)."""
    other = [n for n in o.GetNeighbors() if n.GetIdx() != ci]
    return len(other) == 1 and _is_sp3_carbon(other[0]) and other[0].GetTotalNumHs(includeNeighbors=True) >= 2


def _carbocycle_size(mol, ci: int) -> int | None:
    """Size (5-7) of the smallest ring through carbon ci when that ring is all sp3 carbon, else None."""
    rings = [r for r in mol.GetRingInfo().AtomRings() if ci in r]
    if not rings:
        return None
    smallest = min(rings, key=len)
    if len(smallest) not in (5, 6, 7) or not all(_is_sp3_carbon(mol.GetAtomWithIdx(i)) for i in smallest):
        return None
    return len(smallest)


def _c_alkene(mol, c, p) -> ShiftEstimate:
    b = _C_BASE
    terms = [b["alkene"]]
    names: list[str] = []
    missing: list[str] = []
    ci, pi = c.GetIdx(), p.GetIdx()
    for side, atom, prefix in ((0, c, ""), (1, p, "far-")):
        for n in atom.GetNeighbors():
            if n.GetIdx() in (ci, pi) or _is_h(n):
                continue
            if _is_sp3_carbon(n):
                # alkyl: alpha, beta, gamma sp3 carbons along the chain
                seen = {ci, pi, n.GetIdx()}
                layer = [n]
                for w in ("alpha", "beta", "gamma"):
                    key = f"alkene_{w}" + ("_far" if side else "")
                    terms.append(b[key] * len(layer))
                    nxt = []
                    for a in layer:
                        for m in a.GetNeighbors():
                            if m.GetIdx() not in seen and _is_sp3_carbon(m):
                                seen.add(m.GetIdx())
                                nxt.append(m)
                    layer = nxt
                names.append(prefix + "alkyl")
                continue
            g = _group(mol, n, atom.GetIdx())
            k, row = _lookup(_C_ALKENE, g)
            if row is None:
                missing.append(g)
                continue
            terms.append(row[side])
            names.append(prefix + k)
    note = f"; no increment for {_fmt(missing)}" if missing else ""
    return ShiftEstimate(round(sum(sorted(terms)), 1),
                         f"alkene C: additive increments ({_fmt(names) or 'none'}){note}")


def _c_carbonyl(mol, c) -> ShiftEstimate:
    ci = c.GetIdx()
    others = [n for n in c.GetNeighbors()
              if not (n.GetAtomicNum() == 8 and _bond_order(mol, ci, n.GetIdx()) == 2.0)]
    heavy = [n for n in others if not _is_h(n)]
    zs = sorted(n.GetAtomicNum() for n in heavy)
    aryl = any(n.GetIsAromatic() or _group(mol, n, ci) in ("alkenyl",) for n in heavy
               if n.GetAtomicNum() == 6)
    if len(heavy) < len(others):  # C-H
        if heavy and heavy[0].GetAtomicNum() in (7, 8):
            key = "formyl-heteroatom"
        else:
            key = "aldehyde-aryl" if aryl else "aldehyde"
    elif zs.count(8) == 2 or (7 in zs and 8 in zs):
        key = "carbonate"
    elif zs.count(7) == 2:
        key = "urea"
    elif 7 in zs:
        key = "amide"
    elif 17 in zs:
        key = "acid-chloride"
    elif 8 in zs:
        o = next(n for n in heavy if n.GetAtomicNum() == 8)
        acid = o.GetFormalCharge() < 0 or any(_is_h(n) for n in o.GetNeighbors())
        key = ("acid" if acid else "ester") + ("-aryl" if aryl else "")
    else:
        key = "ketone-aryl" if aryl else "ketone"
    return ShiftEstimate(_C_BASE[key], f"carbonyl C base value ({key})")


def _estimate_13c(mol, c) -> ShiftEstimate:
    if c.GetIsAromatic():
        ring = _aromatic_ring(mol, c.GetIdx())
        if ring is not None:
            return _aromatic(mol, c.GetIdx(), "13C")
    if _is_sp3_carbon(c):
        if sum(1 for n in c.GetNeighbors() if n.GetAtomicNum() == 9) == 3:
            return ShiftEstimate(_C_BASE["CF3"], "CF3 carbon base value")
        return _c_sp3(mol, c)
    doubles = [b for b in c.GetBonds() if b.GetBondType() == Chem.BondType.DOUBLE]
    triples = [b for b in c.GetBonds() if b.GetBondType() == Chem.BondType.TRIPLE]
    if triples:
        p = triples[0].GetOtherAtom(c)
        if p.GetAtomicNum() == 7:
            aryl = any(n.GetIsAromatic() for n in c.GetNeighbors())
            key = "nitrile-aryl" if aryl else "nitrile"
            return ShiftEstimate(_C_BASE[key], f"nitrile C base value ({key})")
        key = "alkyne-CH" if c.GetTotalNumHs(includeNeighbors=True) else "alkyne-C"
        return ShiftEstimate(_C_BASE[key], f"alkyne C base value ({key})")
    if len(doubles) == 2:
        return ShiftEstimate(_C_BASE["allene-central"], "allene central C base value")
    if len(doubles) == 1:
        p = doubles[0].GetOtherAtom(c)
        if p.GetAtomicNum() == 8:
            return _c_carbonyl(mol, c)
        if p.GetAtomicNum() == 7:
            return ShiftEstimate(_C_BASE["imine"], "imine C base value")
        if p.GetAtomicNum() == 6:
            return _c_alkene(mol, c, p)
        if p.GetAtomicNum() == 16:
            zs = sorted(n.GetAtomicNum() for n in c.GetNeighbors() if n.GetIdx() != p.GetIdx())
            key = ("thiourea" if zs.count(7) == 2 else
                   "thiocarbamate" if 7 in zs and (8 in zs or 16 in zs) else
                   "trithiocarbonate" if zs.count(16) == 2 else
                   "thioamide" if 7 in zs else None)
            if key is not None:
                return ShiftEstimate(_C_BASE[key], f"thiocarbonyl C base value ({key})")
    return ShiftEstimate(_C_BASE["placeholder-sp2"], "no rule; generic sp2 carbon value")


# --------------------------------------------------------------------------- 19F and 31P


def _f_base(key: str, what: str) -> ShiftEstimate:
    return ShiftEstimate(_F_BASE[key], f"{what} base value ({key})")


def _aryl_f(mol, x) -> ShiftEstimate:
    """F on a benzene ring: fluorobenzene + ortho (F only) / meta / para increments
    (data/shifts_19f_arene.csv); other aromatic rings keep the aryl-F base value."""
    xi = x.GetIdx()
    ring = _aromatic_ring(mol, xi)
    if ring is None or _ring_key(mol, xi, ring) != "cccccc":
        return _f_base("aryl-F", "aryl-F")
    terms, names, left_out = [_F_BASE["aryl-F"]], [], []
    for d, g in _ring_substituents(mol, xi, ring):
        if d == 0:
            continue
        k, row = _lookup(_F_ARENE, g)
        z = row[d - 1] if row is not None else None
        if z is None:
            left_out.append(f"{_POS[d]}-{g}")
            continue
        terms.append(z)
        names.append(f"{_POS[d]}-{k}")
    basis = f"19F fluorobenzene increments ({_fmt(names)})" if names else "19F fluorobenzene value"
    if left_out:
        basis += f"; not included: {_fmt(left_out)}"
    return ShiftEstimate(_sum(terms), basis)


def _estimate_19f(mol, f) -> ShiftEstimate:
    nbrs = list(f.GetNeighbors())
    if not nbrs:
        return _f_base("fluoride", "19F")
    x = nbrs[0]
    z = x.GetAtomicNum()
    if z == 15:
        nf = sum(1 for n in x.GetNeighbors() if n.GetAtomicNum() == 9)
        return _f_base("PF6" if nf == 6 else "P-F", "P-F")
    if z == 5:
        nf = sum(1 for n in x.GetNeighbors() if n.GetAtomicNum() == 9)
        return _f_base("BF4" if nf == 4 else "BF3", "B-F")
    if z == 14:
        return _f_base("Si-F", "Si-F")
    if z == 7:
        return _f_base("N-F", "N-F")
    if z == 16:
        nf = sum(1 for n in x.GetNeighbors() if n.GetAtomicNum() == 9)
        if nf == 5:
            return _f_base("SF5", "S-F")
        aryl = any(n.GetIsAromatic() for n in x.GetNeighbors())
        return _f_base("SO2F-aryl" if aryl else "SO2F-alkyl", "sulfonyl-F")
    if z != 6:
        return _NO_RULE_F
    if x.GetIsAromatic():
        return _aryl_f(mol, x)
    if _has_double_o(mol, x):
        aryl = any(n.GetIsAromatic() for n in x.GetNeighbors())
        return _f_base("acyl-F-aryl" if aryl else "acyl-F", "acyl-F")
    if any(b.GetBondType() == Chem.BondType.DOUBLE for b in x.GetBonds()):
        nf = sum(1 for n in x.GetNeighbors() if n.GetAtomicNum() == 9)
        return _f_base("vinyl-CF2" if nf >= 2 else "vinyl-F", "vinyl-F")
    others = [n for n in x.GetNeighbors() if n.GetAtomicNum() != 9]
    nf = x.GetDegree() - len(others)
    heavy = [n for n in others if not _is_h(n)]
    nh = len(others) - len(heavy)
    if nf == 3:
        if not heavy:
            return _f_base("CF3-alkyl", "CF3")
        y = heavy[0]
        zy = y.GetAtomicNum()
        if zy == 8:
            return _f_base("CF3-O", "CF3")
        if zy == 16:
            return _f_base("CF3-SO2" if _has_double_o(mol, y) else "CF3-S", "CF3")
        if zy == 7:
            return _f_base("CF3-N", "CF3")
        if zy == 6:
            if y.GetIsAromatic():
                return _f_base("CF3-aryl", "CF3")
            if _has_double_o(mol, y):
                return _f_base("CF3-carbonyl", "CF3")
            if any(b.GetBondType() != Chem.BondType.SINGLE for b in y.GetBonds()):
                return _f_base("CF3-alkenyl", "CF3")
            if any(n.GetAtomicNum() == 9 for n in y.GetNeighbors()):
                return _f_base("CF3-perfluoroalkyl", "CF3")
            if any(n.GetAtomicNum() == 8 for n in y.GetNeighbors()):
                return _f_base("CF3-C-O", "CF3")
        return _f_base("CF3-alkyl", "CF3")
    if nf == 2:
        if nh:
            if any(n.GetAtomicNum() == 8 for n in heavy):
                return _f_base("CHF2-O", "CHF2")
            if any(n.GetIsAromatic() for n in heavy):
                return _f_base("CHF2-aryl", "CHF2")
            return _f_base("CHF2-alkyl", "CHF2")
        fluorinated = any(any(m.GetAtomicNum() == 9 for m in n.GetNeighbors()) for n in heavy)
        return _f_base("CF2-perfluoro" if fluorinated else "CF2-alkyl", "CF2")
    if nf == 1:
        if nh == 3:
            return _f_base("CH3F", "CH3F")
        if nh == 2:
            aryl = any(n.GetIsAromatic() for n in heavy)
            return _f_base("CH2F-aryl" if aryl else "CH2F-alkyl", "CH2F")
        if nh == 1:
            return _f_base("CHF-alkyl", "CHF")
        return _f_base("CF-alkyl", "tertiary C-F")
    return _NO_RULE_F


def _p_base(key: str) -> ShiftEstimate:
    return ShiftEstimate(_P_BASE[key], f"31P group base value ({key})")


def _estimate_31p(mol, p) -> ShiftEstimate:
    dbl_o = dbl_s = 0
    single: list = []
    for b in p.GetBonds():
        o = b.GetOtherAtom(p)
        bt = b.GetBondType()
        if bt == Chem.BondType.DOUBLE and o.GetAtomicNum() == 8:
            dbl_o += 1
        elif bt == Chem.BondType.DOUBLE and o.GetAtomicNum() == 16:
            dbl_s += 1
        elif o.GetAtomicNum() == 8 and o.GetFormalCharge() < 0 and o.GetDegree() == 1 and not dbl_o:
            dbl_o += 1  # P+-O- drawn form of P=O
        else:
            single.append(o)
    z = [a.GetAtomicNum() for a in single]
    nf, ncl = z.count(9), z.count(17)
    if nf == 6:
        return _p_base("PF6")
    if nf:
        return _p_base("PF-other")
    if ncl == 3:
        return _p_base("POCl3" if dbl_o else "PCl3")
    carbons = [a for a in single if a.GetAtomicNum() == 6]
    oxy = [a for a in single if a.GetAtomicNum() == 8]
    nit = [a for a in single if a.GetAtomicNum() == 7]
    nh = z.count(1)
    n_ar = sum(1 for a in carbons if a.GetIsAromatic())
    o_ar = sum(1 for o in oxy if any(n.GetIsAromatic() for n in o.GetNeighbors()))
    if p.GetFormalCharge() > 0 and len(carbons) == 4:
        return _p_base("phosphonium-aryl" if n_ar >= 3 else "phosphonium-alkyl")
    if dbl_o:
        if len(oxy) == 3:
            if o_ar == 3:
                return _p_base("phosphate-aryl")
            return _p_base("phosphate-mixed" if o_ar else "phosphate-alkyl")
        if len(oxy) == 2 and nh == 1:
            return _p_base("H-phosphonate")
        if len(oxy) == 2 and len(carbons) == 1:
            return _p_base("phosphonate-aryl" if n_ar else "phosphonate-alkyl")
        if len(oxy) == 1 and len(carbons) == 2:
            return _p_base("phosphinate")
        if len(nit) == 3:
            return _p_base("phosphoramide")
        if len(carbons) == 3:
            return _p_base("phosphine-oxide-aryl" if n_ar >= 2 else "phosphine-oxide-alkyl")
        return ShiftEstimate(0.0, "no rule for this P(V)=O centre; placeholder 0 ppm")
    if dbl_s:
        if len(carbons) == 3:
            return _p_base("phosphine-sulfide")
        if len(oxy) == 3:
            return _p_base("thiophosphate")
        return ShiftEstimate(0.0, "no rule for this P=S centre; placeholder 0 ppm")
    if any(b.GetBondType() == Chem.BondType.DOUBLE and b.GetOtherAtom(p).GetAtomicNum() == 6
           for b in p.GetBonds()):
        return _p_base("ylide")
    if p.GetDegree() == 3 and p.GetFormalCharge() == 0:
        if nh == 3:
            return _p_base("PH3")
        if len(oxy) == 3:
            return _p_base("phosphite-aryl" if o_ar >= 2 else "phosphite-alkyl")
        if len(oxy) == 2 and len(nit) == 1:
            return _p_base("phosphoramidite")
        if len(carbons) == 3:
            if n_ar == 3:
                return _p_base("phosphine-Ar3")
            if n_ar == 2:
                return _p_base("phosphine-Ar2R")
            if n_ar == 1:
                return _p_base("phosphine-ArR2")
            if all(a.GetTotalNumHs(includeNeighbors=True) == 3 for a in carbons):
                return _p_base("phosphine-Me3")
            return _p_base("phosphine-R3")
        if len(carbons) == 2 and nh == 1:
            return _p_base("phosphine-secondary")
        if len(carbons) == 1 and nh == 2:
            return _p_base("phosphine-primary")
    return ShiftEstimate(0.0, "no rule for this phosphorus centre; placeholder 0 ppm")


# --------------------------------------------------------------------------- entry point

_NO_RULE = ShiftEstimate(0.0, "no rule; placeholder 0 ppm")
_NO_RULE_F = ShiftEstimate(0.0, "no rule for this fluorine; placeholder 0 ppm")
_ELEMENT = {"1H": 1, "13C": 6, "19F": 9, "31P": 15}
_RULES = {"1H": _estimate_1h, "13C": _estimate_13c, "19F": _estimate_19f, "31P": _estimate_31p}


def estimate(mol, atom_index: int, isotope: str) -> ShiftEstimate:
    """Estimated shift of nucleus ``atom_index`` (an atom of ``isotope``'s element) in ``mol``.

    ``mol`` is a sanitized RDKit molecule with explicit hydrogens. Isotopes or atoms without a
    rule give a placeholder of 0 ppm whose basis says so; the function never raises for a valid
    molecule.
    """
    rule = _RULES.get(isotope)
    if rule is None or not 0 <= atom_index < mol.GetNumAtoms():
        return ShiftEstimate(0.0, f"no rule for {isotope}; placeholder 0 ppm")
    atom = mol.GetAtomWithIdx(atom_index)
    if atom.GetAtomicNum() != _ELEMENT[isotope]:
        return ShiftEstimate(0.0, f"atom {atom_index} is not a {isotope} nucleus; placeholder 0 ppm")
    try:
        return rule(mol, atom)
    except (RuntimeError, ValueError, KeyError, IndexError, StopIteration) as exc:
        return ShiftEstimate(0.0, f"no rule (estimate failed: {type(exc).__name__}); placeholder 0 ppm")
