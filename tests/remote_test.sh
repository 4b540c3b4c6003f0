#!/usr/bin/env bash
# SoapyRemote integration test: a SoapySDRServer on 127.0.0.1 serves the hetbench-gen module, and the
# Remote.* test of soapy_source_test streams from it with driver=remote,... and checks a scenario tone.
# Everything runs in a private network namespace (only loopback, so the server's SSDP discovery goes nowhere)
# with a private D-Bus system bus (Debian's server exits without one).
# Usage: remote_test.sh BUILD_DIR TEST_EXECUTABLE. Exit 77 = skipped (no permission for a network namespace).
set -u
build="$1"
exe="$2"
skip() { echo "SKIP: $*"; exit 77; }

if [ -z "${HETBENCH_IN_NETNS:-}" ]; then
  command -v SoapySDRServer >/dev/null || skip "SoapySDRServer is not installed (Debian: soapyremote-server)"
  command -v dbus-daemon >/dev/null || skip "dbus-daemon is not installed (Debian: dbus)"
  command -v unshare >/dev/null || skip "unshare is not installed (Debian: util-linux)"
  export HETBENCH_IN_NETNS=1
  # As root a plain network namespace; otherwise one inside a user namespace, where the kernel allows it.
  for how in "-n" "-rn"; do
    if unshare $how true 2>/dev/null; then exec unshare $how "$0" "$@"; fi
  done
  skip "creating a network namespace is not permitted here (unshare -n / -rn)"
fi

ip link set lo up || { echo "FAIL: cannot bring up loopback in the namespace"; exit 1; }
remote_module=""
for d in /usr/lib/*/SoapySDR/modules0.8 /usr/lib/SoapySDR/modules0.8 /usr/local/lib/*/SoapySDR/modules0.8 \
         /usr/local/lib/SoapySDR/modules0.8; do
  [ -f "$d/libremoteSupport.so" ] && remote_module="$d/libremoteSupport.so" && break
done
[ -n "$remote_module" ] || skip "the SoapySDR remote client module is not installed (Debian: soapysdr-module-remote)"

tmp=$(mktemp -d)
pids=()
cleanup() {  # the server stops cleanly on SIGINT, the bus on SIGTERM
  [ ${#pids[@]} -gt 1 ] && kill -INT "${pids[1]}" 2>/dev/null
  kill -TERM "${pids[0]}" 2>/dev/null
  for p in "${pids[@]}"; do wait "$p" 2>/dev/null; done
  rm -rf "$tmp"
}
trap cleanup EXIT

cat > "$tmp/bus.conf" <<CONF
<!DOCTYPE busconfig PUBLIC "-//freedesktop//DTD D-Bus Bus Configuration 1.0//EN"
 "http://www.freedesktop.org/standards/dbus/1.0/busconfig.dtd">
<busconfig>
  <type>system</type>
  <listen>unix:path=$tmp/system_bus_socket</listen>
  <auth>EXTERNAL</auth>
  <policy context="default">
    <allow user="*"/>
    <allow own="*"/>
    <allow send_destination="*"/>
    <allow receive_sender="*"/>
  </policy>
</busconfig>
CONF
dbus-daemon --config-file="$tmp/bus.conf" --nofork --nopidfile >"$tmp/dbus.log" 2>&1 &
pids+=($!)
for _ in $(seq 100); do [ -S "$tmp/system_bus_socket" ] && break; sleep 0.05; done
[ -S "$tmp/system_bus_socket" ] || { echo "FAIL: private D-Bus did not start"; cat "$tmp/dbus.log"; exit 1; }
export DBUS_SYSTEM_BUS_ADDRESS="unix:path=$tmp/system_bus_socket"

port=55132
SOAPY_SDR_ROOT=/nonexistent SOAPY_SDR_PLUGIN_PATH="$build/devices/soapy" \
  SoapySDRServer --bind="127.0.0.1:$port" >"$tmp/server.log" 2>&1 &
server=$!
pids+=($server)
for _ in $(seq 200); do
  [ -n "$(ss -ltnH "sport = :$port" 2>/dev/null)" ] && break
  kill -0 "$server" 2>/dev/null || break
  sleep 0.05
done
if [ -z "$(ss -ltnH "sport = :$port" 2>/dev/null)" ]; then
  echo "FAIL: SoapySDRServer is not listening on 127.0.0.1:$port"; cat "$tmp/server.log"; exit 1
fi

SOAPY_SDR_ROOT=/nonexistent SOAPY_SDR_PLUGIN_PATH="$build/devices/soapy:$remote_module" \
  HETBENCH_REMOTE_ARGS="driver=remote,remote=tcp://127.0.0.1:$port,remote:driver=hetbench-gen" \
  "$exe" --gtest_filter='Remote.*' --gtest_also_run_disabled_tests 2>&1 | tee "$tmp/test.log"
rc=${PIPESTATUS[0]}
grep -q "\[  PASSED  \] 1 test" "$tmp/test.log" || { rc=1; echo "FAIL: the remote test did not run and pass"; }
[ "$rc" -eq 0 ] || { echo "--- server log"; cat "$tmp/server.log"; }
exit "$rc"
