#!/usr/bin/env bash
# Headless browser for tests/test_browser.py on a fresh Debian machine (run as root):
# Debian's chromium and its matching chromedriver, and the selenium client library.
set -euo pipefail
export DEBIAN_FRONTEND=noninteractive
apt-get update
apt-get install -y --no-install-recommends chromium chromium-driver fonts-dejavu-core
python3 -m pip install "selenium>=4.10"
