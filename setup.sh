#!/usr/bin/env bash
# One entry point for set-up: prepares .venv/ (kwant built against MUMPS), then runs
#   ./setup.sh demo   - the demo scenarios, outputs in demo-output/
#   ./setup.sh test   - the default test suite
#   ./setup.sh env    - set-up only
# Idempotent: a second run checks what is installed and skips the build.
set -euo pipefail
cd "$(dirname "$0")"
action="${1:-env}"
case "$action" in demo|test|env) ;; *)
  echo "usage: ./setup.sh [demo|test|env]  (got '$action')" >&2; exit 2;;
esac

say() { echo "[setup] $*"; }
PY="${SIMSURFACE_PYTHON:-}"
if [ -z "$PY" ]; then
  for c in python3.11 python3.12 python3.13 python3; do
    if command -v "$c" >/dev/null 2>&1 && "$c" -c 'import sys; sys.exit(sys.version_info < (3, 11))'; then PY="$c"; break; fi
  done
fi
[ -n "$PY" ] || { echo "[setup] error: Python >= 3.11 not found (set SIMSURFACE_PYTHON)" >&2; exit 1; }

# 1. MUMPS, the sparse direct solver kwant links at build time.
have_mumps() { ldconfig -p 2>/dev/null | grep -q 'libzmumps_seq' || [ -e /usr/include/zmumps_c.h ]; }
if ! have_mumps; then
  if [ "$(id -u)" = "0" ] && command -v apt-get >/dev/null 2>&1; then
    say "installing libmumps-seq-dev with apt"
    export DEBIAN_FRONTEND=noninteractive
    apt-get install -y -q libmumps-seq-dev >/dev/null 2>&1 || { apt-get update -q >/dev/null && apt-get install -y -q libmumps-seq-dev >/dev/null; } \
      || say "warning: apt could not install libmumps-seq-dev; kwant will use its slower fallback solver"
  else
    say "warning: MUMPS (Debian package libmumps-seq-dev) is missing and this is not a root shell with apt;"
    say "         kwant will be built without it and its reference solver will be much slower. Continuing."
  fi
fi

# 2. Project-local virtual environment.
if [ ! -x .venv/bin/python ]; then
  say "creating .venv with $PY"
  "$PY" -m venv .venv
fi
VPY=.venv/bin/python
PIP=("$VPY" -m pip --disable-pip-version-check -q)
stamp_now="$(cat constraints.txt pyproject.toml | sha256sum | cut -c1-16)-$(have_mumps && echo mumps || echo nomumps)"
stamp_file=.venv/.simsurface-stamp
kwant_ok() { "$VPY" -c 'import kwant, kwant.linalg.mumps' >/dev/null 2>&1; }
kwant_any() { "$VPY" -c 'import kwant' >/dev/null 2>&1; }

if [ -f "$stamp_file" ] && [ "$(cat "$stamp_file")" = "$stamp_now" ] && kwant_any \
   && "$VPY" -c 'import simsurface' >/dev/null 2>&1; then
  say "environment up to date (.venv)"
else
  say "installing build prerequisites"
  "${PIP[@]}" install -c constraints.txt numpy cython tinyarray scipy packaging setuptools wheel 2>&1 | grep -v "^WARNING: Location" || true
  if kwant_ok; then
    say "kwant with MUMPS already installed"
  elif kwant_any && ! have_mumps; then
    say "kwant installed (without MUMPS, which is not available here)"
  else
    say "building kwant 1.5.0 against numpy 1.26 (about 1-2 minutes)"
    "${PIP[@]}" install -c constraints.txt --no-build-isolation --no-cache-dir --force-reinstall --no-deps kwant==1.5.0 2>&1 | grep -v "^WARNING: Location" || true
    kwant_any || { echo "[setup] error: kwant failed to build; see pip output above" >&2; exit 1; }
    kwant_ok || say "warning: kwant built without MUMPS"
  fi
  say "installing simsurface and its dependencies"
  "${PIP[@]}" install -c constraints.txt --no-build-isolation -e ".[test]" 2>&1 | grep -v "^WARNING: Location" || true
  "$VPY" -c 'import simsurface, kwant' || { echo "[setup] error: installation incomplete" >&2; exit 1; }
  echo "$stamp_now" > "$stamp_file"
fi

export MPLBACKEND=Agg
case "$action" in
  env) say "ready: activate with 'source .venv/bin/activate'";;
  test) exec "$VPY" -m pytest "${@:2}";;
  demo) exec tools/run-demo.sh "${@:2}";;
esac
