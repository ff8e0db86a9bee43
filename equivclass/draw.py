"""Structure picture of a Report: every active nucleus marked with its letter and primes.

`draw(report, fmt="svg"|"png", size=(w, h))` draws `report.mol` with RDKit's rdMolDraw2D. Hydrogens
are drawn only where they carry a label (an active 1H in a set); every other H is folded back into
its heavy atom. Each set has one colour: a light disc behind its atoms and the letter in a dark shade
of the same hue beside the atom. A legend under the structure lists letter, isotope, count and the
estimated shift of every set.

Letters and primes: the k-th magnetic subset of a set *within one fragment copy* carries k primes
(A, A′, A″ …); copies of a fragment (chemically equivalent, not coupled to each other) repeat the same
letters, as in the label "2 × A3X2".

Palette: seven hues chosen to stay distinct under the common forms of colour-vision deficiency
(blue/orange/purple/green contrasts; no red–green pairs next to each other). Design choice of this
module, not a physical value.
"""
from __future__ import annotations

import html
import math
import re

from rdkit import Chem
from rdkit.Chem import rdDepictor
from rdkit.Chem.Draw import rdMolDraw2D
from rdkit.Geometry import Point2D

from .errors import InputError

# (dark text shade, light disc tint) per set, in the order sets are listed.
PALETTE = (
    ((0.05, 0.33, 0.62), (0.74, 0.86, 0.97)),   # blue
    ((0.78, 0.38, 0.00), (1.00, 0.85, 0.66)),   # orange
    ((0.45, 0.20, 0.58), (0.88, 0.80, 0.94)),   # purple
    ((0.05, 0.47, 0.40), (0.72, 0.92, 0.86)),   # teal green
    ((0.62, 0.12, 0.35), (0.98, 0.78, 0.88)),   # wine
    ((0.45, 0.40, 0.00), (0.95, 0.92, 0.62)),   # olive yellow
    ((0.30, 0.30, 0.30), (0.85, 0.85, 0.85)),   # grey
)
PRIMES = ("", "′", "″", "‴")
ASCII_PRIMES = ("", "'", "''", "'''")

LEGEND_ROW = 22          # pixels per legend row
LEGEND_CHAR_WIDTH = 7.8   # pixels per character at the legend font size

# A clear system font when one is installed (RDKit's own font otherwise). RDKit draws strings byte by
# byte, so every text in the picture is ASCII: primes as ', as in the ASCII label.
_FONT_CANDIDATES = (
    "/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf",
    "/usr/share/fonts/TTF/DejaVuSans.ttf",
    "/usr/share/fonts/dejavu/DejaVuSans.ttf",
    "/usr/share/fonts/truetype/liberation/LiberationSans-Regular.ttf",
    "/Library/Fonts/Arial Unicode.ttf",
    "C:/Windows/Fonts/arial.ttf",
)


def _font_file() -> str | None:
    import os
    for path in _FONT_CANDIDATES:
        if os.path.isfile(path):
            return path
    return None


FONT_FILE = _font_file()


def prime(k: int, ascii_only: bool = False) -> str:
    table = ASCII_PRIMES if ascii_only else PRIMES
    return table[k] if k < len(table) else ("'" if ascii_only else "′") * k


def set_colour(index: int) -> tuple:
    """(dark, light) RGB triples in 0..1 for set `index` (the palette repeats after seven sets)."""
    return PALETTE[index % len(PALETTE)]


def hex_colour(rgb) -> str:
    return "#" + "".join(f"{round(255 * c):02x}" for c in rgb)


def _copy_of_atom(report) -> dict:
    """Atom index → id of its fragment copy (connected component of the non-zero coupling network)."""
    parent = {}

    def find(a):
        parent.setdefault(a, a)
        while parent[a] != a:
            parent[a] = parent[parent[a]]
            a = parent[a]
        return a

    for s in report.sets:
        for a in s.atoms:
            find(a)
    for c in report.couplings:
        a, b = c.atoms
        ra, rb = find(a), find(b)
        if ra != rb:
            parent[ra] = rb
    return {a: find(a) for a in parent}


def atom_labels(report, ascii_only: bool = False) -> dict:
    """Atom index → (set index, letter with primes) for every nucleus in a set of the report."""
    copy_of = _copy_of_atom(report)
    out = {}
    for s in report.sets:
        seen_in_copy: dict = {}
        for subset in s.magnetic_subsets:
            copy = copy_of.get(subset[0], subset[0]) if subset else None
            k = seen_in_copy.get(copy, 0)
            seen_in_copy[copy] = k + 1
            for a in subset:
                out[a] = (s.index, s.letter + prime(k, ascii_only))
        for a in s.atoms:                       # members not listed in any subset keep the bare letter
            out.setdefault(a, (s.index, s.letter))
    return out


def set_letters(report, s, ascii_only: bool = False) -> str:
    """The letters one copy of set `s` shows in the label, e.g. "AA′"."""
    labels = atom_labels(report, ascii_only)
    seen = []
    for subset in s.magnetic_subsets:
        for a in subset:
            lab = labels[a][1]
            if lab not in seen:
                seen.append(lab)
    return "".join(seen) or s.letter


def _drawing_mol(report):
    """Copy of report.mol without unlabelled H; returns (mol, original index → drawn index)."""
    mol = report.mol
    if mol is None:
        raise InputError(f"{report.name}: report carries no molecule to draw")
    labelled = {a for s in report.sets for a in s.atoms}
    rw = Chem.RWMol(mol)
    for atom in rw.GetAtoms():
        atom.SetIntProp("eqc_orig", atom.GetIdx())
    drop = [a.GetIdx() for a in mol.GetAtoms() if a.GetAtomicNum() == 1 and a.GetIdx() not in labelled
            and a.GetIsotope() == 0 and a.GetDegree() == 1]
    for idx in sorted(drop, reverse=True):
        heavy = rw.GetAtomWithIdx(idx).GetNeighbors()[0]
        heavy.SetNumExplicitHs(heavy.GetNumExplicitHs() + 1)
        heavy.SetNoImplicit(True)
        rw.RemoveAtom(idx)
    out = rw.GetMol()
    out.RemoveAllConformers()
    try:
        Chem.SanitizeMol(out, Chem.SanitizeFlags.SANITIZE_ALL ^ Chem.SanitizeFlags.SANITIZE_KEKULIZE
                         ^ Chem.SanitizeFlags.SANITIZE_SETAROMATICITY)
    except Exception:                           # drawing only: keep the molecule as it is
        out.UpdatePropertyCache(strict=False)
    Chem.AssignStereochemistry(out, cleanIt=True, force=True)
    rdDepictor.SetPreferCoordGen(True)
    rdDepictor.Compute2DCoords(out)
    mapping = {a.GetIntProp("eqc_orig"): a.GetIdx() for a in out.GetAtoms()}
    return out, mapping


def _legend_rows(report, ascii_only: bool) -> list:
    rows = []
    for s in report.sets:
        dark, light = set_colour(s.index)
        letters = set_letters(report, s, ascii_only)
        extra = []
        if s.exchange_decoupled:
            extra.append("exchanging")
        if s.dilute:
            extra.append("dilute")
        text = f"{letters}  {s.isotope} x{len(s.atoms)}  {s.shift_ppm:.2f} ppm  [set {s.index}]" + (
            f"  ({', '.join(extra)})" if extra else "")
        rows.append((dark, light, text))
    return rows


def draw(report, fmt: str = "svg", size: tuple = (520, 420)):
    """Annotated picture of the report's structure: SVG text (fmt="svg") or PNG bytes (fmt="png")."""
    fmt = fmt.lower()
    if fmt not in ("svg", "png"):
        raise InputError(f"{report.name}: picture format must be svg or png, not {fmt!r}")
    width, height = (int(size[0]), int(size[1]))
    if not (100 <= width <= 4000 and 100 <= height <= 4000):
        raise InputError(f"{report.name}: picture size must be 100–4000 pixels a side")
    mol, mapping = _drawing_mol(report)
    # RDKit draws strings byte by byte, so the PNG gets ASCII primes; SVG text is written as real
    # <text> elements (Unicode primes, selectable and searchable)
    ascii_only = fmt == "png"
    labels = atom_labels(report, ascii_only)
    rows = _legend_rows(report, ascii_only)
    longest = max((len(r[2]) for r in rows), default=10)
    ncols = max(1, min(4, int((width - 20) // (longest * LEGEND_CHAR_WIDTH + 36))))
    nrows = math.ceil(len(rows) / ncols)
    legend_h = 16 + LEGEND_ROW * (nrows + 1)
    mol_h = max(80, height - legend_h)

    drawer = (rdMolDraw2D.MolDraw2DSVG(width, height, width, mol_h) if fmt == "svg"
              else rdMolDraw2D.MolDraw2DCairo(width, height, width, mol_h))
    opts = drawer.drawOptions()
    if FONT_FILE:
        opts.fontFile = FONT_FILE
    opts.clearBackground = True
    opts.setBackgroundColour((1, 1, 1, 1))
    opts.padding = 0.12
    opts.bondLineWidth = 1.6
    opts.minFontSize = 11
    opts.addStereoAnnotation = False
    opts.highlightRadius = 0.36
    opts.fillHighlights = True

    hl_atoms, hl_colours, hl_radii = [], {}, {}
    for orig, (set_idx, _) in labels.items():
        if orig in mapping:
            d = mapping[orig]
            hl_atoms.append(d)
            hl_colours[d] = set_colour(set_idx)[1]
            hl_radii[d] = 0.30 if mol.GetAtomWithIdx(d).GetAtomicNum() == 1 else 0.40
    prepared = rdMolDraw2D.PrepareMolForDrawing(mol, kekulize=True, addChiralHs=False)
    drawer.DrawMolecule(prepared, highlightAtoms=hl_atoms, highlightAtomColors=hl_colours,
                        highlightBonds=[], highlightAtomRadii=hl_radii)

    texts = []                                 # (text, x, y, align, rgb, font px, css class, atom)
    note_px = max(15.0, min(24.0, width / 24))
    conf = prepared.GetConformer()
    for orig, (set_idx, text) in sorted(labels.items()):
        d = mapping.get(orig)
        if d is None:
            continue
        p = drawer.GetDrawCoords(d)
        atom = prepared.GetAtomWithIdx(d)
        here = conf.GetAtomPosition(d)
        vx = vy = 0.0
        for nb in atom.GetNeighbors():          # push the letter away from the bonds
            q = conf.GetAtomPosition(nb.GetIdx())
            vx += here.x - q.x
            vy += here.y - q.y
        norm = math.hypot(vx, vy)
        ux, uy = (vx / norm, vy / norm) if norm > 1e-6 else (0.7, -0.7)
        off = 19.0
        if ux > 0.45:
            align, dx = 1, off                 # text starts right of the atom
        elif ux < -0.45:
            align, dx = 2, -off                # text ends left of the atom
        else:
            align, dx = 0, ux * off
        dy = -uy * (off + 6.0)                 # drawing y grows downwards
        texts.append((text, p.x + dx, p.y + dy, align, set_colour(set_idx)[0], note_px, "nucleus-label", orig))

    top = mol_h + 8
    label = report.label_ascii if ascii_only else report.label
    texts.append((f"{label}   at {report.mhz:g} MHz   (shifts estimated)", 10, top + LEGEND_ROW / 2, 1,
                  (0.2, 0.2, 0.2), 15.0, "legend-title", None))
    col_w = (width - 20) / ncols
    drawer.SetFillPolys(True)
    for k, (dark, light, text) in enumerate(rows):
        r, c = divmod(k, ncols)
        x = 10 + c * col_w
        y = top + LEGEND_ROW * (r + 1)
        drawer.SetColour(light)
        drawer.DrawRect(Point2D(x, y + 3), Point2D(x + 14, y + LEGEND_ROW - 3), True)
        texts.append((text, x + 20, y + LEGEND_ROW / 2, 1, dark, 15.0, "legend-row", None))

    if fmt == "png":
        for text, x, y, align, rgb, px, _, _ in texts:
            drawer.SetFontSize(px)
            drawer.SetColour(rgb)
            drawer.DrawString(text, Point2D(x, y), align, True)
        drawer.FinishDrawing()
        return drawer.GetDrawingText()
    drawer.FinishDrawing()
    anchor = {0: "middle", 1: "start", 2: "end"}
    elems = []
    for text, x, y, align, rgb, px, cls, orig in texts:
        data = f" data-atom='{orig}'" if orig is not None else ""
        elems.append(f"<text class='{cls}'{data} x='{x:.1f}' y='{y:.1f}' dominant-baseline='central' "
                     f"text-anchor='{anchor[align]}' font-family='DejaVu Sans, Arial, sans-serif' "
                     f"font-size='{px:.0f}px' fill='{hex_colour(rgb)}' style='white-space:pre'>{html.escape(text)}</text>")
    svg = re.sub(r"<\?xml[^>]*\?>", "<?xml version='1.0' encoding='utf-8'?>", drawer.GetDrawingText(), count=1)
    end = svg.rindex("</svg>")
    return svg[:end] + "\n".join(elems) + "\n" + svg[end:]


def picture_format(path: str) -> str:
    low = path.lower()
    for ext in ("svg", "png"):
        if low.endswith("." + ext):
            return ext
    raise InputError(f"{path}: picture file must end in .svg or .png")


def write_picture(report, path: str, size: tuple = (520, 440)) -> None:
    """Write report's annotated structure to PATH (.svg or .png)."""
    fmt = picture_format(path)
    data = draw(report, fmt, size=size)
    try:
        if fmt == "svg":
            with open(path, "w", encoding="utf-8") as fh:
                fh.write(data)
        else:
            with open(path, "wb") as fh:
                fh.write(data)
    except OSError as exc:
        raise InputError(f"{path}: cannot write picture ({exc.strerror})") from None
