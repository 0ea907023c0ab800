#!/usr/bin/env bash
# Runs the test suites named in a list file (one command line each, `#`
# comments), LANES at a time (default 2: the machine the test command is
# sized for has two cores), longest first as the list orders them. Each
# suite's output is kept and printed whole when it ends, so that lanes
# never interleave; a summary of the failed suites follows. Exit 1 when
# any suite failed. Every suite must be safe to run beside another (its
# own temporary folders, nothing written into the tree).
#
# usage: scripts/suites.sh LIST
set -uo pipefail
list=${1:?usage: scripts/suites.sh LIST}
lanes=${LANES:-2}
logs=$(mktemp -d)
trap 'rm -rf "$logs"' EXIT

mapfile -t cmds < <(sed -e 's/#.*//' -e '/^[[:space:]]*$/d' "$list")
declare -A pid_of=() name_of=()
failed=()
start=$SECONDS

finish() { # pid status
	local p=$1 rc=$2
	local k=${pid_of[$p]}
	cat "$logs/$k.log"
	printf '== %s: %s (%d s)\n' "${name_of[$p]}" "$([ "$rc" -eq 0 ] && echo passed || echo "FAILED, exit $rc")" \
		"$(cat "$logs/$k.time" 2>/dev/null || echo 0)"
	if [ "$rc" -ne 0 ]; then
		failed+=("${name_of[$p]}")
		cp "$logs/$k.log" "$logs/failed.${#failed[@]}.log"
	fi
	unset "pid_of[$p]" "name_of[$p]"
}

for k in "${!cmds[@]}"; do
	while [ "${#pid_of[@]}" -ge "$lanes" ]; do
		rc=0
		wait -n -p done_pid || rc=$?
		finish "$done_pid" "$rc"
	done
	cmd=${cmds[$k]}
	( s=$SECONDS; bash -c "$cmd" > "$logs/$k.log" 2>&1; rc=$?; echo $((SECONDS - s)) > "$logs/$k.time"; exit $rc ) &
	pid_of[$!]=$k
	name_of[$!]=$cmd
done
while [ "${#pid_of[@]}" -gt 0 ]; do
	rc=0
	wait -n -p done_pid || rc=$?
	finish "$done_pid" "$rc"
done

echo "suites: ${#cmds[@]} run in $((SECONDS - start)) s, $lanes at a time; ${#failed[@]} failed"
# Each failed suite with the lines of its log that name a failure (at
# most 20), so that the end of the output alone says what broke.
for i in "${!failed[@]}"; do
	echo "  FAILED: ${failed[$i]}"
	grep -E 'FAIL|Error:|Traceback|AddressSanitizer|runtime error:|LOOSE|UNSOUND|MISSING' \
		"$logs/failed.$((i + 1)).log" | head -20 | sed 's/^/    | /'
done
[ "${#failed[@]}" -eq 0 ]
