#!/usr/bin/env bash
# The comparisons with general-purpose peers in one run: trimesh for the
# mesh check and slicing, opencamlib for the drop-cutter. Each installs its
# peer in a throwaway virtual environment. Not part of CI.
set -euo pipefail
cd "$(dirname "$0")/.."
echo "== trimesh: check and 200 sections"
bash benches/side_by_side.sh
echo "== opencamlib: batch drop-cutter"
bash benches/opencamlib_side_by_side.sh
