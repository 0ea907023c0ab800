#!/usr/bin/env bash
# The test suite under valgrind memcheck: every unit test, then the
# command-line, report and schema tests with headroom run through a
# valgrind wrapper. Any invalid access, use of uninitialised memory or
# leak (definite or indirect) makes valgrind exit 99, which fails the test
# that ran it. Usage: scripts/memcheck.sh BUILD
set -eu
build=$1
root=$(cd "$(dirname "$0")/.." && pwd)
vg="valgrind -q --error-exitcode=99 --leak-check=full --errors-for-leak-kinds=definite,indirect --show-leak-kinds=definite,indirect"
wrap=$build/vg/headroom
mkdir -p "$build/vg"
printf '#!/bin/sh\nexec %s "%s" "$@"\n' "$vg" "$(cd "$build" && pwd)/headroom" > "$wrap"
chmod +x "$wrap"
for t in "$build"/test_*; do
	echo "== valgrind $t"
	$vg "$t" > /dev/null
done
cd "$root"
HEADROOM=$wrap bash tests/cli.sh
HEADROOM=$wrap python3 tests/report_schema.py
HEADROOM=$wrap HEADROOM_CORPUS=/nonexistent bash tests/reports.sh
echo "memcheck: clean"
