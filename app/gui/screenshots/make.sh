#!/usr/bin/env bash
# Makes the two screenshots of this folder from the bundled demo bench (its recording looped, so the waterfall
# fills), in a virtual X server:
#   window-if-output.png  probe at TP4 (IF out), IF chain selected, the mouse on the 2RF-LO marker (its tooltip)
#   window-rf-probe.png   probe at TP2 (after the RF filter), Plan check selected (spur table), the mouse on the
#                         image response marker
# Usage: app/gui/screenshots/make.sh [BUILD_DIR]   (default build). Needs xvfb-run, xdotool, /usr/bin/python3
# with numpy.
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
root="$(cd "$here/../../.." && pwd)"
build="${1:-$root/build}"
if [ -z "${HETBENCH_IN_XVFB:-}" ]; then
  export HETBENCH_IN_XVFB=1
  exec xvfb-run -a -s "-screen 0 1280x800x24" bash "$0" "$build"
fi
hb="$build/app/hetbench"
check="$build/tests/gui_check"
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
sed -e "s|^path = \"mf-bench.sigmf-meta\"|path = \"$root/recordings/mf-bench.sigmf-meta\"\nloop = true|" \
  "$root/recordings/demo.toml" > "$work/demo.toml"
"$hb" gui "$work/demo.toml" --frames 3 --state-dump "$work/layout.json"
# x of a frequency on the spectrum plot of the layout run, for the view `low`..`high` Hz; y at 58 % of its height.
at() { /usr/bin/python3 -c "
import json, sys; d = json.load(open('$work/layout.json')); r = d['layout']['rects']['spectrum_plot']
f, lo, hi = map(float, sys.argv[1:4]); print(round(r[0] + (f - lo) / (hi - lo) * (r[2] - r[0])), round(r[1] + 0.58 * (r[3] - r[1])))" "$@"; }
window() { timeout 20 xdotool search --sync --onlyvisible --name '^hetbench: ' | head -1; }

# 1: TP4, the IF window is 455 kHz ± 150 kHz; 2RF-LO sits at 2 × 1 MHz − 1.455 MHz = 545 kHz.
read -r mx my < <(at 545e3 305e3 605e3)
"$hb" gui "$work/demo.toml" --frames 150 --screenshot "$work/1.png" &
pid=$!
wid="$(window)"
sleep 1
xdotool mousemove --window "$wid" "$mx" "$my"
wait "$pid"

# 2: TP2 (RF after the preselector), 1.2 MHz ± 1.2 MHz; the image response is at 1 MHz + 2 × 455 kHz = 1.91 MHz.
read -r bx by < <("$check" centre "$work/layout.json" block.plan)
read -r px py < <("$check" centre "$work/layout.json" probe.rf-filtered)
read -r ix iy < <(at 1.91e6 0 2.4e6)
"$hb" gui "$work/demo.toml" --frames 180 --screenshot "$work/2.png" &
pid=$!
wid="$(window)"
sleep 1
xdotool mousemove --window "$wid" "$bx" "$by" click 1
sleep 0.3
xdotool mousemove --window "$wid" "$px" "$py" click 1
sleep 2.5
xdotool mousemove --window "$wid" "$ix" "$iy"
wait "$pid"

/usr/bin/python3 "$here/shrink_png.py" "$work/1.png" "$here/window-if-output.png"
/usr/bin/python3 "$here/shrink_png.py" "$work/2.png" "$here/window-rf-probe.png"
ls -l "$here"/*.png
