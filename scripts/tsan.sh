#!/usr/bin/env bash
# Thread safety of batch mode: the ThreadSanitizer build of headroom checks
# the tests' decks, the examples and the third-party corpus with -j 4, in
# every report format, with a waiver file and a baseline shared by all
# workers, and once with --verify over the decks the solver can take. Any
# ThreadSanitizer report fails the run (halt_on_error).
# Usage: scripts/tsan.sh BUILD/headroom
set -u
bin=$1
root=$(cd "$(dirname "$0")/.." && pwd)
corpus=${HEADROOM_CORPUS:-$root/../shared/corpus/real}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
export TSAN_OPTIONS="halt_on_error=1 exitcode=66 second_deadlock_stack=1"
inputs=("$root/examples" "$root/tests/data")
[ -d "$corpus" ] && inputs+=("$corpus")
printf '*@waive * X* reason="shared by every worker"\n*@waive cap-derating C* reason="shared too" until=2020-01-01\n' > "$tmp/w.txt"
"$bin" check -j 4 --format json --fail-on never --parts "$root/examples/parts.csv" \
	--write-baseline "$tmp/base.json" "${inputs[@]}" > /dev/null 2> "$tmp/err" 
rc=$?
fail=0
if [ $rc -eq 66 ] || grep -q ThreadSanitizer "$tmp/err"; then
	grep -A30 'WARNING: ThreadSanitizer' "$tmp/err" | head -60
	fail=1
fi
runs=1
for fmt in text csv junit sarif html; do
	"$bin" check -j 4 --format $fmt --fail-on never --parts "$root/examples/parts.csv" \
		--waivers "$tmp/w.txt" --baseline "$tmp/base.json" --today 2026-12-01 \
		"${inputs[@]}" > /dev/null 2> "$tmp/err"
	rc=$?
	runs=$((runs + 1))
	if [ $rc -eq 66 ] || grep -q ThreadSanitizer "$tmp/err"; then
		echo "tsan: FAIL --format $fmt"
		grep -A30 'WARNING: ThreadSanitizer' "$tmp/err" | head -60
		fail=1
	fi
done
# --verify: the solver (and KLU) on four threads at once
"$bin" check -j 4 --verify --format json --fail-on never "$root/examples" "$root/tests/data/sim" \
	"$root/tests/data/topo" > /dev/null 2> "$tmp/err"
rc=$?
runs=$((runs + 1))
if [ $rc -eq 66 ] || grep -q ThreadSanitizer "$tmp/err"; then
	echo "tsan: FAIL --verify"
	grep -A30 'WARNING: ThreadSanitizer' "$tmp/err" | head -60
	fail=1
fi
echo "tsan: $runs batch runs with -j 4 over ${#inputs[@]} input trees: $([ $fail = 0 ] && echo 'no reports' || echo 'REPORTS FOUND')"
exit $fail
