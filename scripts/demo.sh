#!/usr/bin/env bash
# Quick start, part 1: the main job on the shipped demo. Checks and solves
# the demo section, then runs its galloping study (8 cases: four device
# layouts at two wind speeds, on every core) and compares the layouts.
# Writes out/section_five_spans.h5 and out/study_five_spans/ (compare.html,
# compare.md and one folder per case). A few minutes on two cores.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/setup.sh
mkdir -p out
cargo build --release --quiet -p glaze
glaze=target/release/glaze
"$glaze" check examples/section_five_spans.toml
"$glaze" static examples/section_five_spans.toml --out out/section_five_spans.h5
"$glaze" sweep examples/study_five_spans.toml
"$glaze" compare out/study_five_spans
echo "open out/study_five_spans/compare.html in a browser for the layout comparison"
