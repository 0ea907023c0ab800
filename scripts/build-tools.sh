#!/bin/sh
# build-tools.sh CC: checks that what building build/headroom needs is
# installed (the C compiler CC, ar, bison, flex, SuiteSparse's KLU header) and
# names the Debian package of each missing one. Installs nothing: `make`
# calls it before compiling; scripts/deps.sh installs these and what the tests
# need. Exit 0 when all are there, 1 otherwise.
cc=${1:-cc}
missing=""
need() { missing="$missing $1"; echo "make: $2 is missing: install the Debian package $1" >&2; }
compiler_package() {
	case ${1##*/} in
	clang*) echo clang ;;
	*) echo gcc ;;
	esac
}
cc_cmd=${cc%% *}
if ! command -v "$cc_cmd" >/dev/null 2>&1; then
	need "$(compiler_package "$cc_cmd")" "the C compiler '$cc_cmd'"
elif ! echo '#include <klu.h>' | $cc -I/usr/include/suitesparse -E -x c - >/dev/null 2>&1; then
	need libsuitesparse-dev "the KLU header klu.h (SuiteSparse)"
fi
command -v ar >/dev/null 2>&1 || need binutils "ar"
command -v bison >/dev/null 2>&1 || need bison "bison (the parser generator)"
command -v flex >/dev/null 2>&1 || need flex "flex (the scanner generator)"
if [ -n "$missing" ]; then
	echo "make: apt-get install$missing (or bash scripts/deps.sh, which also installs what make check needs)" >&2
	exit 1
fi
