#!/usr/bin/env bash
# The demo: a short tour of simsurface on invented samples, outputs in OUT/<step>/.
#   tools/run-demo.sh [OUT]          the tour (about 3 minutes on 2 idle cores)
#   tools/run-demo.sh --all [OUT]    also the disorder studies and every other plan (about 7 minutes in all)
set -euo pipefail
cd "$(dirname "$0")/.."
all=0
if [ "${1:-}" = "--all" ]; then all=1; shift; fi
out="${1:-demo-output}"
sim=.venv/bin/simsurface
export MPLBACKEND=Agg
mkdir -p "$out"

step() { echo; echo "== $*"; }
run() { step "simsurface run $1 --out $out/$2"; "$sim" run "$1" --out "$out/$2"; }
plan() { step "simsurface plan $1 --out $out/$2"; "$sim" plan "$1" --out "$out/$2"; }

# 1. Clean wires: the Berry-phase comparison (topological Bi2Se3 against a trivial InAs accumulation layer),
#    an instant analytic ribbon, and a whole-crystal 3D wire.
run scenarios/qx11-round-wire.toml qx11-round-wire
run scenarios/qx12-accumulation-layer.toml qx12-accumulation-layer
run scenarios/qx14-ribbon-analytic.toml qx14-ribbon-analytic
run scenarios/qx17-bulk-wire.toml qx17-bulk-wire
# 2. A disorder ensemble: puddles and roughness, 16 realizations.
run scenarios/qx23-puddled-wire.toml qx23-puddled-wire
# 3. Before fabrication: the device plan of a 100 nm wire (verdict, harmonics, gate map, theory curves), on the
#    mode tube (exact time reversal) and on the Wilson lattice tube.
plan scenarios/plans/qx32-plan-modes.toml plan-qx32-plan-modes
plan scenarios/plans/qx31-plan-100nm.toml plan-qx31-plan-100nm
# 4. After the cooldown: synthetic measured data of the invented samples QX-23 (temperature series with a
#    theory overlay) and KX-7 (up and down sweeps).
step "simsurface analyze: synthetic measured data of the invented samples QX-23 and KX-7"
"$sim" analyze --manifest demo/measured/QX-23_series.toml --out "$out/measured-qx23" \
  --theory demo/measured/QX-23_theory.csv --overlay-detrend --overlay-area fit
"$sim" analyze demo/measured/KX-7_updown.txt --shape circle --width-nm 110 --out "$out/measured-kx7"

if [ "$all" = 1 ]; then
  # 5. Disorder studies (transport lengths, perfectly transmitted channel, tolerance) and the other plans.
  for f in scenarios/qx23-lengths.toml scenarios/qx23-ptc-lengths.toml scenarios/qx23-tolerance.toml; do
    run "$f" "$(basename "$f" .toml)"
  done
  for f in $(grep -l '^\[plan\]' scenarios/*.toml scenarios/plans/*.toml); do
    name=$(basename "$f" .toml)
    case "$name" in qx31-plan-100nm|qx32-plan-modes) continue;; esac
    plan "$f" "plan-$name"
  done
else
  echo
  echo "more: tools/run-demo.sh --all runs the disorder studies and the other plans as well"
fi
echo "demo outputs are in $out/"
