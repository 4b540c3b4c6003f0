#!/usr/bin/env bash
# The bench window in a real X server (Xvfb, Mesa llvmpipe), on a session whose source is the hetbench-gen
# generator (a 1 MHz wanted tone and a tone in the image band, 1.914 MHz, on the MF bench: 455 kHz IF, high-side LO,
# so the image lands at 459 kHz, in the IF passband but apart from the wanted, and the image rejection is measured).
#   gui_test.sh screenshot HETBENCH GUI_CHECK [KEEP_DIR]
#       renders frames until a measurement shows, writes a screenshot and a state dump, and checks the PNG for the
#       spectrum trace across the plot, marker-coloured pixels and a waterfall (tests/gui_check.cpp)
#   gui_test.sh drive HETBENCH GUI_CHECK [KEEP_DIR]
#       clicks the Mixer block and the TP3 test point (mixer output) with xdotool, then presses "1" (probe at the
#       RF input); checks through the state dump that the block is selected and that the DSP really moved the
#       probe: the last frame comes from the RF input, centred on 1.2 MHz instead of the 455 kHz IF; then two wheel
#       steps over the spectrum must have zoomed it to 0.8² of the band
# KEEP_DIR keeps the screenshots and dumps (app/gui/screenshots/ is made this way). Exit 77 = skipped.
set -u
mode="$1"
hb="$2"
check="$3"
keep="${4:-}"
skip() { echo "SKIP: $*"; exit 77; }
fail() { echo "FAIL: $*"; exit 1; }
size="1280x800"
# Under make sanitize: no leak check for the window process. Mesa's GL driver is dlopened, not instrumented and
# unloaded before LeakSanitizer runs, so the objects it keeps until exit show as leaks of an unknown module that no
# suppression can name. Every other test keeps the leak check; ASan's memory errors stay on here too.
export ASAN_OPTIONS="${ASAN_OPTIONS:+$ASAN_OPTIONS:}detect_leaks=0"

if [ -z "${HETBENCH_IN_XVFB:-}" ]; then
  command -v xvfb-run >/dev/null || skip "xvfb-run is not installed (Debian: xvfb, xauth)"
  [ "$mode" = drive ] && { command -v xdotool >/dev/null || skip "xdotool is not installed (Debian: xdotool)"; }
  "$hb" gui --help >/dev/null 2>&1 || skip "this hetbench has no gui command"
  export HETBENCH_IN_XVFB=1
  exec xvfb-run -a -s "-screen 0 ${size}x24" bash "$0" "$@"
fi

export SOAPY_SDR_ROOT=/nonexistent  # keep the system's SoapySDR modules (and their discovery) out
export LP_NUM_THREADS=2
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
out="${keep:-$work}"
mkdir -p "$out"

cat > "$work/world.toml" <<'EOF'
[scenario]
name = "window test bench (invented)"
full_scale_dbm = 0
noise_floor_dbm_per_hz = -150
[[signal]]
type = "cw"
label = "wanted"
frequency_hz = "1M"
level_dbm = -20
[[signal]]
type = "cw"
label = "image-band tone"
frequency_hz = "1.914M"
level_dbm = -40
EOF
cat > "$work/bench.toml" <<'EOF'
[bench]
name = "MF window test bench (invented)"
[mixer]
preset = "diode-ring"
[analyzer]
fft_size = 8192
averages = 8
[plan]
rf_low_hz = "530k"
rf_high_hz = "1.7M"
wanted_hz = "1M"
if_hz = "455k"
if_bandwidth_hz = "10k"
injection = "high"
max_order = 5
[plan.limits]
image_rejection_db = 30
spur_dbc = -60
[[source]]
kind = "generator"
scenario = "world.toml"
frequency_hz = "1.2M"
sample_rate_hz = "2.4M"
gain_db = 0
EOF

case "$mode" in
  screenshot)
    timeout 60 "$hb" gui "$work/bench.toml" --size "$size" --frames 45 --screenshot "$out/window-if-output.png" \
      --state-dump "$out/window-if-output.json" || fail "hetbench gui exited with $?"
    "$check" dump "$out/window-if-output.json" frame.received=true frame.has_analysis=true frame.probe=if-output \
      gui.probe=if-output || fail "the state dump does not show a measurement at the IF output"
    "$check" screenshot "$out/window-if-output.png" "$out/window-if-output.json" || fail "the screenshot check failed"
    ;;
  drive)
    # Where the blocks are: the layout depends only on the window size, so a first short run gives the rectangles.
    timeout 60 "$hb" gui "$work/bench.toml" --size "$size" --frames 2 --state-dump "$work/layout.json" \
      || fail "hetbench gui (layout run) exited with $?"
    read -r mx my < <("$check" centre "$work/layout.json" block.mixer) || fail "no mixer block in the layout"
    read -r px py < <("$check" centre "$work/layout.json" probe.mixer-output) || fail "no TP3 test point in the layout"
    read -r sx sy < <("$check" centre "$work/layout.json" spectrum_plot) || fail "no spectrum plot in the layout"
    # The run being driven: it ends by itself after 240 frames (8 s at the 30 fps cap); xdotool acts in the first
    # seconds. The window title is "hetbench: <bench name>".
    "$hb" gui "$work/bench.toml" --size "$size" --frames 240 --screenshot "$out/window-driven.png" \
      --state-dump "$out/window-driven.json" &
    pid=$!
    wid="$(timeout 20 xdotool search --sync --onlyvisible --name '^hetbench: ' | head -1)"
    [ -n "$wid" ] || { kill "$pid" 2>/dev/null; fail "the window did not appear"; }
    sleep 1
    xdotool mousemove --window "$wid" "$mx" "$my" click 1
    sleep 0.3
    xdotool mousemove --window "$wid" "$px" "$py" click 1   # TP3: probe at the mixer output (mouse)...
    sleep 0.7
    xdotool key 1   # ... then at the RF input (keyboard): the dump can only show rf-input if the key arrived
    sleep 0.5
    xdotool mousemove --window "$wid" "$sx" "$sy" click 4 click 4   # two wheel steps up over the spectrum: zoom in
    # The mouse away from the plot, so the screenshot shows no hover readout.
    xdotool mousemove --window "$wid" 5 790
    wait "$pid" || fail "hetbench gui exited with $?"
    "$check" dump "$out/window-driven.json" gui.selected_block=mixer gui.probe=rf-input frame.probe=rf-input \
      frame.center_hz=1200000 frame.sample_rate_hz=2400000 gui.view.follow=false \
      || fail "the clicks and keys did not take effect"
    # Two wheel steps zoom by 0.8 each around the cursor: the view spans 0.64 of the 2.4 MHz band.
    "$check" dump "$out/window-driven.json" gui.view.span_hz=1536000 || fail "the wheel did not zoom the spectrum"
    ;;
  *)
    echo "usage: gui_test.sh screenshot|drive HETBENCH GUI_CHECK [KEEP_DIR]"
    exit 2
    ;;
esac
echo "PASS"
