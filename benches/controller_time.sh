#!/usr/bin/env bash
# The run-time estimate against LinuxCNC's trajectory planner, in
# simulation (real time; not part of CI). Needs the Debian package
# linuxcnc-uspace, an ordinary user `cnc`, and the simulation set up as in
# DEVELOPERS.md ("Run times against a controller"). Makes the demo's
# programs, cuts an excerpt of each kind (roughing, outline, finishing)
# with the program's own header and ending, asks `blanksmith verify` for
# its estimate of each excerpt and times the excerpt in the simulation.
#
# Measured 2026-12-02 (the demo's programs, 1,500 lines an excerpt, the
# shipped router's 2000/2000/1000 mm/s²; one run, the machine otherwise idle;
# an earlier run of the roughing excerpt took 37.9 s, so allow a few %):
#   excerpt     estimate  LinuxCNC  ratio
#   roughing      35.1 s    35.1 s  1.000
#   outline       57.3 s    61.5 s  0.932
#   finishing    191.7 s   202.6 s  0.946
# (before accelerations were planned: finishing 127 s where LinuxCNC took
# 145 s for the first 1,500 lines, 0.876). The outline and finishing are
# still 5-7 % short of the controller: the 5 % aim is not yet met there.
#
# usage: benches/controller_time.sh SIM_DIR RUN_PROGRAM_PY [LINES]
set -euo pipefail
sim=${1:?simulation folder, owned by cnc}
runner=${2:?run_program.py}
lines=${3:-1500}
here=$(cd "$(dirname "$0")/.." && pwd)
bin="$here/target/release/blanksmith"
work=$(mktemp -d)
"$bin" make "$here/fixtures/shortboard.yaml" -o "$work/out" --quiet >/dev/null || true
dir="$work/out/saltgrass-shortboard-6-2"
excerpt() { # program section-label name
  python3 - "$1" "$2" "$lines" > "$sim/$3.nc" <<'PY'
import sys
path, label, n = sys.argv[1], sys.argv[2], int(sys.argv[3])
src = open(path).read().splitlines()
head = []
for l in src:
    head.append(l)
    if l.startswith("G4 "):
        break
start = next(i for i, l in enumerate(src) if l.startswith("(" + label))
body = [l for l in src[start + 1:] if l and not l.startswith("(")][:n]
print("\n".join(head + ["G0 Z25.000"] + body + ["G0 Z25.000", "M5", "M30"]))
PY
  chown cnc "$sim/$3.nc"
}
excerpt "$dir/saltgrass-shortboard-6-2-1-deck-T1.nc" roughing roughing
excerpt "$dir/saltgrass-shortboard-6-2-1-deck-T1.nc" outline outline
excerpt "$dir/saltgrass-shortboard-6-2-1-deck-T2.nc" finishing finishing
excerpt "$dir/saltgrass-shortboard-6-2-1-deck-T3.nc" rails rails
printf "%-10s %10s %10s %8s\n" excerpt estimate linuxcnc ratio
for k in roughing outline finishing rails; do
  # An excerpt starts in uncut stock, so verify reports findings (exit 1):
  # only its time is wanted here.
  est=$( ("$bin" verify "$sim/$k.nc" --machine "$here/fixtures/machine-gantry-3000.yaml" \
        --stock 2100x630x125 --json || true) | python3 -c 'import json,sys; print(json.load(sys.stdin)["time_estimate_s"])')
  real=$(python3 "$runner" "$sim/$k.nc")
  python3 -c "print(f'{\"$k\":<10} {$est:10.1f} {$real:10.1f} {$est/$real:8.3f}')"
done
