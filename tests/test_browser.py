"""The served page driven by headless Debian chromium (selenium + chromedriver)."""
import os
import shutil
import socket
import threading

import pytest

CHROMIUM = "/usr/bin/chromium"
DRIVER = shutil.which("chromedriver") or "/usr/bin/chromedriver"

if not os.path.exists(CHROMIUM) and not os.environ.get("CI"):
    pytest.skip("headless browser test needs /usr/bin/chromium (run .ci/browser-setup.sh)",
                allow_module_level=True)

if os.environ.get("CI"):
    from selenium import webdriver           # in CI the browser test must run, never skip
else:
    webdriver = pytest.importorskip("selenium.webdriver", reason="selenium not installed")
from selenium.webdriver.chrome.options import Options  # noqa: E402
from selenium.webdriver.chrome.service import Service  # noqa: E402
from selenium.webdriver.common.by import By  # noqa: E402
from selenium.webdriver.support import expected_conditions as EC  # noqa: E402
from selenium.webdriver.support.ui import WebDriverWait  # noqa: E402
from werkzeug.serving import make_server  # noqa: E402

from equivclass.web import create_app  # noqa: E402


@pytest.fixture(scope="module")
def base_url():
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    server = make_server("127.0.0.1", port, create_app(), threaded=True)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    yield f"http://127.0.0.1:{port}/"
    server.shutdown()
    thread.join(5)


@pytest.fixture(scope="module")
def browser():
    opts = Options()
    opts.binary_location = CHROMIUM
    for arg in ("--headless=new", "--no-sandbox", "--disable-gpu", "--disable-dev-shm-usage",
                "--disable-background-networking", "--disable-component-update", "--disable-sync",
                "--no-first-run", "--window-size=1200,1400"):
        opts.add_argument(arg)
    driver = webdriver.Chrome(service=Service(DRIVER), options=opts)
    yield driver
    driver.quit()


def _submit(browser, base_url, text):
    browser.get(base_url)
    box = browser.find_element(By.ID, "structure")
    box.clear()
    box.send_keys(text)
    browser.find_element(By.ID, "run").click()


def test_paste_smiles_shows_label_and_picture(browser, base_url):
    _submit(browser, base_url, "[O-][N+](=O)c1ccc(F)cc1")
    wait = WebDriverWait(browser, 60)
    label = wait.until(EC.visibility_of_element_located((By.ID, "spin-label")))
    # 4-fluoronitrobenzene: para-disubstituted ring, primed (AA'XX'-type) letters plus the 19F
    # (textbook case of magnetic inequivalence; Pople, Schneider & Bernstein 1959, ch. 6)
    assert "′" in label.text and "X" in label.text
    picture = browser.find_element(By.CSS_SELECTOR, "#picture svg")
    assert picture.size["width"] > 100 and picture.size["height"] > 100
    letters = [t.text for t in browser.find_elements(By.CSS_SELECTOR, "#picture svg text.nucleus-label")]
    assert len(letters) == 5                  # 4 H + 1 F
    assert "estimates" in browser.find_element(By.CSS_SELECTOR, "footer.caution").text


def test_bad_smiles_shows_message(browser, base_url):
    _submit(browser, base_url, "C1CC(")
    msg = WebDriverWait(browser, 30).until(EC.visibility_of_element_located((By.ID, "message")))
    assert "C1CC(" in msg.text and "SMILES" in msg.text
    assert "Traceback" not in browser.page_source
    assert not browser.find_elements(By.ID, "spin-label")
