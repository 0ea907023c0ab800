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
runs=0
fail=0
# One batch run of headroom check (arguments as given); a report fails it.
tsan_run() { # label, arguments...
	local label=$1
	shift
	"$bin" check -j 4 --fail-on never "$@" > /dev/null 2> "$tmp/err"
	local rc=$?
	runs=$((runs + 1))
	if [ $rc -eq 66 ] || grep -q ThreadSanitizer "$tmp/err"; then
		echo "tsan: FAIL $label"
		grep -A30 'WARNING: ThreadSanitizer' "$tmp/err" | head -60
		fail=1
	fi
}
tsan_run "--write-baseline" --format json --parts "$root/examples/parts.csv" \
	--write-baseline "$tmp/base.json" "${inputs[@]}"
for fmt in text csv junit sarif html; do
	tsan_run "--format $fmt" --format $fmt --parts "$root/examples/parts.csv" \
		--waivers "$tmp/w.txt" --baseline "$tmp/base.json" --today 2026-12-01 "${inputs[@]}"
done
# --report: every format from one analysis, each job writing six buffers
tsan_run "--report" --format json --parts "$root/examples/parts.csv" --today 2026-12-01 \
	--report text="$tmp/r.txt" --report csv="$tmp/r.csv" --report junit="$tmp/r.xml" \
	--report sarif="$tmp/r.sarif" --report html="$tmp/r.html" "${inputs[@]}"
# --verify: the solver (and KLU) on four threads at once
tsan_run "--verify" --verify --format json "$root/examples" "$root/tests/data/sim" "$root/tests/data/topo"
echo "tsan: $runs batch runs with -j 4 over ${#inputs[@]} input trees: $([ $fail = 0 ] && echo 'no reports' || echo 'REPORTS FOUND')"
exit $fail
