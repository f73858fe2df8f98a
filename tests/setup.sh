#!/usr/bin/env bash
# Install everything the tests need on a fresh Debian/Ubuntu machine: the system libraries for Kivy's
# offscreen window and for looking at PDF pages (when missing), a virtual environment in .venv, and
# the package with its test extras. Usage: bash tests/setup.sh
set -euo pipefail
cd "$(dirname "$0")/.."

APT_PACKAGES="libgl1 libegl1 libmtdev1 poppler-utils"
missing=""
for pkg in $APT_PACKAGES; do
  dpkg-query -W -f='${Status}' "$pkg" 2>/dev/null | grep -q "install ok installed" || missing="$missing $pkg"
done
if [ -n "$missing" ]; then
  SUDO=""
  [ "$(id -u)" -ne 0 ] && SUDO="sudo"
  echo "installing system packages:$missing"
  $SUDO apt-get update -qq
  DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq --no-install-recommends $missing
fi

PY="${PYTHON:-python3}"
[ -x .venv/bin/python ] || "$PY" -m venv .venv
.venv/bin/python -m pip install -q --upgrade pip
.venv/bin/python -m pip install -q -e ".[test]"
