#!/usr/bin/env bash
# The test command: every test of the workspace (library, command line, GUI).
set -euo pipefail
cd "$(dirname "$0")/.."
cargo test --workspace --locked
