"""Bad input gives exit code 2 and exactly one line "equivclass: …" naming the fault; good input of every
supported kind parses.

Faults are the standard ones of the trade (common practice): SMILES syntax, valence, kekulisation,
empty and binary input, a V2000 counts line that disagrees with the block (MDL CTfile specification,
counts line = number of atom and bond lines), missing files, a size limit, standard input.
"""
from __future__ import annotations

import os
import shutil
import subprocess
import sys

import pytest
from click.testing import CliRunner
from rdkit import Chem, RDConfig

import equivclass
from equivclass.cli import main

GOOD_V2000 = Chem.MolToMolBlock(Chem.MolFromSmiles("CC(=O)OC"))   # methyl acetate, RDKit writer
NCI_SDF = os.path.join(RDConfig.RDDataDir, "NCI", "first_200.props.sdf")


def _lying_counts_block() -> str:
    lines = GOOD_V2000.splitlines()
    counts = next(i for i, ln in enumerate(lines) if ln.rstrip().endswith("V2000"))
    n_atoms = int(lines[counts][0:3])
    lines[counts] = f"{n_atoms + 2:3d}" + lines[counts][3:]
    return "\n".join(lines) + "\n"


def _run(args, input=None):
    result = CliRunner().invoke(main, args, input=input)
    return result.exit_code, result.stdout, result.stderr, result


def _assert_one_line_error(code, out, err, result, *words):
    assert code == 2, (code, out, err)
    assert "Traceback" not in out + err
    assert result.exception is None or isinstance(result.exception, SystemExit)
    lines = [ln for ln in err.splitlines() if ln.strip()]
    assert len(lines) == 1, err
    assert lines[0].startswith("equivclass:"), err
    low = lines[0].lower()
    assert any(w in low for w in words), f"{lines[0]!r} names none of {words}"


@pytest.mark.parametrize("smiles, words", [
    ("CC(", ("smiles", "parse")),
    ("C1CC", ("smiles", "parse", "ring")),
    ("C(C)(C)(C)(C)C", ("valence",)),
    ("c1cccc1", ("kekul", "aromatic")),
    ("", ("empty",)),
    ("   ", ("empty",)),
    ("[Xx]", ("smiles", "parse")),
    ("CC>>CO", ("reaction",)),
])
def test_bad_smiles(smiles, words):
    _assert_one_line_error(*_run(["label", smiles]), *words)


def test_binary_file(tmp_path):
    path = tmp_path / "junk.mol"
    path.write_bytes(b"\x00\x01\x02MZ\x90\x00\x03" * 50)
    _assert_one_line_error(*_run(["label", str(path)]), "binary")


def test_not_utf8_file(tmp_path):
    path = tmp_path / "latin.smi"
    path.write_bytes(b"CC\xe9\xff")
    _assert_one_line_error(*_run(["label", str(path)]), "utf-8", "text", "smiles")


def test_counts_line_lies(tmp_path):
    path = tmp_path / "bad.mol"
    path.write_text(_lying_counts_block())
    code, out, err, res = _run(["label", str(path)])
    _assert_one_line_error(code, out, err, res, "counts", "atom")
    assert "bad.mol" in err                     # the record is named


def test_missing_file(tmp_path):
    path = tmp_path / "nothing_here.mol"
    code, out, err, res = _run(["label", str(path)])
    _assert_one_line_error(code, out, err, res, "not found", "no such")
    assert "nothing_here.mol" in err


def test_over_size_limit():
    _assert_one_line_error(*_run(["label", "CCCCCCCCCC", "--max-atoms", "5"]), "limit", "heavy atoms")


def test_stdin_bad_and_good():
    _assert_one_line_error(*_run(["label", "-"], input="C(C)(C)(C)(C)C\n"), "valence")
    _assert_one_line_error(*_run(["label", "-"], input=""), "empty")
    code, out, err, _ = _run(["label", "-", "--format", "json"], input="CCO\n")
    assert code == 0 and '"smiles": "CCO"' in out


def test_stdin_molblock():
    code, out, err, _ = _run(["label", "-", "--format", "json"], input=GOOD_V2000)
    assert code == 0, err
    assert '"smiles": "COC(C)=O"' in out


def test_console_script_subprocess(tmp_path):
    """The installed console script, run as a real process from another directory."""
    exe = shutil.which("equivclass")
    cmd = [exe] if exe else [sys.executable, "-c", "from equivclass.cli import main; main()"]
    proc = subprocess.run(cmd + ["label", "C(C)(C)(C)(C)C"], capture_output=True, text=True,
                          cwd=tmp_path, timeout=120)
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr + proc.stdout
    lines = [ln for ln in proc.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1 and lines[0].startswith("equivclass:") and "valence" in lines[0].lower()
    proc = subprocess.run(cmd + ["label", "-"], input="c1cccc1", capture_output=True, text=True,
                          cwd=tmp_path, timeout=120)
    assert proc.returncode == 2 and proc.stderr.startswith("equivclass:") and proc.stderr.count("\n") == 1


# ---- good input of every kind ----------------------------------------------------------------------

def test_v3000_block_parses():
    mol = Chem.MolFromSmiles("CC(=O)OC")
    block = Chem.MolToV3KMolBlock(mol)
    assert "V3000" in block
    d3 = equivclass.analyze(block).to_dict()
    d2 = equivclass.analyze("CC(=O)OC").to_dict()
    assert d3["smiles"] == d2["smiles"] and d3["label"] == d2["label"]


def test_sdf_first_record(tmp_path):
    """The first record of the NCI SDF shipped with RDKit (2,6-dimethyl-p-benzoquinone per its SMILES)."""
    with open(NCI_SDF) as fh:
        text = fh.read()
    first = next(m for m in Chem.SDMolSupplier(NCI_SDF) if m is not None)
    path = tmp_path / "nci.sdf"
    path.write_text(text)
    rep = equivclass.analyze(str(path)).to_dict()
    assert rep["smiles"] == Chem.MolToSmiles(first)
    code, out, err, _ = _run(["label", str(path), "--format", "json"])
    assert code == 0, err


def test_isotopes_honoured():
    """A CD3 group gives one 2H set of three (deuterium is spin 1, IUPAC 2001 Table 1)."""
    d = equivclass.analyze("[2H]C([2H])([2H])C(=O)OC").to_dict()
    deut = [s for s in d["sets"] if s["isotope"] == "2H"]
    assert len(deut) == 1 and len(deut[0]["atoms"]) == 3
    assert not any(s["isotope"] == "1H" and len(s["atoms"]) == 3 and
                   set(s["atoms"]) == set(deut[0]["atoms"]) for s in d["sets"])
    c = equivclass.analyze("[13CH3]C(=O)O").to_dict()
    c13 = [s for s in c["sets"] if s["isotope"] == "13C"]
    assert len(c13) == 1 and c13[0]["atoms"] == [0] and not c13[0]["dilute"]
    # a labelled 13C is a coupling partner of its protons (1J(C,H) about 130 Hz, common practice)
    assert any(s["isotope"] == "1H" and any(cp["to_set"] == c13[0]["index"] for cp in s["couplings"])
               for s in c["sets"])


def test_salt_is_one_structure():
    d = equivclass.analyze("[Na+].CC(=O)[O-]").to_dict()
    assert "." in d["smiles"] and "Na" in d["smiles"]
    h = [s for s in d["sets"] if s["isotope"] == "1H"]
    assert len(h) == 1 and len(h[0]["atoms"]) == 3


@pytest.mark.parametrize("options, words", [
    ({"ring_couplings": "table"}, ("ring_couplings", "true or false")),
    ({"chiral_medium": 1}, ("chiral_medium",)),
    ({"mhz": "600"}, ("mhz", "number")),
    ({"stereoisomer": 1.5}, ("stereoisomer", "whole number")),
])
def test_api_option_of_wrong_kind_is_an_error(options, words):
    """A wrong-kind option value is refused by name; a truthy string must not pass as a flag
    (common practice: no silently wrong answer)."""
    with pytest.raises(equivclass.errors.InputError) as exc:
        equivclass.analyze("CCO", **options)
    assert all(w in str(exc.value) for w in words), str(exc.value)
    import numpy as np   # numpy numbers are numbers
    assert equivclass.analyze("CCO", mhz=np.float64(600.0), stereoisomer=np.int64(0)).mhz == 600.0


@pytest.mark.parametrize("options, word", [({"shifts": {"x": 1}}, "shifts"), ({"shifts": 5}, "shifts"),
                                          ({"nuclei": 5}, "nuclei")])
def test_api_shift_and_nuclei_options_of_wrong_kind(options, word):
    """Wrong-kind shifts/nuclei options are refused by name, not with a Python error (common practice)."""
    with pytest.raises(equivclass.errors.InputError) as exc:
        equivclass.analyze("CCO", **options)
    assert word in str(exc.value)
