#!/usr/bin/env bash
# Side-by-side timing of `blanksmith check` and `blanksmith slice` against
# trimesh (a general-purpose mesh library) on the same ~2-million-triangle
# binary STL of the demo board. Installs trimesh into a throwaway virtual
# environment. Not part of CI: run it by hand and quote the ratios.
set -euo pipefail
cd "$(dirname "$0")/.."
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
cargo build --release -q
bin=target/release/blanksmith
"$bin" mesh fixtures/shortboard.yaml -o "$work" --tolerance 0.0011 >/dev/null
stl="$work/saltgrass-shortboard-6-2.stl"
python3 -m venv "$work/venv"
"$work/venv/bin/pip" install -q trimesh numpy rtree scipy >/dev/null 2>&1 || "$work/venv/bin/pip" install -q trimesh numpy >/dev/null
cat > "$work/check.py" <<'PY'
import sys, trimesh
m = trimesh.load(sys.argv[1], process=True)
print(len(m.faces), m.is_watertight, m.volume * 1e-6)
PY
cat > "$work/sections.py" <<'PY'
import sys, time, numpy as np, trimesh
m = trimesh.load(sys.argv[1], process=True)
lo, hi = m.bounds
xs = lo[0] + (hi[0] - lo[0]) * np.arange(1, 201) / 201.0
t0 = time.perf_counter()
m.section_multiplane(plane_origin=[0, 0, 0], plane_normal=[1, 0, 0], heights=xs)
print(f"{time.perf_counter() - t0:.3f}")
PY
# Whole processes on both sides (start-up, file read, work), median of 3.
median() { sort -n | sed -n 2p; }
timed() { local s e; s=$(date +%s.%N); "$@" >/dev/null; e=$(date +%s.%N); echo "$e - $s" | bc -l; }
peer=$(for _ in 1 2 3; do timed "$work/venv/bin/python" "$work/check.py" "$stl"; done | median)
ours=$(for _ in 1 2 3; do timed "$bin" check "$stl"; done | median)
echo "triangles: $("$work/venv/bin/python" "$work/check.py" "$stl")"
printf 'check (load, watertight, volume), whole process, median of 3:\n'
printf '  trimesh     %.3f s\n  blanksmith  %.3f s\n  ratio       %.1f×\n' "$peer" "$ours" "$(echo "$peer / $ours" | bc -l)"
printf '200 cross-sections (after loading): trimesh %s s; blanksmith: see `cargo bench --bench check`\n' "$("$work/venv/bin/python" "$work/sections.py" "$stl")"
