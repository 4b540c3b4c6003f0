#!/usr/bin/env bash
# Load and soak (issue "reliability"): the live chain on the bench generator for 10 minutes at 10 MS/s with a
# 65536-point analyzer, printing samples processed, drops, DSP load and resident memory every 10 s.
# Usage: tests/soak.sh [BUILD_DIR] [SECONDS] [SESSION]. Exit 1 when memory grew or blocks were dropped.
set -euo pipefail
cd "$(dirname "$0")/.."
build=${1:-build}
seconds=${2:-600}
session=${3:-tests/soak/vhf-10msps.toml}
exec env SOAPY_SDR_ROOT=/nonexistent "$build/app/hetbench" soak "$session" --seconds "$seconds" --interval 10
