"""Local web page through Flask's test client: form, good input, bad input, limits, upload."""
import io

import pytest
from rdkit import Chem

from equivclass.web import create_app


@pytest.fixture()
def client():
    return create_app(max_bytes=20_000, max_heavy_atoms=60, spectrum=False).test_client()


def _post(client, **data):
    data.setdefault("mhz", "400")
    data.setdefault("nuclei", "1H,19F,31P")
    return client.post("/", data=data, content_type="multipart/form-data")


def _clean(page: bytes):
    assert b"Traceback" not in page and b'File "' not in page


def test_form_is_served(client):
    r = client.get("/")
    assert r.status_code == 200
    for needle in (b'name="structure"', b'name="upload"', b'name="mhz"', b'name="nuclei"'):
        assert needle in r.data


def test_good_smiles_shows_label_and_picture(client):
    r = _post(client, structure="ClCCBr", mhz="1000")
    assert r.status_code == 200
    # BrCH2CH2Cl: textbook AA'XX'-type system once the field separates the two CH2 groups (Pople,
    # Schneider & Bernstein 1959, ch. 6); the page must pass the field on
    text = r.get_data(as_text=True)
    assert "AA′XX′" in text
    assert b"<svg" in r.data and b"id='spin-label'" in r.data
    assert b"estimates, not measurements" in r.data


@pytest.mark.parametrize("bad", ["C1CC(", "not a molecule", "/etc/hostname", "-"])
def test_bad_input_is_a_message(client, bad):
    r = _post(client, structure=bad)
    assert r.status_code == 400
    assert b"id='message'" in r.data
    _clean(r.data)


def test_path_is_never_read(client, tmp_path):
    # a file holding a valid SMILES: pasting its path must not analyse the file
    f = tmp_path / "probe.smi"
    f.write_text("CCO\n")
    r = _post(client, structure=str(f))
    assert r.status_code == 400 and b"spin-label'" not in r.data


def test_bad_field_and_nuclei(client):
    assert _post(client, structure="CCO", mhz="fast").status_code == 400
    assert _post(client, structure="CCO", mhz="5").status_code == 400
    r = _post(client, structure="CCO", nuclei="7Q")
    assert r.status_code == 400 and b"id='message'" in r.data


def test_oversize_input_refused(client):
    r = _post(client, structure="C" * 50_000)
    assert r.status_code in (400, 413)
    assert b"id='message'" in r.data
    _clean(r.data)


def test_atom_limit(client):
    r = _post(client, structure="C" * 80)
    assert r.status_code == 400 and b"heavy atoms" in r.data


def test_upload_of_mol_file(client):
    # 1-chloro-4-fluorobenzene as a V2000 MOL block written by RDKit
    block = Chem.MolToMolBlock(Chem.MolFromSmiles("Clc1ccc(F)cc1"))
    r = client.post("/", data={"mhz": "300", "nuclei": "1H,19F",
                               "upload": (io.BytesIO(block.encode()), "probe.mol")},
                    content_type="multipart/form-data")
    assert r.status_code == 200
    page = r.get_data(as_text=True)
    assert "id='spin-label'" in page and "′" in page    # para-disubstituted ring: primed letters


def test_upload_of_other_file_refused(client):
    r = client.post("/", data={"upload": (io.BytesIO(b"\x89PNG\r\n"), "photo.png")},
                    content_type="multipart/form-data")
    assert r.status_code == 400 and b".mol or .sdf" in r.data
