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
echo "demo outputs are in $out/"
