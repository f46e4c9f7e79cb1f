#!/usr/bin/env bash
# One-time set-up on a fresh Debian machine with a Rust toolchain: system
# libraries the desktop app and its headless GUI tests need, then the crates.
set -euo pipefail
cd "$(dirname "$0")/.."
if command -v apt-get >/dev/null 2>&1 && [ "$(id -u)" = 0 ]; then
  need=()
  for pkg in libgl1 libegl1 libxkbcommon0 libvulkan1 mesa-vulkan-drivers libgl1-mesa-dri; do
    dpkg -s "$pkg" >/dev/null 2>&1 || need+=("$pkg")
  done
  if [ ${#need[@]} -gt 0 ]; then
    apt-get update -qq
    DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "${need[@]}" >/dev/null
  fi
fi
cargo fetch --locked 2>/dev/null || cargo fetch
# Reference Python packages (scripts/fixtures/requirements.txt) in .venv: some
# tests run scripts/fixtures/check_ccsds.py with it (ccsds-ndm reads back the
# CCSDS messages the tool writes).
[ -x .venv/bin/python ] || python3 -m venv .venv
.venv/bin/python -m pip install -q -r scripts/fixtures/requirements.txt
