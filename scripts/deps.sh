#!/usr/bin/env bash
# Installs what headroom needs to build and test, with apt-get, only where it
# is missing. Safe to run again. Packages:
#   flex, bison          scanner and parser generators (grammar/)
#   libcmocka-dev        unit-test framework (tests/)
#   ngspice              reference simulator for the comparison tests
#   libxml2-utils        xmllint, to check XML reports are well formed
#   python3              runs the comparison scripts in tests/
#   python3-jsonschema   validates the JSON report against docs/report.schema.json
#   time                 /usr/bin/time, peak memory in make bench
set -euo pipefail

need=()
command -v flex >/dev/null 2>&1 || need+=(flex)
command -v bison >/dev/null 2>&1 || need+=(bison)
[ -f /usr/include/cmocka.h ] || need+=(libcmocka-dev)
command -v ngspice >/dev/null 2>&1 || need+=(ngspice)
command -v xmllint >/dev/null 2>&1 || need+=(libxml2-utils)
command -v python3 >/dev/null 2>&1 || need+=(python3)
/usr/bin/python3 -c 'import jsonschema' >/dev/null 2>&1 || need+=(python3-jsonschema)
[ -x /usr/bin/time ] || need+=(time)
command -v cc >/dev/null 2>&1 || need+=(gcc)
command -v make >/dev/null 2>&1 || need+=(make)

if [ ${#need[@]} -eq 0 ]; then
	echo "deps: everything is installed"
	exit 0
fi

echo "deps: installing ${need[*]}"
sudo=""
if [ "$(id -u)" -ne 0 ]; then
	if command -v sudo >/dev/null 2>&1; then
		sudo="sudo"
	else
		echo "deps: not root and no sudo; install by hand: apt-get install ${need[*]}" >&2
		exit 1
	fi
fi
if ! $sudo apt-get update -qq || \
   ! DEBIAN_FRONTEND=noninteractive $sudo apt-get install -y -qq "${need[@]}" >/dev/null; then
	echo "deps: apt-get failed; install by hand: apt-get install ${need[*]}" >&2
	exit 1
fi
echo "deps: done"
