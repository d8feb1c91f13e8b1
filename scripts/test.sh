#!/usr/bin/env bash
# Quick start, part 2: every test of the workspace, Python cross-checks included.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/setup.sh
cargo test --workspace --release
