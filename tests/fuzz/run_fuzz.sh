#!/bin/sh
# run_fuzz.sh FUZZER WORKDIR: runs the fuzzer for $LODE_FUZZ_SECONDS (default 60) seconds in total
# (one process), starting from the seeds kept in the repository (tests/fuzz/seeds, only read) and
# keeping what it learns in WORKDIR/corpus between runs; any crash, timeout (10 s per input), leak or
# out-of-memory is a failure and leaves the input in WORKDIR/artifacts.
set -eu
fuzzer=$1 work=$2 seconds=${LODE_FUZZ_SECONDS:-60}
seeds=$(cd "$(dirname "$0")" && pwd)/seeds
mkdir -p "$work/corpus" "$work/artifacts"
exec "$fuzzer" "$work/corpus" "$seeds" -max_total_time="$seconds" -timeout=10 -rss_limit_mb=2048 -max_len=1024 -len_control=0 \
  -detect_leaks=1 -print_final_stats=1 -artifact_prefix="$work/artifacts/" </dev/null
