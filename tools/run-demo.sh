#!/usr/bin/env bash
# Runs every demo scenario into OUT/<scenario name>/ with the project's own environment.
set -euo pipefail
cd "$(dirname "$0")/.."
out="${1:-demo-output}"
sim=.venv/bin/simsurface
export MPLBACKEND=Agg
mkdir -p "$out"
for f in scenarios/*.toml; do
  name=$(basename "$f" .toml)
  echo "== simsurface run $f --out $out/$name"
  "$sim" run "$f" --out "$out/$name"
done
for f in $(grep -l '^\[plan\]' scenarios/*.toml scenarios/plans/*.toml); do
  name=$(basename "$f" .toml)
  echo "== simsurface plan $f --out $out/plan-$name"
  "$sim" plan "$f" --out "$out/plan-$name"
done
echo "== simsurface analyze: synthetic measured data of the invented samples QX-23 and KX-7"
"$sim" analyze --manifest demo/measured/QX-23_series.toml --out "$out/measured-qx23" \
  --theory demo/measured/QX-23_theory.csv --overlay-detrend --overlay-area fit
"$sim" analyze demo/measured/KX-7_updown.txt --shape circle --width-nm 110 --out "$out/measured-kx7"
echo "demo outputs are in $out/"
