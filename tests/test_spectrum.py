"""Checks of line shapes and spectrum files against outside references.

* Lorentzian: scipy.stats.cauchy (pdf and cdf) as the independent reference.
* Voigt width: Olivero & Longbothum, J. Quant. Spectrosc. Radiat. Transfer 17
  (1977) 233: f_V = 0.5346 f_L + sqrt(0.2166 f_L^2 + f_G^2), good to ~0.02 %.
* JCAMP-DX: written, then read back with nmrglue's independent JCAMP-DX reader.
* Plots: PNG signature (PNG spec, ISO/IEC 15948) and SVG root element (W3C SVG).
"""

import csv
import io
import xml.etree.ElementTree as ET

import nmrglue
import numpy as np
import pytest
from scipy import stats

import equivclass.spectrum as spectrum
from equivclass.errors import InputError
from equivclass.simulate import Transitions, lines
from equivclass.spectrum import lineshape, plot, write_csv, write_jcamp

MHZ = 400.0


def _t(freqs, ints):
    return Transitions(np.asarray(freqs, float), np.asarray(ints, float), "1H")


def test_lorentzian_matches_cauchy_pdf():
    # a line of intensity 2 at 1000 Hz with FWHM 1.2 Hz = 2 x Cauchy(1000, 0.6)
    ppm, y = lineshape(_t([1000.0], [2.0]), MHZ, points=4001, linewidth_hz=1.2,
                       ppm_range=(2.45, 2.55))
    ref = 2.0 * stats.cauchy.pdf(ppm * MHZ, loc=1000.0, scale=0.6)
    np.testing.assert_allclose(y, ref, rtol=1e-10, atol=0)
    assert ppm[0] == pytest.approx(2.45) and ppm[-1] == pytest.approx(2.55)


def test_area_in_window_equals_cauchy_cdf():
    ppm, y = lineshape(_t([1000.0], [1.0]), MHZ, points=200001, linewidth_hz=2.0,
                       ppm_range=(2.4, 2.6))
    hz = ppm * MHZ
    area = np.trapezoid(y, hz)
    ref = stats.cauchy.cdf(hz[-1], 1000.0, 1.0) - stats.cauchy.cdf(hz[0], 1000.0, 1.0)
    assert area == pytest.approx(ref, rel=1e-6)


def _fwhm(x, y):
    half = y.max() / 2
    above = np.flatnonzero(y >= half)
    lo, hi = above[0], above[-1]
    # linear interpolation at both edges
    xl = np.interp(half, [y[lo - 1], y[lo]], [x[lo - 1], x[lo]])
    xr = np.interp(half, [y[hi + 1], y[hi]], [x[hi + 1], x[hi]])
    return xr - xl


@pytest.mark.parametrize("fl,fg", [(1.0, 0.0), (1.0, 1.0), (0.5, 2.0)])
def test_gaussian_broadening_width_follows_olivero_longbothum(fl, fg):
    ppm, y = lineshape(_t([800.0], [1.0]), MHZ, points=200001, linewidth_hz=fl,
                       gaussian_hz=fg, ppm_range=(1.98, 2.02))
    width = _fwhm(ppm * MHZ, y)
    ref = 0.5346 * fl + np.sqrt(0.2166 * fl ** 2 + fg ** 2)
    assert width == pytest.approx(ref, rel=5e-4)


def test_many_lines_path_matches_cauchy_sum(monkeypatch):
    # force the stick-and-convolve evaluation used for very large line lists
    monkeypatch.setattr(spectrum, "_DIRECT_LIMIT", 10)
    rng = np.random.default_rng(5)
    f = np.sort(rng.uniform(900, 1100, 200))
    a = rng.uniform(0.1, 1.0, 200)
    ppm, y = lineshape(_t(f, a), MHZ, points=8001, linewidth_hz=1.5,
                       ppm_range=(2.2, 2.8))
    ref = (stats.cauchy.pdf(ppm[:, None] * MHZ, loc=f[None, :], scale=0.75) * a).sum(axis=1)
    np.testing.assert_allclose(y, ref, rtol=0, atol=2e-3 * ref.max())


def test_bad_lineshape_options_are_input_errors():
    t = _t([0.0], [1.0])
    for kwargs in ({"linewidth_hz": 0}, {"gaussian_hz": -1}, {"points": 1},
                   {"ppm_range": (3, 1)}):
        with pytest.raises(InputError):
            lineshape(t, MHZ, **kwargs)
    with pytest.raises(InputError):
        lineshape(t, 0.0)


def test_csv_columns_and_ppm():
    f, a = lines([400.0, 440.0], [[0, 8.0], [8.0, 0]])
    buf = io.StringIO()
    write_csv(buf, _t(f, a), MHZ)
    rows = list(csv.DictReader(io.StringIO(buf.getvalue())))
    assert list(rows[0]) == ["frequency_hz", "shift_ppm", "intensity"]
    assert len(rows) == 4
    for r, fi, ai in zip(rows, f, a):
        assert float(r["frequency_hz"]) == pytest.approx(fi, abs=1e-6)
        assert float(r["shift_ppm"]) == pytest.approx(fi / MHZ, abs=1e-8)
        assert float(r["intensity"]) == pytest.approx(ai, rel=1e-8)


@pytest.mark.parametrize("xunits", ["HZ", "PPM"])
def test_jcamp_reads_back_with_nmrglue(tmp_path, xunits):
    f, a = lines([600.0, 640.0, 1300.0], [[0, 8.0, 0], [8.0, 0, 2.0], [0, 2.0, 0]])
    ppm, y = lineshape(_t(f, a), MHZ, points=3001, linewidth_hz=1.0)
    path = tmp_path / "sim.jdx"
    write_jcamp(str(path), ppm, y, MHZ, "1H", "simulated test system", xunits=xunits)
    dic, data = nmrglue.jcampdx.read(str(path))
    data = np.asarray(data, dtype=float)
    assert data.shape == y.shape
    yfactor = float(dic["YFACTOR"][0])
    # integers times YFACTOR: error at most half a quantisation step
    assert np.max(np.abs(data - y)) <= 0.5 * yfactor * (1 + 1e-9)
    scale = MHZ if xunits == "HZ" else 1.0
    assert float(dic["FIRSTX"][0]) == pytest.approx(ppm[0] * scale, rel=1e-9)
    assert float(dic["LASTX"][0]) == pytest.approx(ppm[-1] * scale, rel=1e-9)
    assert int(dic["NPOINTS"][0]) == ppm.size
    assert dic["JCAMPDX"][0].strip() == "5.01"
    assert dic["DATATYPE"][0].strip() == "NMR SPECTRUM"
    assert float(dic[".OBSERVEFREQUENCY"][0]) == pytest.approx(MHZ)
    assert dic[".OBSERVENUCLEUS"][0].strip() == "^1H"
    udic = nmrglue.jcampdx.guess_udic(dic, data)
    assert udic[0]["obs"] == pytest.approx(MHZ)
    assert udic[0]["sw"] == pytest.approx((ppm[-1] - ppm[0]) * MHZ, rel=1e-9)


def test_jcamp_line_abscissae_follow_deltax(tmp_path):
    # X++(Y..Y): the X at the start of each line is that of its first Y
    # (JCAMP-DX 4.24, McDonald & Wilks 1988, sect. on ASDF/AFFN tables)
    ppm = np.linspace(-1, 9, 1001)
    y = np.exp(-((ppm - 4) / 0.3) ** 2)
    path = tmp_path / "g.jdx"
    write_jcamp(str(path), ppm, y, MHZ, "1H", "gauss")
    text = path.read_text().splitlines()
    head = {ln.split("=", 1)[0]: ln.split("=", 1)[1] for ln in text if ln.startswith("##")}
    start = text.index("##XYDATA=(X++(Y..Y))") + 1
    count = 0
    xf = float(head["##XFACTOR"])
    for ln in text[start:]:
        if ln.startswith("##"):
            break
        vals = ln.split()
        assert len(ln) <= 80
        assert float(vals[0]) * xf == pytest.approx(ppm[count] * MHZ, abs=1e-6)
        count += len(vals) - 1
    assert count == ppm.size


def test_jcamp_refuses_uneven_axis(tmp_path):
    with pytest.raises(InputError):
        write_jcamp(str(tmp_path / "u.jdx"), np.array([0.0, 1.0, 3.0]), np.ones(3), MHZ,
                    "1H", "u")


def test_png_plot_written(tmp_path):
    ppm, y = lineshape(_t([400.0, 440.0], [1.0, 1.0]), MHZ)
    path = tmp_path / "s.png"
    plot(str(path), ppm, y, "1H", "test", sticks=(np.array([1.0, 1.1]), np.array([1.0, 1.0])))
    data = path.read_bytes()
    assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 2000


def test_svg_plot_has_reversed_ppm_axis_and_footer(tmp_path):
    ppm, y = lineshape(_t([400.0, 1200.0], [1.0, 1.0]), MHZ)
    path = tmp_path / "s.svg"
    plot(str(path), ppm, y, "1H", "test")
    root = ET.parse(path).getroot()
    assert root.tag.endswith("svg")
    texts = [(el.text or "", float(el.get("x", "nan"))) for el in root.iter()
             if el.tag.endswith("text")]
    ticks = []
    for t, x in texts:
        try:
            ticks.append((float(t.replace("\u2212", "-")), x))
        except ValueError:
            pass
    assert len(ticks) >= 3
    ticks.sort()
    xs = [x for _, x in ticks]
    # higher ppm lies further left (smaller x on the page)
    assert all(b < a for a, b in zip(xs, xs[1:]))
    assert any("confirm with measured spectra" in t for t, _ in texts)


def test_plot_refuses_unknown_format(tmp_path):
    with pytest.raises(InputError):
        plot(str(tmp_path / "s.jpg"), np.arange(3.0), np.ones(3), "1H", "t")


def test_jcamp_refuses_malformed_nucleus(tmp_path):
    with pytest.raises(InputError, match="like 1H"):
        write_jcamp(str(tmp_path / "n.jdx"), np.linspace(0, 1, 5), np.ones(5), MHZ, "H1", "n")
