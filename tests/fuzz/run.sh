#!/usr/bin/env bash
# Runs each libFuzzer target for a set time, one after the other (make fuzz).
#   tests/fuzz/run.sh BUILD_DIR SECONDS TARGET...
# New inputs go to BUILD_DIR/fuzz-corpus/<target> (the committed seeds in tests/fuzz/corpus/<target> are read,
# never written); a finding is written to BUILD_DIR/fuzz-findings/<target>-crash-... (or leak-, timeout-, oom-).
# Copy it into tests/fuzz/corpus/<target>/ once fixed: the corpus replay in make test keeps it fixed.
set -uo pipefail
build=$1 seconds=$2
shift 2
src=$(cd "$(dirname "$0")/../.." && pwd)
declare -A extra=([sigmf_meta]=sigmf [session]=session [scenario]=scenario [touchstone]=touchstone)
mkdir -p "$build/fuzz-findings"
status=0
summary=()
for t in "$@"; do
  exe="$build/tests/fuzz/fuzz_$t"
  [ -x "$exe" ] || { echo "fuzz: $exe is not built" >&2; exit 2; }
  work="$build/fuzz-corpus/$t"
  mkdir -p "$work"
  dirs=("$work" "$src/tests/fuzz/corpus/$t")
  [ -n "${extra[$t]:-}" ] && dirs+=("$src/tests/bad-inputs/${extra[$t]}")
  log="$build/fuzz-findings/$t.log"
  echo "fuzz: $t for ${seconds} s (log: $log)"
  # -timeout: one input taking 10 s is a hang; -rss_limit_mb: runaway memory is a finding too.
  "$exe" -max_total_time="$seconds" -timeout=10 -rss_limit_mb=2048 -max_len=16384 -print_final_stats=1 \
    -artifact_prefix="$build/fuzz-findings/$t-" "${dirs[@]}" >"$log" 2>&1
  rc=$?
  runs=$(grep -o 'stat::number_of_executed_units: *[0-9]*' "$log" | grep -o '[0-9]*$' | tail -1)
  cov=$(grep -o 'cov: [0-9]*' "$log" | tail -1)
  if [ $rc -ne 0 ]; then
    status=1
    summary+=("$t: FINDING after ${runs:-?} runs (exit $rc), see $log and $build/fuzz-findings/")
    grep -E 'ERROR|SUMMARY|Test unit written' "$log" | head -5
  else
    summary+=("$t: ${runs:-?} runs in ${seconds} s, ${cov:-cov: ?}, no finding")
  fi
done
printf 'fuzz: %s\n' "${summary[@]}"
exit $status
