"""Commands `equivclass spectrum` and `equivclass spin-system`.

Files are read back with independent readers: nmrglue's JCAMP-DX reader, the csv module, the PNG
signature (PNG specification, ISO/IEC 15948) and xml.etree for SVG.  The AB reference lines are the
analytic solution of Pople, Schneider & Bernstein (1959), ch. 6.
"""
import csv
import json
import math
import xml.etree.ElementTree as ET

import nmrglue as ng
import numpy as np
import pytest
from click.testing import CliRunner

from equivclass.cli import main


@pytest.fixture()
def run():
    runner = CliRunner()

    def go(*args):
        return runner.invoke(main, [str(a) for a in args], catch_exceptions=False)
    return go


def test_default_prints_stick_list(run):
    res = run("spectrum", "CCOC(C)=O")
    assert res.exit_code == 0
    assert "Predicted 1H spectrum" in res.output
    assert "estimate" in res.output and "confirm with measured spectra" in res.output
    assert "total intensity 8.0000" in res.output


def test_files_written_and_read_back(run, tmp_path):
    jdx, lines, png, svg = (tmp_path / n for n in ("s.jdx", "s.csv", "s.png", "s.svg"))
    res = run("spectrum", "OCC(F)(F)F", "--jcamp", jdx, "--lines", lines, "--plot", png, "--points", 4096)
    assert res.exit_code == 0, res.output
    rows = list(csv.DictReader(lines.open()))
    freqs = [float(r["frequency_hz"]) for r in rows]
    assert sum(float(r["intensity"]) for r in rows) == pytest.approx(3.0, rel=1e-6)
    dic, data = ng.jcampdx.read(str(jdx))
    assert len(data) == 4096 == int(dic["NPOINTS"][0])
    first, last = float(dic["FIRSTX"][0]), float(dic["LASTX"][0])
    assert min(first, last) < min(freqs) and max(first, last) > max(freqs)
    x = np.linspace(first, last, len(data))
    peak = x[int(np.argmax(data))]
    strongest = freqs[int(np.argmax([float(r["intensity"]) for r in rows]))]
    assert abs(peak - strongest) < 2.0      # the curve's maximum sits on the strongest line (Hz)
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    res = run("spectrum", "OCC(F)(F)F", "--plot", svg, "--decouple", "19F")
    assert res.exit_code == 0, res.output
    root = ET.parse(svg).getroot()
    assert root.tag.endswith("svg")
    text = svg.read_text()
    assert "Predicted" in text and "19F" in text        # title names it predicted and decoupled


def test_observe_fluorine(run, tmp_path):
    res = run("spectrum", "OCC(F)(F)F", "--observe", "19F")
    assert res.exit_code == 0
    assert "Predicted 19F spectrum" in res.output and "(3 19F nuclei)" in res.output


@pytest.mark.parametrize("args", [
    ("spectrum", "C1CC("),
    ("spectrum", "CCO", "--observe", "Zz9"),
    ("spectrum", "CCO", "--observe", "19F"),
    ("spectrum", "CCO", "--plot", "out.pdf"),
    ("spectrum", "CCO", "--shift", "nonsense"),
    ("spectrum", "CCO", "--linewidth", "-1", "--lines", "x.csv", "--jcamp", "x.jdx"),
])
def test_structure_errors_are_one_line(args, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    res = CliRunner().invoke(main, list(args))
    assert res.exit_code == 2
    msg = res.output.strip()
    assert msg.startswith("equivclass:") and "\n" not in msg and "Traceback" not in msg


@pytest.mark.parametrize("content", ["{not json", "[1, 2]", '{"shifts_hz": [1, 2]}',
                                     '{"shifts_hz": [1, 2], "j_hz": [[0, 5], [4, 0]]}',
                                     '{"shifts_hz": [1, 2], "j_hz": [[0, 5], [5, 0]], "mhz": -3}'])
def test_bad_spin_system_files(content, tmp_path):
    p = tmp_path / "bad.json"
    p.write_text(content)
    res = CliRunner().invoke(main, ["spin-system", str(p)])
    assert res.exit_code == 2
    assert "\n" not in res.output.strip() and "Traceback" not in res.output


def test_missing_spin_system_file(tmp_path):
    res = CliRunner().invoke(main, ["spin-system", str(tmp_path / "none.json")])
    assert res.exit_code == 2 and "Traceback" not in res.output


def test_ab_system_matches_analytic_lines(run, tmp_path):
    # AB quartet (PSB 1959): lines at centre ± C ± J/2, C = ½√(Δν² + J²); inner lines 1 + sin2θ,
    # outer 1 − sin2θ, sin2θ = J/(2C) (relative intensities; total 2 for two protons)
    nu_a, nu_b, j = 1200.0, 1218.0, 12.0
    p = tmp_path / "ab.json"
    p.write_text(json.dumps({"shifts_hz": [nu_a, nu_b], "j_hz": [[0, j], [j, 0]], "mhz": 400}))
    out = tmp_path / "ab.csv"
    res = run("spin-system", p, "--lines", out)
    assert res.exit_code == 0, res.output
    rows = list(csv.DictReader(out.open()))
    f = np.array([float(r["frequency_hz"]) for r in rows])
    a = np.array([float(r["intensity"]) for r in rows])
    centre = (nu_a + nu_b) / 2
    c = 0.5 * math.hypot(nu_b - nu_a, j)
    s2 = j / (2 * c)
    ref_f = np.array([centre - c - j / 2, centre - c + j / 2, centre + c - j / 2, centre + c + j / 2])
    ref_a = np.array([1 - s2, 1 + s2, 1 + s2, 1 - s2]) / 2
    assert np.allclose(f, ref_f, atol=1e-6)
    assert np.allclose(a, ref_a, atol=1e-6)
    ppm = np.array([float(r["shift_ppm"]) for r in rows])
    assert np.allclose(ppm, ref_f / 400.0, atol=1e-7)


def test_spin_system_isotope_and_plot(run, tmp_path):
    p = tmp_path / "ff.json"
    p.write_text(json.dumps({"shifts_hz": [-5000.0, -4000.0], "j_hz": [[0, 20], [20, 0]],
                             "isotope": "19F", "mhz": 400}))
    png = tmp_path / "ff.png"
    res = run("spin-system", p, "--plot", png)
    assert res.exit_code == 0, res.output
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    res = run("spin-system", p)
    assert "19F" in res.output and "4 lines" in res.output
