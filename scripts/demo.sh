#!/usr/bin/env bash
# Quick start, part 1: solve the shipped demo and write its results file.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/setup.sh
mkdir -p out
cargo run --release --quiet -p glaze -- check examples/section_five_spans.toml
cargo run --release --quiet -p glaze -- static examples/section_five_spans.toml --out out/section_five_spans.h5
