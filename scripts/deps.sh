#!/usr/bin/env bash
# Installs what headroom needs to build and test, with apt-get, only where it
# is missing. Safe to run again. Packages:
#   flex, bison          scanner and parser generators (grammar/)
#   libcmocka-dev        unit-test framework (tests/)
#   libsuitesparse-dev   KLU, the sparse LU of the transient solver (src/simmat.c)
#   libcsv-dev           the CSV reader of --bom (src/bom.c)
#   libinih-dev          INI reader of the project configuration (src/cli_config.c)
#   ngspice              reference simulator for the comparison tests
#   libxml2-utils        xmllint, to check XML reports are well formed
#   python3              runs the comparison scripts in tests/
#   python3-jsonschema   validates the JSON report against docs/report.schema.json
#   time                 /usr/bin/time, peak memory in make bench
#   npm                  fetches the official SARIF validator (npm registry:
#                        @microsoft/sarif-multitool) into .tools/
#   chromium             headless browser for the HTML report test
#   valgrind             make memcheck
#   git                  the version (scripts/version.sh) and the hook tests
#   clang                make fuzz only (libFuzzer): with --fuzz
set -euo pipefail

need=()
command -v flex >/dev/null 2>&1 || need+=(flex)
command -v bison >/dev/null 2>&1 || need+=(bison)
[ -f /usr/include/cmocka.h ] || need+=(libcmocka-dev)
[ -f /usr/include/suitesparse/klu.h ] || need+=(libsuitesparse-dev)
[ -f /usr/include/csv.h ] || need+=(libcsv-dev)
[ -f /usr/include/ini.h ] || need+=(libinih-dev)
command -v ngspice >/dev/null 2>&1 || need+=(ngspice)
command -v xmllint >/dev/null 2>&1 || need+=(libxml2-utils)
command -v python3 >/dev/null 2>&1 || need+=(python3)
/usr/bin/python3 -c 'import jsonschema' >/dev/null 2>&1 || need+=(python3-jsonschema)
[ -x /usr/bin/time ] || need+=(time)
command -v cc >/dev/null 2>&1 || need+=(gcc)
command -v make >/dev/null 2>&1 || need+=(make)
command -v git >/dev/null 2>&1 || need+=(git)
command -v npm >/dev/null 2>&1 || need+=(npm)
command -v chromium >/dev/null 2>&1 || need+=(chromium)
command -v valgrind >/dev/null 2>&1 || need+=(valgrind)
if [ "${1:-}" = --fuzz ]; then
	command -v clang >/dev/null 2>&1 || need+=(clang)
fi

root=$(cd "$(dirname "$0")/.." && pwd)

# The SARIF validator: a self-contained program from the npm registry.
sarif_tool() {
	local bin="$root/.tools/node_modules/@microsoft/sarif-multitool-linux/Sarif.Multitool"
	[ -x "$bin" ] && return 0
	command -v npm >/dev/null 2>&1 || return 1
	echo "deps: installing the SARIF validator (@microsoft/sarif-multitool) into .tools/"
	mkdir -p "$root/.tools"
	# three tries, a registry's hiccup being the usual failure; the
	# last try's messages are shown when all fail
	local try
	for try in 1 2 3; do
		npm install --prefix "$root/.tools" --no-audit --no-fund --silent \
			@microsoft/sarif-multitool@5.7.0 > "$root/.tools/npm.log" 2>&1 && break
		[ $try -eq 3 ] && { tail -5 "$root/.tools/npm.log" >&2; return 1; }
		echo "deps: npm failed (try $try of 3); trying again in $((try * 10)) s"
		sleep $((try * 10))
	done
	chmod u+x "$bin" 2>/dev/null
	[ -x "$bin" ]
}

if [ ${#need[@]} -eq 0 ]; then
	sarif_tool || echo "deps: could not install the SARIF validator: run npm install --prefix .tools @microsoft/sarif-multitool" >&2
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
sarif_tool || echo "deps: could not install the SARIF validator: run npm install --prefix .tools @microsoft/sarif-multitool" >&2
echo "deps: done"
