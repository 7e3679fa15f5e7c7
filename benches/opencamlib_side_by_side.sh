#!/usr/bin/env bash
# Drop-cutter side by side with opencamlib (a general-purpose CAM library
# from PyPI): the same demo mesh (about 27,000 triangles), the same ball
# (12.7 mm), the same grid of cutter positions (every 2 mm over the plan).
# Installs opencamlib in a throwaway virtual environment; not part of CI.
# Prints each side's positions per second, the ratio, and the largest
# difference between the two tools' heights.
set -euo pipefail
cd "$(dirname "$0")/.."
work=target/ocl
mkdir -p "$work"
cargo run --release --quiet -- mesh fixtures/shortboard.yaml --tolerance 0.1 -o "$work" >/dev/null
stl=$(ls "$work"/*.stl)
if [ ! -x "$work/venv/bin/python" ]; then
  python3 -m venv "$work/venv"
  "$work/venv/bin/pip" install -q opencamlib
fi
"$work/venv/bin/python" - "$stl" "$work/points.csv" <<'PY'
import struct, sys, time
import opencamlib as ocl
stl, out = sys.argv[1], sys.argv[2]
data = open(stl, "rb").read()
n = struct.unpack("<I", data[80:84])[0]
surf = ocl.STLSurf()
lo, hi = [1e9, 1e9], [-1e9, -1e9]
for k in range(n):
    v = struct.unpack("<12f", data[84 + 50 * k: 84 + 50 * k + 48])[3:]
    p = [ocl.Point(v[3 * i], v[3 * i + 1], v[3 * i + 2]) for i in range(3)]
    for i in range(3):
        lo = [min(lo[0], v[3 * i]), min(lo[1], v[3 * i + 1])]
        hi = [max(hi[0], v[3 * i]), max(hi[1], v[3 * i + 1])]
    surf.addTriangle(ocl.Triangle(p[0], p[1], p[2]))
cutter = ocl.BallCutter(12.7, 60.0)
bdc = ocl.BatchDropCutter()
bdc.setSTL(surf)
bdc.setCutter(cutter)
bdc.setThreads(2)
pts = []
y = lo[1]
while y <= hi[1]:
    x = lo[0]
    while x <= hi[0]:
        bdc.appendPoint(ocl.CLPoint(x, y, -1000.0))
        pts.append((x, y))
        x += 2.0
    y += 2.0
t = time.perf_counter()
bdc.run()
dt = time.perf_counter() - t
cl = bdc.getCLPoints()
with open(out, "w") as f:
    for p in cl:
        f.write(f"{p.x!r},{p.y!r},{p.z!r}\n")
print(f"opencamlib: {n} triangles, {len(pts)} positions in {dt:.2f} s = {len(pts) / dt:,.0f} positions/s (2 threads)")
PY
BLANKSMITH_OCL_STL="$PWD/$stl" BLANKSMITH_OCL_CSV="$PWD/$work/points.csv" \
  cargo bench --bench cam -- same_points_as_opencamlib 2>&1 | grep -E "blanksmith:|same_points|Mitem|Kitem|item/s"
