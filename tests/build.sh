#!/usr/bin/env bash
# How headroom is built, on copies of the sources in a temporary folder:
#  - a plain `make` (and `make all`, `make build/headroom`) never runs a
#    package manager: their dry runs (make -n) name neither apt-get nor
#    scripts/deps.sh, while `make check`'s does (it installs what the tests
#    need);
#  - with bison or flex missing from PATH, `make` stops before compiling and
#    names the Debian package to install;
#  - --version: include/version.h's number outside git; in a git checkout the
#    tag (v dropped), -dirty with uncommitted changes, the commits since the
#    tag after one more commit, only the files that print the version
#    compiled again; with no tag the number and the commit
#    (scripts/version.sh);
#  - the binary under test prints what scripts/version.sh says of this
#    checkout.
# Ends with "build: N passed, N failed".
set -u
bin=${HEADROOM:-build/headroom}
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/.." && pwd)
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
pass=0 fail=0
check() {
	local name=$1
	shift
	if "$@"; then pass=$((pass + 1)); else fail=$((fail + 1)); echo "build: FAIL $name"; fi
}
# A make above this one (make check, make asan) must not hand its variables
# (BUILD, SAN) or job server to the makes here.
unset MAKEFLAGS MFLAGS MAKELEVEL MAKEOVERRIDES BUILD SAN OPT
export GIT_CEILING_DIRECTORIES=$tmp
release=$(sed -n 's/^#define HEADROOM_VERSION "\(.*\)"$/\1/p' "$root/include/version.h")

copy() { # DEST: the sources, without a build folder or git
	mkdir -p "$1"
	for d in .gitignore Makefile src include grammar scripts rules docs tests; do
		cp -r "$root/$d" "$1/"
	done
}
src=$tmp/src
copy "$src"

# --- no package manager in a plain make --------------------------------
for goal in "" all build/headroom; do
	make -n -C "$src" $goal > "$tmp/dry.txt" 2>&1
	check "make -n ${goal:-(default goal)} runs" test $? -eq 0
	check "make -n ${goal:-(default goal)} names neither apt-get nor deps.sh" \
		bash -c "! grep -q 'apt-get\\|deps\\.sh' '$tmp/dry.txt'"
done
make -n -C "$src" check > "$tmp/dry.txt" 2>&1
check "make -n check does name scripts/deps.sh (the test looks for the right words)" \
	grep -q 'deps\.sh' "$tmp/dry.txt"

# --- a missing build tool is named, with its package -------------------
mkdir -p "$tmp/bin"
for d in /usr/local/bin /usr/bin /bin; do
	for f in "$d"/*; do
		n=${f##*/}
		[ -e "$tmp/bin/$n" ] || ln -s "$f" "$tmp/bin/$n"
	done
done
for tool in bison flex; do
	rm -f "$tmp/bin/$tool"
	PATH=$tmp/bin make -C "$src" > "$tmp/miss.out" 2> "$tmp/miss.err"
	rc=$?
	check "without $tool, make fails" test $rc -ne 0
	check "and names the Debian package $tool" grep -q "install the Debian package $tool" "$tmp/miss.err"
	check "before compiling anything" test ! -e "$src/build/obj"
	ln -s "$(command -v $tool)" "$tmp/bin/$tool"
	rm -rf "$src/build"
done

# --- the version ----------------------------------------------------------
git_q() { git -C "$src" -c user.email=builder@example.org -c user.name=Builder "$@" > /dev/null; }
make -C "$src" -j 2 > "$tmp/make.log" 2>&1
check "outside git, --version is include/version.h's number" \
	test "$("$src/build/headroom" --version)" = "headroom $release"
git -C "$src" init -q && git_q add -A && git_q commit -m "first" && git -C "$src" tag v7.1.2
make -C "$src" -j 2 > "$tmp/make.log" 2>&1
check "built from a tagged commit, --version is the tag" \
	test "$("$src/build/headroom" --version)" = "headroom 7.1.2"
check "only the files that print the version are compiled again" \
	test "$(grep -c '^  CC' "$tmp/make.log")" -eq "$(grep -l '"version.h"' "$src"/src/*.c | wc -l)"
check "the JSON report names the same version" bash -c \
	"'$src/build/headroom' check --format json '$root/examples/sensor_restorer.cir' 2>/dev/null | grep -q '\"version\": \"7.1.2\"'"
echo "* a change" >> "$src/rules/basic.profile"
make -C "$src" -j 2 > "$tmp/make.log" 2>&1
check "with uncommitted changes, -dirty" test "$("$src/build/headroom" --version)" = "headroom 7.1.2-dirty"
git_q commit -a -m "second"
make -C "$src" -j 2 > "$tmp/make.log" 2>&1
hash=$(git -C "$src" rev-parse --short HEAD)
check "one commit after the tag, the count and the commit" \
	test "$("$src/build/headroom" --version)" = "headroom 7.1.2-1-g$hash"
make -C "$src" > "$tmp/make.log" 2>&1
check "nothing is compiled again when nothing changed" bash -c "! grep -q '^  CC\\|^cc ' '$tmp/make.log'"

# scripts/version.sh alone: no tag, and a tag with a character C cannot hold.
git -C "$src" tag -d v7.1.2 > /dev/null
check "with no tag, the commit (--version: the number, +g, the commit)" \
	grep -qx "#define HEADROOM_GIT_DESCRIBE \"$hash\"" <(sh "$src/scripts/version.sh" "$src")
check "with no tag, HEADROOM_GIT_TAGGED 0" grep -qx "#define HEADROOM_GIT_TAGGED 0" <(sh "$src/scripts/version.sh" "$src")
git -C "$src" tag 'rel"3\x' 2> /dev/null || git -C "$src" tag 'rel"3'
check "a tag's quote never reaches the C string" bash -c \
	"sh '$src/scripts/version.sh' '$src' | grep -qx '#define HEADROOM_GIT_DESCRIBE \"rel_3[^\"]*\"'"
mkdir -p "$src/sub/in"
check "a folder inside another checkout is not that checkout" \
	bash -c "! sh '$src/scripts/version.sh' '$src/sub/in' | grep -q define"

# --- the binary under test ------------------------------------------------
want=$(sh "$root/scripts/version.sh" "$root" | sed -n 's/^#define HEADROOM_GIT_DESCRIBE "\(.*\)"$/\1/p')
if sh "$root/scripts/version.sh" "$root" | grep -qx '#define HEADROOM_GIT_TAGGED 1'; then
	want="headroom $want"
elif [ -n "$want" ]; then
	want="headroom $release+g$want"
else
	want="headroom $release"
fi
check "$bin --version prints '$want' (this checkout)" test "$("$bin" --version)" = "$want"

echo "build: $pass passed, $fail failed"
[ $fail -eq 0 ]
