"""Bulk runs: every input kind, every output format, order, error rows, stdin, strict mode, filters and
reaction summaries.

External references: RDKit's SDMolSupplier re-reads the SDF output and reads the NCI sample that ships
inside the rdkit wheel (record count and titles); RDKit's canonical SMILES is the reference for the
structure written beside each result; Python's csv and json modules parse the other outputs.
"""
from __future__ import annotations

import csv
import io
import json
import os

import pytest
from click.testing import CliRunner
from rdkit import Chem, RDConfig

from equivclass.batch import analyse_record, run
from equivclass.cli import main
from equivclass.options import make_options
from equivclass.records import Record, read_records

NCI_SDF = os.path.join(RDConfig.RDDataDir, "NCI", "first_200.props.sdf")
NCI_SMI = os.path.join(RDConfig.RDDataDir, "NCI", "first_5K.smi")

# A small scenario of our own: intermediates of a route to a fluorinated lactone fragrance candidate.
ROUTE = """\
# step, structure, name
CCC(=O)C butanone-start
CCOCC ether-solvent
c1ccc(F)cc1 fluoro-arene
C1CC1( broken-ring
CC(O)CC butan-2-ol
"""

CONTRACT = {"name", "input", "smiles", "mhz", "nuclei", "label", "label_unicode", "warnings", "options",
            "caution", "fragments", "sets", "couplings"}


def _invoke(args, input=None):
    runner = CliRunner()
    return runner.invoke(main, ["batch", *args], input=input, catch_exceptions=False)


def _canon(smiles):
    """Canonical SMILES without stereo (the report names the stereoisomer it analysed)."""
    return Chem.MolToSmiles(Chem.MolFromSmiles(smiles), isomericSmiles=False)


@pytest.fixture
def route_smi(tmp_path):
    p = tmp_path / "route.smi"
    p.write_text(ROUTE)
    return p


def test_smiles_file_to_jsonl_has_contract_fields_and_error_row(route_smi):
    res = _invoke([str(route_smi)])
    assert res.exit_code == 0
    rows = [json.loads(line) for line in res.stdout.splitlines()]
    assert [r["record"] for r in rows] == [1, 2, 3, 4, 5]
    assert [r["name"] for r in rows] == ["butanone-start", "ether-solvent", "fluoro-arene", "broken-ring",
                                         "butan-2-ol"]
    for r in rows:
        assert CONTRACT <= set(r) and "error" in r
    bad = rows[3]
    assert bad["error"].startswith("record 4: broken-ring:") and bad["label"] is None
    good = [r for r in rows if r["error"] is None]
    assert len(good) == 4
    # reference: RDKit's canonical SMILES of each input line
    inputs = [ln.split()[0] for ln in ROUTE.splitlines()[1:]]
    for r in good:
        assert _canon(r["smiles"]) == _canon(inputs[r["record"] - 1])
    # stderr is not a terminal here: no progress bar, only the one-line summary
    assert res.stderr.strip() == "equivclass batch: 5 records, 1 errors, 5 written"


def test_csv_output_one_row_per_record(route_smi, tmp_path):
    out = tmp_path / "out.csv"
    res = _invoke([str(route_smi), "--format", "csv", "-o", str(out), "--nuclei", "1H,19F"])
    assert res.exit_code == 0
    rows = list(csv.DictReader(out.open(encoding="utf-8")))
    assert len(rows) == 5
    header = open(out, encoding="utf-8").readline().strip().split(",")
    for col in ("name", "smiles", "label", "sets_1H", "sets_19F", "magnetically_inequivalent",
                "diastereotopic_sets", "second_order_fragments", "first_order_above_mhz", "warnings", "error"):
        assert col in header
    by_name = {r["name"]: r for r in rows}
    # Günther, NMR Spectroscopy, ch. 6 (recalled from memory): fluorobenzene has 3 proton sets (ortho, meta, para) and one fluorine; the ortho (and meta)
    # protons are chemically but not magnetically equivalent (different couplings to the other ortho H)
    assert by_name["fluoro-arene"]["sets_1H"] == "3" and by_name["fluoro-arene"]["sets_19F"] == "1"
    assert by_name["fluoro-arene"]["magnetically_inequivalent"] == "true"
    # Friebolin, Basic One- and Two-Dimensional NMR Spectroscopy, ch. 4 (recalled from memory): diethyl ether, two ethyls related by symmetry, CH2 and CH3 sets; first order
    assert by_name["ether-solvent"]["sets_1H"] == "2"
    assert by_name["ether-solvent"]["magnetically_inequivalent"] == "false"
    # Friebolin, ch. on topicity (recalled from memory): the CH2 protons of butan-2-ol are diastereotopic (adjacent stereocentre)
    assert int(by_name["butan-2-ol"]["diastereotopic_sets"]) >= 2
    assert by_name["broken-ring"]["error"].startswith("record 4:")
    assert by_name["broken-ring"]["label"] == ""


def test_sdf_input_every_record_and_sdf_output_reread_by_rdkit(tmp_path):
    # first 40 records of the NCI sample shipped with rdkit (blank titles); every other one gets a title
    blocks = _titled(open(NCI_SDF, encoding="utf-8").read().split("$$$$\n")[:40])
    src = tmp_path / "nci40.sdf"
    src.write_text("$$$$\n".join(blocks) + "$$$$\n")
    ref = list(Chem.SDMolSupplier(str(src)))
    assert len(ref) == 40
    out = tmp_path / "out.sdf"
    res = _invoke([str(src), "--format", "sdf", "-o", str(out)])
    assert res.exit_code == 0
    back = list(Chem.SDMolSupplier(str(out)))
    assert len(back) == 40
    for r, b in zip(ref, back):
        assert b is not None
        assert b.GetProp("_Name") == r.GetProp("_Name")
        # input data items flow through, result tags are added
        assert b.GetProp("AMW") == r.GetProp("AMW")
        assert b.HasProp("EQV_RECORD")
        assert b.HasProp("EQV_LABEL") or b.HasProp("EQV_ERROR")
        assert Chem.MolToSmiles(b) == Chem.MolToSmiles(r)
    assert [int(b.GetProp("EQV_RECORD")) for b in back] == list(range(1, 41))
    assert [b.GetProp("EQV_NAME") for b in back] == [r.GetProp("_Name") or f"record {k}"
                                                     for k, r in enumerate(ref, 1)]


def _titled(blocks):
    """Give every even-numbered SDF block a title line of its own (sample lot names)."""
    out = []
    for k, b in enumerate(blocks):
        lines = b.split("\n")
        if k % 2 == 0:
            lines[0] = f"lot-{k:03d}"
        out.append("\n".join(lines))
    return out


def test_sdf_output_from_smiles_input_is_readable(route_smi, tmp_path):
    out = tmp_path / "out.sdf"
    assert _invoke([str(route_smi), "--format", "sdf", "-o", str(out)]).exit_code == 0
    mols = list(Chem.SDMolSupplier(str(out)))
    assert len(mols) == 5
    assert mols[0].GetProp("_Name") == "butanone-start"
    assert _canon(Chem.MolToSmiles(mols[0])) == _canon("CCC(=O)C")
    assert mols[3].GetNumAtoms() == 0 and mols[3].GetProp("EQV_ERROR").startswith("record 4:")


def test_csv_and_tsv_input_with_column_option(tmp_path):
    p = tmp_path / "lib.csv"
    p.write_text('id,structure,purpose\nL1,CCOC(C)=O,solvent\nL2,,blank\nL3,"FC(F)(F)c1ccccc1",core\n')
    res = _invoke([str(p), "--column", "structure", "--format", "csv"])
    assert res.exit_code == 0
    rows = list(csv.DictReader(io.StringIO(res.stdout)))
    assert [r["name"] for r in rows] == ["L1", "L2", "L3"]
    assert rows[1]["error"] == "record 2: L2: no structure in column 'structure'"
    assert _canon(rows[2]["smiles"]) == _canon("FC(F)(F)c1ccccc1")
    t = tmp_path / "lib.tsv"
    t.write_text("smiles\tname\nCC#N\tacetonitrile\n")
    rows = [json.loads(x) for x in _invoke([str(t)]).stdout.splitlines()]
    assert rows[0]["name"] == "acetonitrile" and rows[0]["error"] is None
    missing = _invoke([str(p)])          # default column 'smiles' is absent: a fault of the run
    assert missing.exit_code == 2 and "no column 'smiles'" in missing.stderr


def test_stdin_input(route_smi):
    res = _invoke(["-", "--format", "csv"], input=ROUTE)
    assert res.exit_code == 0
    rows = list(csv.DictReader(io.StringIO(res.stdout)))
    assert len(rows) == 5 and rows[0]["name"] == "butanone-start"
    sdf = "$$$$\n".join(_titled(open(NCI_SDF, encoding="utf-8").read().split("$$$$\n")[:3])) + "$$$$\n"
    res = _invoke(["-"], input=sdf)
    rows = [json.loads(x) for x in res.stdout.splitlines()]
    sup = Chem.SDMolSupplier()
    sup.SetData(sdf)
    titles = [m.GetProp("_Name") or f"record {k}" for k, m in enumerate(sup, 1)]
    assert [r["name"] for r in rows] == titles == ["lot-000", "record 2", "lot-002"]


def test_order_kept_with_two_jobs(tmp_path):
    lines = open(NCI_SMI, encoding="utf-8").read().splitlines()[:60]
    lines.insert(17, "C1CC broken")
    src = tmp_path / "nci.smi"
    src.write_text("\n".join(lines) + "\n")
    one = _invoke([str(src), "--format", "csv"])
    two = _invoke([str(src), "--format", "csv", "--jobs", "2"])
    assert one.exit_code == two.exit_code == 0
    rows = list(csv.DictReader(io.StringIO(two.stdout)))
    assert [r["name"] for r in rows] == [ln.split()[1] for ln in lines]
    assert rows[17]["error"].startswith("record 18: broken:")
    assert two.stdout == one.stdout


def test_strict_mode_fails_on_errors(route_smi, tmp_path):
    assert _invoke([str(route_smi), "--strict"]).exit_code == 1
    ok = tmp_path / "ok.smi"
    ok.write_text("CCO ethanol\n")
    assert _invoke([str(ok), "--strict"]).exit_code == 0


def test_filters_keep_records_with_the_property(route_smi):
    res = _invoke([str(route_smi), "--format", "csv", "--keep", "inequivalent"])
    names = [r["name"] for r in csv.DictReader(io.StringIO(res.stdout))]
    assert names == ["fluoro-arene", "broken-ring"]          # error rows are always written
    res = _invoke([str(route_smi), "--format", "csv", "--keep", "diastereotopic"])
    names = [r["name"] for r in csv.DictReader(io.StringIO(res.stdout))]
    assert names == ["broken-ring", "butan-2-ol"]
    assert "5 records, 1 errors, 2 written" in res.stderr


def test_reaction_summary_stereocentre_creates_diastereotopic_pair(tmp_path):
    # Mislow & Raban, Top. Stereochem. 1, 1967 (recalled from memory): reducing butan-2-one (achiral) to butan-2-ol creates a stereocentre at C2, which makes the
    # two C3 methylene protons diastereotopic
    p = tmp_path / "step.smi"
    p.write_text("CCC(=O)C.[Na+].[BH4-]>CO>CCC(O)C reduction-step\n")
    row = json.loads(_invoke([str(p)]).stdout)
    assert row["kind"] == "reaction" and row["error"] is None
    roles = [s["role"] for s in row["species"]]
    assert roles == ["reactant", "reactant", "reactant", "agent", "product"]
    summary = row["summary"]
    assert summary["before"]["stereocentres"] == 0 and summary["after"]["stereocentres"] == 1
    assert summary["before"]["diastereotopic_sets"] == 0 and summary["after"]["diastereotopic_sets"] >= 2
    assert any(c.startswith("diastereotopic sets appear") for c in summary["changes"])
    # the sodium ion has no observed nucleus: a note, not an error
    assert row["species"][1]["note"].startswith("no observed nuclei")
    rows = list(csv.DictReader(io.StringIO(_invoke([str(p), "--format", "csv"]).stdout)))
    assert [r["kind"] for r in rows] == ["reactant", "reactant", "reactant", "agent", "product", "reaction"]
    assert "diastereotopic sets appear" in rows[-1]["changes"]


def test_reaction_new_heteronuclear_partner():
    # Pretsch et al., H-F coupling tables (recalled from memory): fluorination introduces H–F coupling partners (2J(HF) geminal in CH2F)
    rec = Record(1, "fluorination", "CCO>>CCF", "reaction")
    res = analyse_record(rec, make_options())
    assert "new heteronuclear coupling: 1H-19F" in res.summary["changes"]


def test_bad_reaction_and_bad_records_are_error_rows():
    opts = make_options()
    bad = analyse_record(Record(7, "half", "CC>CC", "reaction"), opts)
    assert bad.error.startswith("record 7: half:")
    lone = list(read_records(io.StringIO("C>C lone\n"), layout="smiles"))
    assert lone[0].kind == "reaction" and "found 1 '>'" in analyse_record(lone[0], opts).error
    recs = [Record(1, "a", "CCO", "smiles"), Record(2, "b", "C(C)(C)(C)(C)C", "smiles"),
            Record(3, "c", "", "smiles", "no structure"), Record(4, "d", "CC(=O)O", "smiles")]
    out = list(run(recs, opts))
    assert [r.number for r in out] == [1, 2, 3, 4]
    assert [bool(r.error) for r in out] == [False, True, True, False]
    assert out[1].error.startswith("record 2: b: valence error")


def test_reader_streams_without_reading_everything():
    def endless():
        n = 0
        while True:
            n += 1
            yield f"C{'C' * (n % 5)} r{n}\n"
    class Lines(io.TextIOBase):        # an input that never ends: only a lazy reader can start on it
        def __iter__(self):
            return endless()

    recs = read_records(Lines(), layout="smiles")
    first = [next(recs) for _ in range(3)]
    assert [r.name for r in first] == ["r1", "r2", "r3"]


def test_sdf_reader_faults():
    text = "t1\n  x\n\n  0  0  0  0  0  0  0  0  0  0999 V2000\nM  END\n$$$$\nbroken\nno counts\n$$$$\n"
    recs = list(read_records(io.StringIO(text), layout="sdf"))
    assert [r.name for r in recs] == ["t1", "broken"]
    assert recs[0].fault == "" and "M  END" in recs[1].fault


def test_missing_input_file_is_one_line_error(tmp_path):
    res = _invoke([str(tmp_path / "none.smi")])
    assert res.exit_code == 2 and "file not found" in res.stderr and "Traceback" not in res.stderr


def test_time_limit_turns_a_long_analysis_into_an_error_row():
    opts = make_options()
    slow = analyse_record(Record(3, "long-chain", "C" * 40, "smiles"), opts, time_limit=0.001)
    assert slow.error.startswith("record 3: long-chain: analysis stopped after 0.001 s")
    assert analyse_record(Record(4, "ethanol", "CCO", "smiles"), opts, time_limit=60).error == ""


def test_strict_mode_fails_on_an_input_without_records(tmp_path):
    # an empty file analysed strictly is a failed run (common practice for pipeline steps)
    empty = tmp_path / "empty.sdf"
    empty.write_text("")
    assert _invoke([str(empty), "--strict"]).exit_code == 1
    assert _invoke([str(empty)]).exit_code == 0
