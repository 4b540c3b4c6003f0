#!/usr/bin/env bash
# `make demo`: run the main job on the bundled default session.
# The window when a display exists, else the headless report; until those exist, the best thing that does.
set -euo pipefail
hb="$1"
root="$(cd "$(dirname "$0")/.." && pwd)"
session="$root/recordings/demo.toml"
has() { "$hb" "$1" --help >/dev/null 2>&1; }
if [ -n "${DISPLAY:-}" ] && has gui; then
  exec "$hb" gui "$session"
elif has verify; then
  out="$root/build/demo-report"
  "$hb" verify "$session" --out "$out" || true
  echo "Report: $out/index.html"
elif has plan; then
  exec "$hb" plan "$session"
else
  exec "$hb" check "$session"
fi
