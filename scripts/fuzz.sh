#!/usr/bin/env bash
# Runs every fuzz harness of tests/fuzz/ under libFuzzer (clang, with
# AddressSanitizer and UndefinedBehaviorSanitizer) for FUZZ_SECONDS each
# (default 60). Limits per input: 1 s (-timeout), 256 MB allocated
# (-malloc_limit_mb); the whole process, with libFuzzer's own corpus and
# ASan's quarantine (cut to 64 MB), may use 512 MB (-rss_limit_mb). The working corpus grows in build/fuzz/corpus/NAME
# (seeded from the fixtures that `make check` replays); a crash, leak,
# timeout or out-of-memory input is saved as build/fuzz/crashes/NAME-*
# and fails the run: copy it into tests/fuzz/crashes/NAME/ with the fix so
# that `make check` replays it from then on.
# Prints executions per harness and the total.
# Usage: scripts/fuzz.sh BUILD_DIR HARNESS... (set SEEDS_<name> in the env)
set -u
build=$1
shift
secs=${FUZZ_SECONDS:-60}
root=$(cd "$(dirname "$0")/.." && pwd)
cd "$root" || exit 2
total=0 fail=0
for h in "$@"; do
	var="SEEDS_$h"
	mkdir -p "$build/corpus/$h" "$build/crashes"
	log="$build/$h.log"
	dirs=()
	for s in ${!var}; do
		# libFuzzer reads folders only: single seed files join the corpus
		if [ -f "$s" ]; then cp "$s" "$build/corpus/$h/"; else dirs+=("$s"); fi
	done
	ASAN_OPTIONS="quarantine_size_mb=64:detect_leaks=1" \
	"$build/fuzz_$h" -max_total_time="$secs" -timeout=1 -rss_limit_mb=512 \
		-malloc_limit_mb=256 -max_len=65536 -print_final_stats=1 \
		-dict=tests/fuzz/spice.dict -artifact_prefix="$build/crashes/$h-" \
		"$build/corpus/$h" "${dirs[@]}" tests/fuzz/crashes/$h > "$log" 2>&1
	rc=$?
	runs=$(grep -o 'stat::number_of_executed_units: *[0-9]*' "$log" | grep -o '[0-9]*$' | tail -1)
	runs=${runs:-0}
	total=$((total + runs))
	if [ $rc -ne 0 ]; then
		fail=1
		echo "fuzz: $h: FAILED after $runs executions (exit $rc); see $log"
		grep -m3 -E 'ERROR|SUMMARY|Test unit written' "$log"
	else
		echo "fuzz: $h: $runs executions in ${secs} s, clean"
	fi
done
echo "fuzz: total $total executions"
exit $fail
