"""One self-contained HTML page per Report: picture, set table, reasons for every magnetic split,
fragments, optional multiplets and simulated spectrum, warnings and the caution footer.

Inline CSS and inline SVG only: the file opens offline and loads nothing from anywhere.
Reads only the Report (its `to_dict()` contract and `.mol`); draws through `equivclass.draw`.
"""
from __future__ import annotations

import html
import re

from .draw import atom_labels, draw, hex_colour, set_colour, set_letters
from .report import CAUTION, first_order_sentence


REPORT_CSS = """
:root { --ink:#1f2428; --muted:#5b6570; --line:#d5dbe1; --panel:#f6f8fa; --accent:#0d5aa0; }
* { box-sizing: border-box; }
body { font: 15px/1.45 system-ui, -apple-system, "Segoe UI", "DejaVu Sans", sans-serif; color: var(--ink);
       margin: 0; background: #fff; }
main { max-width: 1100px; margin: 0 auto; padding: 18px 22px 40px; }
h1 { font-size: 1.35em; margin: 0 0 4px; }
h2 { font-size: 1.08em; margin: 26px 0 8px; padding-bottom: 3px; border-bottom: 2px solid var(--line); }
.sub { color: var(--muted); margin: 0 0 14px; word-break: break-all; }
.top { display: flex; flex-wrap: wrap; gap: 22px; align-items: flex-start; }
.picture { border: 1px solid var(--line); border-radius: 8px; padding: 6px; background: #fff; }
.picture svg { display: block; max-width: 100%; height: auto; }
.summary { flex: 1 1 300px; }
.spin-label { font-size: 2.1em; font-weight: 650; letter-spacing: .02em; color: var(--accent);
              margin: 4px 0 10px; }
dl.facts { display: grid; grid-template-columns: max-content 1fr; gap: 3px 14px; margin: 0; }
dl.facts dt { color: var(--muted); }
dl.facts dd { margin: 0; }
table { border-collapse: collapse; width: 100%; margin: 4px 0; }
th, td { text-align: left; padding: 5px 8px; border-bottom: 1px solid var(--line); vertical-align: top; }
th { background: var(--panel); font-weight: 600; font-size: .92em; }
td.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
.chip { display: inline-block; min-width: 2.2em; padding: 1px 7px; border-radius: 10px; font-weight: 650;
        text-align: center; }
.small { font-size: .88em; color: var(--muted); }
ul.reasons { margin: 4px 0; padding-left: 20px; }
.warn { background: #fff6e0; border-left: 4px solid #c98a00; padding: 8px 12px; margin: 6px 0; }
.spectrum svg { display: block; width: 100%; height: auto; border: 1px solid var(--line); border-radius: 8px; }
footer.caution { margin-top: 30px; padding: 12px 14px; border: 2px solid #8a4b00; border-radius: 8px;
                 background: #fff9f0; font-weight: 550; }
"""


def _e(x) -> str:
    return html.escape(str(x), quote=True)


def _inline_svg(svg: str) -> str:
    """SVG text without its XML prolog, ready to sit inside HTML."""
    svg = re.sub(r"^\s*<\?xml[^>]*\?>\s*", "", svg)
    return re.sub(r"<!DOCTYPE[^>]*>", "", svg)


def _atom_name(mol, idx: int) -> str:
    if mol is None or idx >= mol.GetNumAtoms():
        return str(idx)
    return f"{mol.GetAtomWithIdx(idx).GetSymbol()}{idx}"


def _topicity_text(s) -> str:
    t = s.topicity or {}
    parts = [t.get("within", "")]
    if t.get("diastereotopic_to"):
        parts.append("diastereotopic to set " + ", ".join(map(str, t["diastereotopic_to"])))
    if t.get("enantiotopic_to"):
        parts.append("enantiotopic to set " + ", ".join(map(str, t["enantiotopic_to"])))
    if s.exchange_decoupled:
        parts.append("exchanging (couples to nothing)")
    if s.dilute:
        parts.append("dilute: satellites only")
    return "; ".join(p for p in parts if p)


def _chip(s, text) -> str:
    dark, light = set_colour(s.index)
    return (f'<span class="chip" style="background:{hex_colour(light)};color:{hex_colour(dark)}">'
            f"{_e(text)}</span>")


def _set_table(report) -> str:
    mol = report.mol
    rows = []
    for s in report.sets:
        letters = set_letters(report, s).replace("'", "′")
        atoms = ", ".join(_atom_name(mol, a) for a in s.atoms)
        rows.append(
            f"<tr><td class='num'>{s.index}</td><td>{_chip(s, letters)}</td><td>{_e(s.isotope)}</td>"
            f"<td class='num'>{len(s.atoms)}</td><td class='num'>{s.shift_ppm:.2f}</td>"
            f"<td>{_e(atoms)}</td><td>{_e(_topicity_text(s))}</td>"
            f"<td class='small'>{_e(s.shift_basis)}</td></tr>")
    return ("<table class='sets'><thead><tr><th>set</th><th>letters</th><th>nucleus</th><th>count</th>"
            "<th>δ est. / ppm</th><th>atoms</th><th>relation</th><th>shift basis</th></tr></thead>"
            "<tbody>" + "".join(rows) + "</tbody></table>"
            "<p class='small'>Count is the relative integral of the set. Atom numbers are 0-based, hydrogens "
            "numbered after the heavy atoms.</p>")


def _splits(report) -> str:
    items = []
    for s in report.sets:
        if not s.witnesses:
            continue
        reasons = "".join(f"<li>{_e(w.reason)}</li>" for w in s.witnesses)
        items.append(f"<p>{_chip(s, set_letters(report, s).replace(chr(39), '′'))} set {s.index} "
                     f"splits into {len(s.magnetic_subsets)} magnetic subsets:</p><ul class='reasons'>{reasons}</ul>")
    if not items:
        return "<p>No set splits: chemically equivalent nuclei are also magnetically equivalent.</p>"
    return "".join(items)


def _fragments(report) -> str:
    rows = []
    for f in report.fragments:
        copies = f"{f.copies} ×" if f.copies > 1 else ""
        rows.append(f"<tr><td class='num'>{f.index}</td><td><b>{_e(copies)} {_e(f.label)}</b></td>"
                    f"<td>{_e(', '.join(map(str, f.sets)))}</td>"
                    f"<td>{_e(first_order_sentence(f, report.mhz))}</td></tr>")
    return ("<table><thead><tr><th>fragment</th><th>label</th><th>sets</th><th>at this field</th></tr>"
            "</thead><tbody>" + "".join(rows) + "</tbody></table>")


def _multiplets(multiplets) -> str:
    """Any list of flat records (dicts) as a table; columns in the order of the first record."""
    rows = [dict(m) for m in multiplets if isinstance(m, dict)]
    if not rows:
        return ""
    cols = list(rows[0])
    for r in rows[1:]:
        cols += [c for c in r if c not in cols]
    head = "".join(f"<th>{_e(c)}</th>" for c in cols)

    def cell(v):
        if isinstance(v, float):
            return f"<td class='num'>{v:.2f}</td>"
        if isinstance(v, (list, tuple)):
            v = ", ".join(f"{x:.1f}" if isinstance(x, float) else str(x) for x in v)
        return f"<td>{_e(v)}</td>"
    body = "".join("<tr>" + "".join(cell(r.get(c, "")) for c in cols) + "</tr>" for r in rows)
    return f"<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"


def _own_multiplets(report) -> list[dict]:
    """Rows of the report's first-order multiplets: set, letter, δ, integral, pattern, J, why."""
    rows = []
    for st in report.sets:
        m = report.multiplets.get(st.index)
        if not m:
            continue
        pattern = m["multiplicity"] + (f" (app. {m['apparent_multiplicity']})"
                                       if m.get("apparent_multiplicity") else "")
        rows.append({"set": st.index, "letter": st.letter, "nucleus": st.isotope, "δ est. / ppm": st.shift_ppm,
                     "integral": m["integral"], "pattern": pattern,
                     "J / Hz": ", ".join(f"{j:.1f}" for j in m.get("j_hz", ())), "why": m.get("reason", "")})
    return rows


def simulated_spectrum_svg(report, observe: str | None = None, width: int = 900, height: int = 260):
    """Inline SVG of the simulated spectrum of one observed isotope, or None when it is too large.

    The spectrum is `predicted_spectrum.spectrum_of` (exact per fragment, first order for fragments too
    large to solve); lines are Lorentzians of 1 Hz full width.
    """
    import numpy as np

    from .errors import InputError
    from .nucdata import larmor_mhz
    from .predicted_spectrum import spectrum_of

    observe = observe or ("1H" if "1H" in report.nuclei else (report.nuclei[0] if report.nuclei else None))
    if observe is None or not any(s.isotope == observe for s in report.sets):
        return None
    try:
        t = spectrum_of(report, observe).transitions
    except (InputError, ValueError, MemoryError):
        return None
    f_obs = larmor_mhz(observe, report.mhz)
    freqs = np.asarray(t.freqs_hz, dtype=float)
    amps = np.asarray(t.intensities, dtype=float)
    if freqs.size == 0:
        return None
    lo = freqs.min() / f_obs - 0.25
    hi = freqs.max() / f_obs + 0.25
    left, right, top, bottom = 20, width - 20, 16, height - 40
    # sample finely (0.2 Hz), then keep the maximum within each of about two points per pixel,
    # so no line narrower than a pixel is lost
    fine = int(min(400_000, max(4000, (hi - lo) * f_obs / 0.2)))
    hz = np.linspace(lo, hi, fine) * f_obs
    gamma = 0.5
    y = np.zeros(fine)
    for fr, a in zip(freqs, amps):
        y += a * gamma / np.pi / ((hz - fr) ** 2 + gamma ** 2)
    bins = 2 * (right - left)
    edges = np.linspace(0, fine, bins + 1).astype(int)
    y = np.maximum.reduceat(y, edges[:-1])
    ppm = np.linspace(lo, hi, bins)
    ymax = float(y.max()) or 1.0
    # ppm axis runs right to left (high δ on the left), as spectra are drawn
    xs = left + (hi - ppm) / (hi - lo) * (right - left)
    ys = bottom - y / ymax * (bottom - top)
    path = " ".join(f"{x:.1f},{v:.1f}" for x, v in zip(xs, ys))
    ticks = []
    span = hi - lo
    step = next(s for s in (0.05, 0.1, 0.2, 0.5, 1, 2, 5, 10, 20, 50, 100) if span / s <= 12)
    t0 = np.ceil(lo / step) * step
    for v in np.arange(t0, hi, step):
        x = left + (hi - v) / (hi - lo) * (right - left)
        ticks.append(f"<line x1='{x:.1f}' y1='{bottom}' x2='{x:.1f}' y2='{bottom + 5}' stroke='#444'/>"
                     f"<text x='{x:.1f}' y='{bottom + 18}' font-size='11' text-anchor='middle'>{v:g}</text>")
    return (f"<svg xmlns='http://www.w3.org/2000/svg' viewBox='0 0 {width} {height}' role='img' "
            f"aria-label='simulated {observe} spectrum'>"
            f"<rect width='{width}' height='{height}' fill='#fff'/>"
            f"<line x1='{left}' y1='{bottom}' x2='{right}' y2='{bottom}' stroke='#444'/>"
            + "".join(ticks) +
            f"<polyline fill='none' stroke='#0d5aa0' stroke-width='1.2' points='{path}'/>"
            f"<text x='{width / 2}' y='{height - 6}' font-size='12' text-anchor='middle'>"
            f"δ({_e(observe)}) / ppm — simulated at {report.mhz:g} MHz from estimated shifts and couplings"
            f"</text></svg>")


def report_fragment(report, spectrum_svg: str | None = None, multiplets=None, picture: bool = True) -> str:
    """The report as an HTML fragment (no <html>/<head>); style it with REPORT_CSS."""
    d = report.to_dict()
    pic = ""
    if picture:
        try:
            svg = draw(report, "svg", size=(500, min(900, 380 + 22 * len(report.sets))))
            pic = f"<div class='picture' id='picture'>{_inline_svg(svg)}</div>"
        except Exception as exc:       # a picture fault must not hide the analysis
            pic = f"<div class='picture warn'>Picture not drawn ({_e(type(exc).__name__)}).</div>"
    atoms_lettered = len(atom_labels(report))
    facts = (f"<dl class='facts'><dt>structure</dt><dd>{_e(d['smiles'])}</dd>"
             f"<dt>field</dt><dd>{report.mhz:g} MHz (1H)</dd>"
             f"<dt>observed</dt><dd>{_e(', '.join(d['nuclei']))}</dd>"
             f"<dt>sets</dt><dd>{len(report.sets)} ({atoms_lettered} nuclei)</dd>"
             f"<dt>fragments</dt><dd>{len(report.fragments)}</dd></dl>")
    parts = [
        "<section class='eqc-report'>",
        f"<h1>Spin systems of {_e(report.name)}</h1>",
        f"<p class='sub'>input: {_e(report.input[:300])}</p>",
        f"<div class='top'>{pic}<div class='summary'><div class='small'>spin-system label</div>"
        f"<div class='spin-label' id='spin-label'>{_e(report.label)}</div>{facts}</div></div>",
        "<h2>Chemical sets</h2>", _set_table(report),
        "<h2>Magnetic inequivalence</h2>", _splits(report),
        "<h2>Fragments</h2>", _fragments(report),
    ]
    if multiplets is None:
        multiplets = _own_multiplets(report)
    if multiplets:
        parts += ["<h2>Multiplets and integrals</h2>", _multiplets(multiplets)]
    if report.listing:
        parts += [f"<p class='listing'>{_e(line)}</p>" for line in report.listing.splitlines()]
    if spectrum_svg:
        parts += ["<h2>Simulated spectrum</h2>", f"<div class='spectrum'>{_inline_svg(spectrum_svg)}</div>"]
    if report.warnings:
        parts += ["<h2>Warnings</h2>"] + [f"<div class='warn'>{_e(w)}</div>" for w in report.warnings]
    parts.append(f"<footer class='caution'>{_e(d.get('caution', CAUTION))}</footer></section>")
    return "\n".join(parts)


def html_report(report, spectrum_svg: str | None = None, multiplets=None, picture: bool = True) -> str:
    """The whole report as one self-contained HTML document (str)."""
    return "\n".join([
        "<!DOCTYPE html><html lang='en'><head><meta charset='utf-8'>",
        "<meta name='viewport' content='width=device-width, initial-scale=1'>",
        f"<title>Spin systems of {_e(report.name)}</title><style>{REPORT_CSS}</style></head><body><main>",
        report_fragment(report, spectrum_svg, multiplets, picture),
        "</main></body></html>"])
