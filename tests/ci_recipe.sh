#!/usr/bin/env bash
# The recipes of docs/ci.md, run as written:
#  - the CI job (the fenced block marked `sh ci-job`) in a temporary design
#    repository laid out as the page says: headroom's sources copied to
#    tools/headroom (the job builds them), the shipped examples as the design;
#    its exit status for each case the page's table names (1 errors found,
#    0 passed, 2 a netlist with errors, 2 a usage error) and its reports:
#    SARIF valid JSON with results located in the design's files, JUnit well
#    formed (xmllint), the HTML page whole;
#  - scripts/pre-commit installed in a temporary git repository: a clean
#    netlist is committed, one with a part over its rating is refused, the
#    staged copy is what is checked, a netlist with errors is refused, the
#    parts table and the git config settings are used, a commit with no
#    netlist needs no headroom.
# Ends with "ci_recipe: N passed, N failed".
set -u
bin=${HEADROOM:-build/headroom}
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/.." && pwd)
abs_bin=$(cd "$(dirname "$bin")" && pwd)/$(basename "$bin")
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
pass=0 fail=0
check() {
	local name=$1
	shift
	if "$@"; then pass=$((pass + 1)); else fail=$((fail + 1)); echo "ci_recipe: FAIL $name"; fi
}
# A make above this one (make check, make asan) must not hand its variables
# (BUILD, SAN) or job server to the job's own make.
unset MAKEFLAGS MFLAGS MAKELEVEL MAKEOVERRIDES BUILD SAN OPT

# --- the CI job ---------------------------------------------------------
awk '/^```sh ci-job$/ { on = 1; next } on && /^```/ { exit } on' "$root/docs/ci.md" > "$tmp/job.sh"
check "docs/ci.md has the ci-job block" test -s "$tmp/job.sh"

proj=$tmp/design
mkdir -p "$proj/tools/headroom" "$proj/hardware/netlists"
for d in Makefile src include grammar scripts rules docs; do
	cp -r "$root/$d" "$proj/tools/headroom/"
done
cp "$root"/examples/*.cir "$proj/hardware/netlists/"
cp "$root/examples/parts.csv" "$proj/hardware/parts.csv"

run_job() { (cd "$proj" && bash -e "$tmp/job.sh") > "$tmp/job.log" 2>&1; }

sarif_ok() { # FILE LEVEL-EXPECTED(any|none) SUCCESSFUL(True|False)
	python3 -c "
import json, sys
d = json.load(open('$1'))
run = d['runs'][0]
levels = [r['level'] for r in run['results']]
uris = [r['locations'][0]['physicalLocation']['artifactLocation']['uri'] for r in run['results'] if r.get('locations')]
assert d['version'] == '2.1.0'
assert ('error' in levels) == ('$2' == 'any'), levels
assert uris and all(u.startswith('hardware/') for u in uris), uris
assert run['invocations'][0]['executionSuccessful'] is $3
"
}
reports_ok() { # LEVEL SUCCESSFUL
	sarif_ok "$proj/reports/headroom.sarif" "$1" "$2" &&
		xmllint --noout "$proj/reports/headroom.junit.xml" &&
		grep -q '^<!DOCTYPE html>' "$proj/reports/headroom.html" &&
		grep -q '</html>' "$proj/reports/headroom.html"
}

start=$(date +%s)
run_job
rc=$?
echo "ci_recipe: the job (with its build of headroom) took $(($(date +%s) - start)) s"
check "the job exits 1 on the shipped examples (they have errors)" test $rc -eq 1
[ $rc -eq 1 ] || tail -20 "$tmp/job.log"
check "the job built headroom without installing anything" \
	bash -c "test -x '$proj/tools/headroom/build/headroom' && ! grep -q 'deps\\|apt-get' '$tmp/job.log'"
check "its SARIF, JUnit and HTML reports are written and valid" reports_ok any True
check "the JUnit report fails the over-rated parts" grep -q '<failure' "$proj/reports/headroom.junit.xml"
check "the log has the findings" grep -q 'error: .*\[cap-overvoltage\]' "$tmp/job.log"

# Only the examples without errors: the job passes.
rm -r "$proj/reports" "$proj/hardware/netlists"/{charge_pump,detector_bias_ladder,mains_doubler}.cir
run_job
rc=$?
check "the job exits 0 on a design without errors" test $rc -eq 0
check "and writes every report, with no error in the SARIF" reports_ok none True

# A netlist with errors: exit 2, the reports written and saying so.
rm -r "$proj/reports"
printf 'Bias network, one value mistyped\nC1 a 0 4.7k7\nR1 a 0 1k\n.end\n' > "$proj/hardware/netlists/typo.cir"
run_job
rc=$?
check "the job exits 2 when a netlist cannot be checked" test $rc -eq 2
check "and still writes the reports (SARIF: execution not successful)" reports_ok none False
check "the netlist error is located in the log" grep -q 'hardware/netlists/typo.cir:2:.*error' "$tmp/job.log"

# A usage error (no parts table): exit 2 and no report.
rm -r "$proj/reports" "$proj/hardware/netlists/typo.cir" "$proj/hardware/parts.csv"
run_job
rc=$?
check "the job exits 2 on a usage error (a missing parts table)" test $rc -eq 2
check "and writes no report" test ! -e "$proj/reports/headroom.sarif" -a ! -e "$proj/reports/headroom.html"

# --- the pre-commit hook -----------------------------------------------
repo=$tmp/repo
mkdir -p "$repo/hw"
git -C "$repo" init -q
git -C "$repo" config user.email designer@example.org
git -C "$repo" config user.name Designer
install -m 755 "$root/scripts/pre-commit" "$repo/.git/hooks/pre-commit"
export HEADROOM=$abs_bin
# A sanitizer build (build/asan/headroom) does not find rules/ beside it.
export HEADROOM_RULES=$root/rules
clamp() { # RATING: a clamp whose capacitor sees 12.6 V worst case
	printf '%s\n' 'Level shifter for a bench probe: a clamp on a 12 V peak drive' \
		'VDRV drv 0 SIN(0 12 1k)' 'RS   drv a  220' 'CSH  a   out 1u' \
		"*@part CSH v_rated=$1 kind=ceramic-x7r" 'DCL  0   out DFAST' 'RL   out 0  47k' \
		'.model DFAST D(IS=1n BV=75)' '.end'
}
commits() { git -C "$repo" rev-list --count HEAD 2>/dev/null || echo 0; }
commit() { (cd "$repo" && git add -A hw && git commit -q -m "$1") > "$tmp/hook.out" 2> "$tmp/hook.err"; }

clamp 50V > "$repo/hw/shifter.cir"
commit "clean"
check "the hook lets a clean netlist be committed" test "$(commits)" = 1

clamp 6.3V > "$repo/hw/shifter.cir"
commit "over-rated"
check "the hook refuses a part over its rating" test "$(commits)" = 1
# (git sends a hook's standard output to its standard error)
check "and says why, with the finding" bash -c \
	"grep -q 'commit refused' '$tmp/hook.err' && grep -q 'CSH sees .*above its 6.3 V rating \\[cap-overvoltage\\]' '$tmp/hook.err'"

# Staged over-rated, fixed only in the work tree: still refused.
clamp 63V > "$repo/hw/shifter.cir"
(cd "$repo" && git commit -q -m "fixed but not staged") > "$tmp/hook.out" 2> "$tmp/hook.err"
check "the hook checks the staged copy, not the work tree" test "$(commits)" = 1
commit "fixed"
check "the fix, once staged, is committed" test "$(commits)" = 2

printf 'Mistyped\nC1 a 0 4.7k7\nR1 a 0 1k\n.end\n' > "$repo/hw/typo.sp"
commit "typo"
check "the hook refuses a netlist with errors" test "$(commits)" = 2
check "and names the error's place" grep -q 'hw/typo.sp:2:.*error' "$tmp/hook.err"
rm "$repo/hw/typo.sp"
git -C "$repo" reset -q

# The parts table at the top folder rates a part with no *@part line.
clamp 50V | grep -v '^\*@part' > "$repo/hw/bare.cir"
printf 'ref,kind,v_rated\nCSH,ceramic-x7r,10V\n' > "$repo/parts.csv"
git -C "$repo" add parts.csv
commit "bare"
check "the hook uses parts.csv at the top folder" \
	bash -c "test \"\$(git -C '$repo' rev-list --count HEAD)\" = 2 && grep -q 'above its 10 V rating' '$tmp/hook.err'"
git -C "$repo" reset -q
rm "$repo/hw/bare.cir" "$repo/parts.csv"

# headroom.options: a part over its derated limit but under its rating is a
# warning, refused only with --fail-on warning.
clamp 16V > "$repo/hw/warn.cir"
git -C "$repo" config headroom.options "--fail-on warning"
commit "warning, refused"
check "headroom.options reaches headroom (--fail-on warning refuses a warning)" \
	bash -c "test \"\$(git -C '$repo' rev-list --count HEAD)\" = 2 && grep -q 'cap-derating' '$tmp/hook.err'"
git -C "$repo" config --unset headroom.options
commit "warning, allowed"
check "without it a warning does not stop the commit" test "$(commits)" = 3

# headroom.netlistExt: a .nl file is checked only once its ending is added.
clamp 6.3V > "$repo/hw/bench.nl"
commit "nl, not a netlist ending"
check "a staged file with another ending is not checked" test "$(commits)" = 4
clamp 4V > "$repo/hw/bench.nl"
git -C "$repo" config headroom.netlistExt +.nl
commit "nl, checked"
check "headroom.netlistExt +.nl adds the ending" \
	bash -c "test \"\$(git -C '$repo' rev-list --count HEAD)\" = 4 && grep -q 'bench.nl:.*above its 4 V rating' '$tmp/hook.err'"
git -C "$repo" reset -q --hard

echo "notes" > "$repo/README"
git -C "$repo" add README
(cd "$repo" && HEADROOM=/nonexistent/headroom git commit -q -m "readme") > /dev/null 2>&1
check "a commit with no netlist needs no headroom" test "$(commits)" = 5
clamp 50V > "$repo/hw/second.cir"
(cd "$repo" && git add hw && HEADROOM=/nonexistent/headroom git commit -q -m "second") > /dev/null 2> "$tmp/hook.err"
check "a netlist with no headroom to check it is refused, saying why" \
	bash -c "test \"\$(git -C '$repo' rev-list --count HEAD)\" = 5 && grep -q 'not found' '$tmp/hook.err'"

echo "ci_recipe: $pass passed, $fail failed"
[ $fail -eq 0 ]
