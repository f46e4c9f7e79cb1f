#!/usr/bin/env bash
# The test command: every test of the workspace (library, command line, GUI).
set -euo pipefail
cd "$(dirname "$0")/.."
# The headless GUI tests' graphics stack wants a runtime folder; CI machines
# often have none (harmless, but it prints an error line per test).
if [ -z "${XDG_RUNTIME_DIR:-}" ]; then
  XDG_RUNTIME_DIR="$(mktemp -d)"
  export XDG_RUNTIME_DIR
fi
cargo test --workspace --locked
