"""Line shapes and files for a simulated spectrum: CSV lines, JCAMP-DX 5.01, PNG/SVG plot.

Frequencies of a Transitions record are in Hz relative to 0 ppm of the
observed isotope at the spectrometer frequency: shift_ppm = frequency_hz / observe_mhz.
Each line is drawn with unit-area shape times its intensity: a Lorentzian of
full width at half height ``linewidth_hz``, optionally convolved with a
Gaussian of full width ``gaussian_hz`` (a Voigt profile, evaluated exactly
with scipy.special.voigt_profile).  JCAMP-DX follows McDonald & Wilks,
Appl. Spectrosc. 42 (1988) 151 and the NMR extension of Davies & Lampen,
Appl. Spectrosc. 47 (1993) 1093 (AFFN ``(X++(Y..Y))`` data form).
"""

from __future__ import annotations

import csv
import io
import math
from datetime import date

import numpy as np
from scipy.signal import fftconvolve
from scipy.special import voigt_profile

from equivclass.errors import InputError
from equivclass.simulate import Transitions

FOOTER = "Predicted spectrum (an estimate) - confirm with measured spectra and local laboratory practice"

#: lines x points above which the summed profile is evaluated by FFT convolution
_DIRECT_LIMIT = 4e7


def _profile(x_hz: np.ndarray, linewidth_hz: float, gaussian_hz: float) -> np.ndarray:
    """Unit-area Lorentzian (FWHM linewidth) or Voigt (Gaussian FWHM gaussian_hz) at offsets x."""
    gamma = linewidth_hz / 2.0
    if gaussian_hz > 0:
        sigma = gaussian_hz / (2.0 * math.sqrt(2.0 * math.log(2.0)))
        return voigt_profile(x_hz, sigma, gamma)
    return gamma / math.pi / (x_hz * x_hz + gamma * gamma)


def lineshape(transitions: Transitions, mhz: float, points: int = 16384,
              linewidth_hz: float = 1.0, gaussian_hz: float = 0.0, ppm_range=None):
    """Spectrum on an evenly spaced ppm axis (ascending); returns (ppm_axis, intensity).

    The area under each line (in Hz) equals its intensity.  ``ppm_range``
    (low, high) defaults to the lines' span plus 20 line widths each side.
    """
    if not (mhz > 0):
        raise InputError(f"spectrum: spectrometer frequency must be positive, got {mhz!r} MHz")
    if not (linewidth_hz > 0):
        raise InputError(f"spectrum: line width must be positive, got {linewidth_hz!r} Hz")
    if gaussian_hz < 0:
        raise InputError(f"spectrum: Gaussian width must not be negative, got {gaussian_hz!r} Hz")
    points = int(points)
    if points < 2:
        raise InputError(f"spectrum: need at least 2 points, got {points}")
    f = np.asarray(transitions.freqs_hz, dtype=float)
    a = np.asarray(transitions.intensities, dtype=float)
    if ppm_range is None:
        pad = 20.0 * (linewidth_hz + gaussian_hz)
        lo = (f.min() - pad) if f.size else -pad
        hi = (f.max() + pad) if f.size else pad
        lo, hi = lo / mhz, hi / mhz
    else:
        lo, hi = (float(x) for x in ppm_range)
        if not hi > lo:
            raise InputError(f"spectrum: ppm range must be (low, high) with low < high, "
                             f"got {ppm_range!r}")
    ppm = np.linspace(lo, hi, points)
    hz = ppm * mhz
    y = np.zeros(points)
    if f.size == 0:
        return ppm, y
    if f.size * points <= _DIRECT_LIMIT:
        return ppm, _direct(hz, f, a, linewidth_hz, gaussian_hz)
    # many lines: share each stick linearly between its two grid neighbours
    # and convolve with the sampled profile (exact for lines on grid points;
    # the error otherwise is of order (grid spacing / line width)^2)
    step = hz[1] - hz[0]
    u = (f - hz[0]) / step
    inside = (u >= 0) & (u <= points - 1)
    ui, wi = u[inside], a[inside]
    i0 = np.minimum(np.floor(ui).astype(np.int64), points - 2)
    frac = ui - i0
    sticks = (np.bincount(i0, wi * (1 - frac), minlength=points)
              + np.bincount(i0 + 1, wi * frac, minlength=points))
    kernel = _profile(np.arange(-(points - 1), points) * step, linewidth_hz, gaussian_hz)
    y = fftconvolve(sticks, kernel)[points - 1:2 * points - 1]
    if (~inside).any():                       # tails of lines outside the window
        y += _direct(hz, f[~inside], a[~inside], linewidth_hz, gaussian_hz)
    return ppm, y


def _direct(hz, f, a, linewidth_hz, gaussian_hz):
    """Sum of line profiles evaluated point by point (chunked over lines)."""
    y = np.zeros(hz.size)
    chunk = max(1, int(4e6 // hz.size))
    for s in range(0, f.size, chunk):
        y += _profile(hz[None, :] - f[s:s + chunk, None], linewidth_hz, gaussian_hz).T @ a[s:s + chunk]
    return y


def write_csv(path_or_file, transitions: Transitions, observe_mhz: float) -> None:
    """Write the line list: columns frequency_hz, shift_ppm, intensity (one row per line)."""
    if not (observe_mhz > 0):
        raise InputError(f"spectrum: spectrometer frequency must be positive, got {observe_mhz!r} MHz")
    own = isinstance(path_or_file, (str, bytes)) or hasattr(path_or_file, "__fspath__")
    fh = open(path_or_file, "w", newline="", encoding="utf-8") if own else path_or_file
    try:
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(["frequency_hz", "shift_ppm", "intensity"])
        for f, a in zip(transitions.freqs_hz, transitions.intensities):
            w.writerow([f"{f:.6f}", f"{f / observe_mhz:.8f}", f"{a:.9g}"])
    finally:
        if own:
            fh.close()


def _jcamp_number(x: float) -> str:
    return f"{x:.10G}"


def write_jcamp(path, ppm_axis, intensity, observe_mhz: float, nucleus: str, title: str,
                xunits: str = "HZ") -> None:
    """Write an evenly spaced spectrum as JCAMP-DX 5.01 (NMR SPECTRUM, AFFN X++(Y..Y)).

    Y values are written as integers (YFACTOR scales them back, |Y| up to
    1e8 for the largest point); X is in HZ (default) or PPM.
    """
    x_ppm = np.asarray(ppm_axis, dtype=float)
    y = np.asarray(intensity, dtype=float)
    if x_ppm.ndim != 1 or x_ppm.size < 2 or y.shape != x_ppm.shape:
        raise InputError("spectrum: JCAMP-DX needs matching 1-D ppm axis and intensity arrays")
    if not (observe_mhz > 0):
        raise InputError(f"spectrum: spectrometer frequency must be positive, got {observe_mhz!r} MHz")
    xunits = xunits.upper()
    if xunits not in ("HZ", "PPM"):
        raise InputError(f"spectrum: JCAMP-DX x units must be HZ or PPM, got {xunits}")
    x = x_ppm * observe_mhz if xunits == "HZ" else x_ppm
    npts = x.size
    deltax = (x[-1] - x[0]) / (npts - 1)
    if not np.allclose(np.diff(x), deltax, rtol=1e-6, atol=1e-9 * max(1.0, abs(deltax))):
        raise InputError("spectrum: JCAMP-DX (X++(Y..Y)) needs an evenly spaced axis")
    ymax = float(np.max(np.abs(y))) if y.size else 0.0
    yfactor = ymax / 1e8 if ymax > 0 else 1.0
    yint = np.rint(y / yfactor).astype(np.int64)
    xfactor = abs(deltax) / 1000.0 if deltax != 0 else 1.0
    m = _nucleus_label(nucleus)
    head = [
        f"##TITLE={title.splitlines()[0] if title else 'simulated spectrum'}",
        "##JCAMP-DX=5.01",
        "##DATA TYPE=NMR SPECTRUM",
        "##DATA CLASS=XYDATA",
        "##ORIGIN=equivclass simulation",
        "##OWNER=public domain",
        f"##LONGDATE={date.today().isoformat()}",
        f"##.OBSERVE FREQUENCY={_jcamp_number(observe_mhz)}",
        f"##.OBSERVE NUCLEUS=^{m}",
        f"##$COMMENT={FOOTER}",
        f"##XUNITS={xunits}",
        "##YUNITS=ARBITRARY UNITS",
        f"##XFACTOR={_jcamp_number(xfactor)}",
        f"##YFACTOR={_jcamp_number(yfactor)}",
        f"##FIRSTX={_jcamp_number(x[0])}",
        f"##LASTX={_jcamp_number(x[-1])}",
        f"##DELTAX={_jcamp_number(deltax)}",
        f"##MAXY={_jcamp_number(float(yint.max()) * yfactor)}",
        f"##MINY={_jcamp_number(float(yint.min()) * yfactor)}",
        f"##NPOINTS={npts}",
        f"##FIRSTY={_jcamp_number(float(yint[0]) * yfactor)}",
        "##XYDATA=(X++(Y..Y))",
    ]
    out = io.StringIO()
    out.write("\n".join(head) + "\n")
    per_line = 8              # keeps lines within the 80-character limit
    for s in range(0, npts, per_line):
        xval = int(round(x[s] / xfactor))
        out.write(f"{xval} " + " ".join(str(int(v)) for v in yint[s:s + per_line]) + "\n")
    out.write("##END=\n")
    with open(path, "w", encoding="ascii", newline="\n") as fh:
        fh.write(out.getvalue())


def _nucleus_label(nucleus: str) -> str:
    """'1H' -> '1H' (mass number then element symbol); reject anything else."""
    s = str(nucleus).strip()
    digits = "".join(ch for ch in s if ch.isdigit())
    letters = "".join(ch for ch in s if ch.isalpha())
    if not digits or not letters or s != digits + letters or len(letters) > 2:
        raise InputError(f"spectrum: nucleus must be written like 1H or 19F, got {nucleus!r}")
    return s


def plot(path, ppm_axis, intensity, nucleus: str, title: str, sticks=None) -> None:
    """Plot the spectrum to PNG or SVG (chosen by extension), high ppm on the left.

    ``sticks`` is an optional (ppm, intensity) pair drawn as a stick spectrum
    scaled to the curve's height.
    """
    path = str(path)
    ext = path.rsplit(".", 1)[-1].lower() if "." in path else ""
    if ext not in ("png", "svg"):
        raise InputError(f"spectrum: plot file must end in .png or .svg, got {path}")
    import matplotlib
    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    x = np.asarray(ppm_axis, dtype=float)
    y = np.asarray(intensity, dtype=float)
    if x.ndim != 1 or x.size < 2 or y.shape != x.shape:
        raise InputError("spectrum: plot needs matching 1-D ppm axis and intensity arrays")
    with matplotlib.rc_context({"svg.fonttype": "none"}):   # SVG text stays text
        _draw(plt, path, ext, x, y, nucleus, title, sticks)


def _draw(plt, path, ext, x, y, nucleus, title, sticks):
    fig, ax = plt.subplots(figsize=(9, 4.2), dpi=110)
    try:
        ax.plot(x, y, color="#1b4f72", lw=0.9)
        if sticks is not None:
            sx, sy = (np.asarray(v, dtype=float) for v in sticks)
            if sy.size and y.size and sy.max() > 0:
                scale = 0.3 * y.max() / sy.max()
                ax.vlines(sx, 0, sy * scale, color="#b03a2e", lw=0.7, alpha=0.8)
        ax.set_xlim(x.max(), x.min())                # chemists read right to left
        ax.set_xlabel(f"δ({_nucleus_label(nucleus)}) / ppm")
        ax.set_yticks([])
        for side in ("left", "right", "top"):
            ax.spines[side].set_visible(False)
        ax.set_title(title, fontsize=10)
        fig.text(0.01, 0.01, FOOTER, fontsize=7, color="#555555")
        fig.tight_layout(rect=(0, 0.04, 1, 1))
        fig.savefig(path, format=ext)
    finally:
        plt.close(fig)
