#!/usr/bin/env bash
# Reports and CI behaviour of `headroom check`:
#  - every format on the examples against the checked-in files in
#    tests/expected/ (refresh with `make expected`, then review the diff);
#  - SARIF validated by the official validator (@microsoft/sarif-multitool,
#    npm registry, installed into .tools/ by scripts/deps.sh): no errors, no
#    warnings; JUnit well formed (xmllint); CSV rectangular;
#  - exit codes for each --fail-on level, a baseline round trip, waivers
#    and their expiry (--today), an output file left alone by a failed run;
#  - every file seen, every netlist error and reader warning in every format
#    (tests/data/files, read back by tests/report_files.py), and the counts
#    of files seen, checked, not checked and skipped alike in every format
#    over the third-party corpus;
#  - -j 1 and -j 4 byte-identical over the third-party corpus (the -j 4 run
#    writing the five other formats with --report);
#  - --report: several reports from one run, each byte-identical to a run
#    of its own; usage errors (bad FORMAT, empty FILE, one file twice)
#    leave every old report alone.
# Ends with "reports: N passed, N failed".
set -u
bin=${HEADROOM:-build/headroom}
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/.." && pwd)
ex=examples
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
pass=0 fail=0
check() {
	local name=$1
	shift
	if "$@"; then pass=$((pass + 1)); else fail=$((fail + 1)); echo "reports: FAIL $name"; fi
}
cd "$root" || exit 1
abs_bin=$(cd "$(dirname "$bin")" && pwd)/$(basename "$bin")

# The help links in SARIF point at this checkout's docs, and the tool's
# version is the build's (git describe, as --version prints it): both made
# neutral here, the version read as include/version.h's release number.
release=$(sed -n 's/^#define HEADROOM_VERSION "\(.*\)"$/\1/p' include/version.h)
build_version=$("$bin" --version | awk '{print $2}')
version_re=$(printf '%s' "$build_version" | sed 's/[.]/[.]/g')
neutral() {
	sed -e "s|file://[^\"]*/docs/|file:///DOCS/|g" \
		-e "s|\"version\": \"$version_re\"|\"version\": \"$release\"|g" "$1"
}

update=${UPDATE_EXPECTED:-}
for fmt in text json csv junit sarif; do
	"$bin" check --format "$fmt" --today 2026-12-01 --fail-on never --parts $ex/parts.csv $ex > "$tmp/out.$fmt" 2>/dev/null
	neutral "$tmp/out.$fmt" > "$tmp/n.$fmt"
	if [ -n "$update" ]; then
		cp "$tmp/n.$fmt" "tests/expected/examples.$fmt"
	fi
	check "$fmt report matches tests/expected/examples.$fmt" diff -u "tests/expected/examples.$fmt" "$tmp/n.$fmt"
done

check "the JSON and SARIF reports name the build's version; SARIF's semanticVersion is the release number" python3 -c "
import json
assert json.load(open('$tmp/out.json'))['tool']['version'] == '$build_version'
d = json.load(open('$tmp/out.sarif'))['runs'][0]['tool']['driver']
assert (d['version'], d['semanticVersion']) == ('$build_version', '$release'), d
"

# --docs-url: the rule links under a published copy of docs/ (a slash added
# when the URL has none); the default stays a file:// URL of the docs.
"$bin" check --format sarif --fail-on never --docs-url https://docs.example.org/headroom/1.0 $ex/sensor_restorer.cir > "$tmp/url.sarif" 2>/dev/null
check "--docs-url: every rule's helpUri is URL/rules/RULE.md, informationUri URL/check.md" python3 -c "
import json
d = json.load(open('$tmp/url.sarif'))['runs'][0]['tool']['driver']
base = 'https://docs.example.org/headroom/1.0/'
assert d['informationUri'] == base + 'check.md', d['informationUri']
assert len(d['rules']) > 5
for r in d['rules']:
    assert r['helpUri'] == base + 'rules/' + r['id'] + '.md', r
"
check "without --docs-url the helpUri is a file:// URL of the docs" python3 -c "
import json
for r in json.load(open('$tmp/out.sarif'))['runs'][0]['tool']['driver']['rules']:
    assert r['helpUri'].startswith('file:///') and r['helpUri'].endswith('/docs/rules/' + r['id'] + '.md'), r
"
"$bin" check --format sarif --docs-url 'docs/rules page' $ex/sensor_restorer.cir > "$tmp/badurl.out" 2> "$tmp/badurl.err"
check "--docs-url with a relative URL or a space is a usage error (exit 2, no report)" \
	bash -c "test $? -eq 2 && test ! -s '$tmp/badurl.out' && grep -q \"docs-url takes an absolute URL.*not 'docs/rules page'\" '$tmp/badurl.err'"

validator=$root/.tools/node_modules/@microsoft/sarif-multitool-linux/Sarif.Multitool
if [ -x "$validator" ]; then
	"$validator" validate "$tmp/out.sarif" > "$tmp/validate.txt" 2>&1
	cat "$tmp/validate.txt" | grep -E "error|warning" | head -5
	check "the official SARIF validator finds no error" bash -c "! grep -q 'error SARIF' '$tmp/validate.txt'"
	check "the official SARIF validator finds no warning" bash -c "! grep -q 'warning SARIF' '$tmp/validate.txt'"
	echo "reports: SARIF validator: $(grep -c 'SARIF[0-9]' "$tmp/validate.txt") messages"
elif [ -n "${CI:-}" ]; then
	check "the SARIF validator is installed (scripts/deps.sh)" false
else
	echo "reports: SKIPPED the SARIF validator is not installed (scripts/deps.sh)"
fi
check "JUnit is well formed XML" xmllint --noout "$tmp/out.junit"
check "CSV rows all have the header's columns" python3 -c "
import csv,sys
rows=list(csv.reader(open('$tmp/out.csv')))
sys.exit(0 if len(rows) > 1 and len({len(r) for r in rows}) == 1 else 1)"

# Files, netlist errors and reader warnings in every format: tests/data/files
# holds a good netlist, one with two errors, one whose noise source is read
# as DC only (a reader warning), a .txt and a .sim file and a hidden one.
for fmt in json sarif junit csv html text; do
	"$bin" check --format "$fmt" --fail-on never tests/data/files > "$tmp/files.$fmt" 2>/dev/null
done
check "the JSON report of the folder: counts, errors and the warning located, skipped files with reasons" python3 -c "
import json,subprocess,sys
r=json.loads(subprocess.run([sys.executable, 'tests/report_files.py', 'json', '$tmp/files.json'], capture_output=True, text=True).stdout)
assert r['counts'] == [6, 3, 1, 2], r['counts']
assert r['diags'] == [
    \"tests/data/files/broken.cir:6:18: error: bad number '4.7k7': digits after the letters of a number with a decimal point or exponent\",
    'tests/data/files/broken.cir:7:18: error: syntax error, unexpected end of line',
    \"tests/data/files/dc_only.sp:14:16: warning: waveform 'TRNOISE' is not understood: only its DC value is used\"], r['diags']
other = 'name does not end in a netlist extension (see --netlist-ext)'
assert r['skipped'] == [['tests/data/files/.hidden.cir', 'hidden file'], ['tests/data/files/notes.txt', other]], r['skipped']
assert r['not_checked'] == ['tests/data/files/broken.cir']
"
for fmt in sarif junit csv html text; do
	check "$fmt carries the same counts, each error and warning located, each skipped file with its reason" \
		python3 tests/report_files.py compare "$tmp/files.json" "$fmt:$tmp/files.$fmt"
done
check "SARIF: a run with netlist errors is not executionSuccessful; the examples' run is" python3 -c "
import json
assert json.load(open('$tmp/files.sarif'))['runs'][0]['invocations'][0]['executionSuccessful'] is False
assert json.load(open('$tmp/out.sarif'))['runs'][0]['invocations'][0]['executionSuccessful'] is True"
check "JUnit: the file not checked is an <error> with the first error's location and message" grep -q '<error type="netlist" message="not checked: 2 netlist errors; the first: tests/data/files/broken.cir:6:18: error: bad number' "$tmp/files.junit"
check "JUnit of the folder is well formed XML" xmllint --noout "$tmp/files.junit"
check "CSV of the folder: every row has the header's columns" python3 -c "
import csv,sys
rows=list(csv.reader(open('$tmp/files.csv')))
sys.exit(0 if len(rows) > 1 and len({len(r) for r in rows}) == 1 else 1)"
check "text: the file not checked says why, on standard output" grep -q '^tests/data/files/broken.cir: not checked: 2 netlist errors$' "$tmp/files.text"
if [ -x "$validator" ]; then
	"$validator" validate "$tmp/files.sarif" > "$tmp/validate2.txt" 2>&1
	check "the official SARIF validator accepts the notifications: no error, no warning" bash -c "! grep -q -E '(error|warning) SARIF' '$tmp/validate2.txt'"
fi

# exit codes
"$bin" check $ex/sensor_restorer.cir >/dev/null 2>&1; check "error level: warnings only -> 0" test $? -eq 0
"$bin" check --fail-on warning $ex/sensor_restorer.cir >/dev/null 2>&1; check "warning level -> 1" test $? -eq 1
"$bin" check --fail-on note $ex/charge_pump.cir >/dev/null 2>&1; check "note level -> 1" test $? -eq 1
"$bin" check --fail-on never --parts $ex/parts.csv $ex >/dev/null 2>&1; check "never -> 0" test $? -eq 0
"$bin" check --parts $ex/parts.csv $ex >/dev/null 2>&1; check "errors present -> 1" test $? -eq 1

# baseline round trip: no new findings against itself; a new one after a change
"$bin" check --fail-on never --write-baseline "$tmp/base.json" --parts $ex/parts.csv $ex >/dev/null 2>&1
check "the baseline is written" test -s "$tmp/base.json"
"$bin" check --format json --baseline "$tmp/base.json" --parts $ex/parts.csv $ex > "$tmp/again.json" 2>/dev/null
rc=$?
check "against its own baseline: no findings, exit 0" bash -c "test $rc -eq 0 && python3 -c \"import json; d=json.load(open('$tmp/again.json')); assert sum(len(f['findings']) for f in d['files']) == 0\""
mkdir -p "$tmp/changed"
cp $ex/*.cir "$tmp/changed/"
sed -i 's/\*@part CCPL v_rated=10V/*@part CCPL v_rated=6.3V/' "$tmp/changed/sensor_restorer.cir"
"$bin" check --write-baseline "$tmp/base2.json" --fail-on never "$ex/sensor_restorer.cir" >/dev/null 2>&1
sed -i "s|\"path\": \"$ex/sensor_restorer.cir\"|\"path\": \"$tmp/changed/sensor_restorer.cir\"|" "$tmp/base2.json"
"$bin" check --baseline "$tmp/base2.json" "$tmp/changed/sensor_restorer.cir" > "$tmp/new.txt" 2>/dev/null
rc=$?
check "after a change only the new finding is reported" bash -c "test $rc -eq 1 && grep -q 'cap-overvoltage' '$tmp/new.txt' && ! grep -q 'cap-derating' '$tmp/new.txt'"
# a baseline rewritten by a tool that escapes every non-ASCII character
# (Python's json.dump) names the same files: \u escapes are decoded
mkdir -p "$tmp/uni"
cp "$ex/mains_doubler.cir" "$tmp/uni/doubleur_µ.cir"
"$bin" check --fail-on never --write-baseline "$tmp/uni/base.json" "$tmp/uni/doubleur_µ.cir" >/dev/null 2>&1
python3 -c "import json,sys; json.dump(json.load(open(sys.argv[1])), open(sys.argv[2], 'w'))" "$tmp/uni/base.json" "$tmp/uni/ascii.json"
"$bin" check --format json --baseline "$tmp/uni/ascii.json" "$tmp/uni/doubleur_µ.cir" > "$tmp/uni/again.json" 2>/dev/null
check "a baseline with \\u escapes (doubleur_\\u00b5.cir) hides its findings" python3 -c "
import json,sys
assert '\\\\u00b5' in open(sys.argv[2]).read()
d=json.load(open(sys.argv[1]))
assert d['summary']['baseline_hidden'] > 0 and sum(len(f['findings']) for f in d['files']) == 0, d['summary']
" "$tmp/uni/again.json" "$tmp/uni/ascii.json"
printf '{"files": [{"path": "a\\ud800.cir", "findings": []}]}' > "$tmp/uni/half.json"
"$bin" check --baseline "$tmp/uni/half.json" "$tmp/uni/doubleur_µ.cir" >/dev/null 2> "$tmp/uni/half.err"
check "half a surrogate pair in a baseline is a located error" grep -q "half.json:1:23: error: .u escape names half of a surrogate pair \[baseline\]" "$tmp/uni/half.err"
# a baseline written from one folder and used from another: files are
# matched by real path, and every summary says how many findings it hid
mkdir -p "$tmp/proj/dir" "$tmp/proj/ci"
cp $ex/sensor_restorer.cir $ex/mains_doubler.cir "$tmp/proj/dir/"
(cd "$tmp/proj" && HEADROOM_RULES="$root/rules" "$abs_bin" check --fail-on never --write-baseline ci/base.json dir/ > /dev/null 2>&1)
(cd "$tmp/proj/dir" && HEADROOM_RULES="$root/rules" "$abs_bin" check --baseline ../ci/base.json . > "$tmp/bl.txt" 2>&1)
rc=$?
check "a baseline written as dir/ hides the same findings when used from inside dir" bash -c "test $rc -eq 0 && grep -q '^2 files seen: 2 checked, 0 not checked, 0 skipped' '$tmp/bl.txt' && grep -q ' 0 errors, 0 warnings, 0 notes' '$tmp/bl.txt' && grep -q '^  baseline: 6 known findings not shown' '$tmp/bl.txt'"
(cd "$tmp/proj/dir" && for f in json sarif junit; do HEADROOM_RULES="$root/rules" "$abs_bin" check --format $f --baseline ../ci/base.json . > "$tmp/bl.$f" 2>/dev/null; done)
check "JSON, SARIF and JUnit say how many known findings the baseline hid" python3 -c "
import json,sys
j=json.load(open(sys.argv[1]))
assert j['summary']['baseline_hidden']==6 and sum(len(f['findings']) for f in j['files'])==0, j['summary']
assert json.load(open(sys.argv[2]))['runs'][0]['properties']['baselineHidden']==6
assert '<property name=\"baseline_hidden\" value=\"6\"/>' in open(sys.argv[3]).read()
" "$tmp/bl.json" "$tmp/bl.sarif" "$tmp/bl.junit"
printf '{"schema": 1, "files": [ {"path": "x", "findings": [ {"rule": 5} ]}\n' > "$tmp/bad.json"
"$bin" check --baseline "$tmp/bad.json" $ex/sensor_restorer.cir > /dev/null 2> "$tmp/bad.err"
check "a broken baseline is a located error" bash -c "test $? -ne 0 && grep -q \"bad.json:2:1: error: expected ',' or ']'\" '$tmp/bad.err'"

# waivers: inline, from a file, expired, unused
sed 's/^\.end$/*@waive cap-derating CCPL reason="input never exceeds 4 V in this product" until=2027-06-30\n.end/' \
	$ex/sensor_restorer.cir > "$tmp/w.cir"
"$bin" check --today 2026-12-01 --fail-on warning "$tmp/w.cir" > "$tmp/w.txt" 2>&1
rc=$?
check "a waived finding is listed as waived and does not fail" bash -c "test $rc -eq 0 && grep -q '\[cap-derating\] (waived)' '$tmp/w.txt' && grep -q 'waived: input never exceeds' '$tmp/w.txt'"
"$bin" check --today 2027-07-01 --fail-on warning "$tmp/w.cir" > "$tmp/w2.txt" 2>&1
rc=$?
check "an expired waiver waives nothing and is a finding" bash -c "test $rc -eq 1 && grep -q 'waiver-expired' '$tmp/w2.txt' && ! grep -q '(waived)' '$tmp/w2.txt'"
"$bin" check --format sarif --today 2026-12-01 "$tmp/w.cir" > "$tmp/w.sarif" 2>/dev/null
check "SARIF carries the waiver as a suppression" grep -q '"suppressions": \[{"kind": "inSource", "justification": "input never exceeds 4 V in this product"}\]' "$tmp/w.sarif"
printf '*@waive diode-overvoltage NOSUCH* reason="old part"\n*@waive cap-derating CCPL reason="checked by hand"\n' > "$tmp/waivers.txt"
"$bin" check --waivers "$tmp/waivers.txt" --fail-on warning $ex/sensor_restorer.cir > "$tmp/wf.txt" 2> "$tmp/wf.err"
rc=$?
check "a waiver file applies to the files checked" bash -c "test $rc -eq 0 && grep -q '(waived)' '$tmp/wf.txt'"
check "an unused waiver is a note, in the report" grep -q "waivers.txt:1:1: note: this waiver matched no finding in any file checked.*\[waiver-unused\]" "$tmp/wf.txt"
"$bin" check --format json --waivers "$tmp/waivers.txt" $ex/sensor_restorer.cir > "$tmp/wf.json" 2>/dev/null
"$bin" check --format sarif --waivers "$tmp/waivers.txt" $ex/sensor_restorer.cir > "$tmp/wf.sarif" 2>/dev/null
check "an unused file waiver reaches JSON (run_findings, counted) and SARIF at its line" python3 -c "
import json,sys
j=json.load(open(sys.argv[1]))
u=[g for g in j['run_findings'] if g['rule']=='waiver-unused']
assert len(u)==1 and u[0]['file'].endswith('waivers.txt') and u[0]['line']==1 and u[0]['part']=='NOSUCH*', j['run_findings']
assert j['summary']['notes']==1 and j['summary']['per_rule'].get('waiver-unused')==1, j['summary']
r=[x for x in json.load(open(sys.argv[2]))['runs'][0]['results'] if x['ruleId']=='waiver-unused']
assert len(r)==1 and r[0]['locations'][0]['physicalLocation']['artifactLocation']['uri'].endswith('waivers.txt'), r
" "$tmp/wf.json" "$tmp/wf.sarif"
check "SARIF marks a waiver from a --waivers file as an external suppression" grep -q '"suppressions": \[{"kind": "external", "justification": "checked by hand"}\]' "$tmp/wf.sarif"
printf '*@waive cap-derating CCPL\n' > "$tmp/noreason.txt"
"$bin" check --waivers "$tmp/noreason.txt" $ex/sensor_restorer.cir > /dev/null 2> "$tmp/nr.err"
check "a waiver without a reason is a located error" bash -c "test $? -eq 2 && grep -q 'noreason.txt:1:.*a waiver needs reason=' '$tmp/nr.err'"

# -o: replaced only when the run succeeds
echo "old report" > "$tmp/report.txt"
"$bin" check --profile nosuch -o "$tmp/report.txt" $ex/sensor_restorer.cir > /dev/null 2>&1
check "a failed run leaves the old report" grep -qx "old report" "$tmp/report.txt"
check "and leaves no temporary file" bash -c "! ls '$tmp' | grep -q 'report.txt.tmp'"
"$bin" check -o "$tmp/report.txt" $ex/sensor_restorer.cir > /dev/null 2>&1
check "a good run replaces it" grep -q "sensor_restorer.cir: 1 structure" "$tmp/report.txt"
rm -f "$tmp/new.txt"
(umask 022 && "$bin" check -o "$tmp/new.txt" $ex/sensor_restorer.cir > /dev/null 2>&1)
check "a new report gets the mode of a plain create (umask 022: 644)" \
	bash -c "test \"\$(stat -c %a '$tmp/new.txt')\" = 644"
chmod 640 "$tmp/report.txt"
"$bin" check -o "$tmp/report.txt" $ex/sensor_restorer.cir > /dev/null 2>&1
check "a replaced report keeps its mode" bash -c "test \"\$(stat -c %a '$tmp/report.txt')\" = 640"

# --report FORMAT=FILE: several reports from one analysis, each the same
# bytes as a run of its own (--today pins the HTML page's date)
same=(--today 2026-12-01 --fail-on never --parts $ex/parts.csv)
for fmt in sarif junit html; do
	"$bin" check "${same[@]}" --format $fmt -o "$tmp/alone.$fmt" $ex 2>/dev/null
done
"$bin" check "${same[@]}" --report sarif="$tmp/one.sarif" --report junit="$tmp/one.junit" \
	--report html="$tmp/one.html" $ex > "$tmp/one.txt" 2>/dev/null
check "--report: one run writes SARIF, JUnit and HTML, each byte-identical to a run of its own" \
	bash -c "cmp '$tmp/alone.sarif' '$tmp/one.sarif' && cmp '$tmp/alone.junit' '$tmp/one.junit' && cmp '$tmp/alone.html' '$tmp/one.html'"
"$bin" check "${same[@]}" $ex > "$tmp/alone.txt" 2>/dev/null
check "--report: the standard output still carries the --format report" cmp "$tmp/alone.txt" "$tmp/one.txt"
"$bin" check "${same[@]}" -j 1 --format sarif --report junit="$tmp/j1.junit" --report json="$tmp/j1.json" $ex > "$tmp/j1.sarif" 2>/dev/null
"$bin" check "${same[@]}" -j 4 --format sarif --report junit="$tmp/j4.junit" --report json="$tmp/j4r.json" $ex > "$tmp/j4.sarif" 2>/dev/null
"$bin" check "${same[@]}" --format json $ex > "$tmp/alone.json" 2>/dev/null
check "--report: -j 1 and -j 4 write the same bytes into every report" \
	bash -c "cmp '$tmp/j1.sarif' '$tmp/j4.sarif' && cmp '$tmp/j1.junit' '$tmp/j4.junit' && cmp '$tmp/j1.json' '$tmp/j4r.json' && cmp '$tmp/j1.json' '$tmp/alone.json' && cmp '$tmp/j1.sarif' '$tmp/alone.sarif'"
"$bin" check "${same[@]}" --report csv="$tmp/s.csv" --report text="$tmp/s.txt" $ex/sensor_restorer.cir > /dev/null 2>&1
"$bin" check "${same[@]}" --format csv $ex/sensor_restorer.cir > "$tmp/s1.csv" 2>/dev/null
"$bin" check "${same[@]}" $ex/sensor_restorer.cir > "$tmp/s1.txt" 2>/dev/null
check "--report: one file (written straight, no pool) gives the same bytes too" \
	bash -c "cmp '$tmp/s.csv' '$tmp/s1.csv' && cmp '$tmp/s.txt' '$tmp/s1.txt'"
"$bin" check "${same[@]}" --write-baseline "$tmp/wb.json" $ex > /dev/null 2>&1
"$bin" check "${same[@]}" --report json="$tmp/wbr.json" --write-baseline "$tmp/wb2.json" $ex > /dev/null 2>&1
check "--report with --write-baseline: the baseline unchanged, the JSON report without its paths_from" \
	bash -c "cmp '$tmp/wb.json' '$tmp/wb2.json' && cmp '$tmp/wbr.json' '$tmp/alone.json'"
# a failed run (usage error, exit 2) leaves every existing report alone
for f in k.sarif k.junit k.html; do echo "old $f" > "$tmp/$f"; done
kept() { # exit status $1 was 2 and every old report is still there
	[ "$1" -eq 2 ] || return 1
	for f in k.sarif k.junit k.html; do grep -qx "old $f" "$tmp/$f" || return 1; done
	! ls "$tmp" | grep -q '\.tmp'
}
"$bin" check "${same[@]}" --report sarif="$tmp/k.sarif" --report junit="$tmp/k.junit" --report html="$tmp/k.html" --profile nosuch $ex > /dev/null 2> "$tmp/k.err"
check "--report: a run failing on a usage error (exit 2) leaves every old report" kept $?
"$bin" check "${same[@]}" --report sarif="$tmp/k.sarif" --report junit="$tmp/k.junit" --report htm="$tmp/k.html" $ex > /dev/null 2> "$tmp/k.err"
check "--report: a bad FORMAT is a usage error, nothing written" kept $?
check "--report: a bad FORMAT gets a did-you-mean" grep -qx "headroom: --report: no report format 'htm' (text, json, csv, junit, sarif or html); did you mean 'html'?" "$tmp/k.err"
"$bin" check "${same[@]}" --report sarif= $ex > /dev/null 2> "$tmp/k.err"
check "--report: an empty FILE is a usage error" bash -c "test $? -eq 2 && grep -qx \"headroom: --report: 'sarif=' names no file\" '$tmp/k.err'"
"$bin" check "${same[@]}" --report "$tmp/k.sarif" $ex > /dev/null 2> "$tmp/k.err"
check "--report: a value without FORMAT= is a usage error" bash -c "test $? -eq 2 && grep -q 'is not FORMAT=FILE' '$tmp/k.err'"
"$bin" check "${same[@]}" --report sarif="$tmp/k.sarif" --report junit="$tmp/./k.sarif" $ex > /dev/null 2> "$tmp/k.err"
check "--report: two reports into one file are a usage error, nothing written" kept $?
check "--report: two reports into one file: the message says so" grep -q "two reports would write the same file: 'sarif=.*k.sarif' and 'junit=.*k.sarif'" "$tmp/k.err"
"$bin" check "${same[@]}" -o "$tmp/new.one" --report json="$tmp/new.one" $ex > /dev/null 2> "$tmp/k.err"
check "--report: a report onto -o's new file is a usage error too" bash -c "test $? -eq 2 && ! test -e '$tmp/new.one'"
"$bin" check "${same[@]}" --report sarif="$tmp/k.sarif" --report junit="$tmp/nodir/k.junit" $ex > /dev/null 2> "$tmp/k.err"
check "--report: a report that cannot be created leaves the others' old files" kept $?

# determinism over the corpus
corpus=${HEADROOM_CORPUS:-$root/../shared/corpus/real}
if [ -d "$corpus" ]; then
	# Determinism: -j 1 and -j 4 over the corpus's netlists, less the 17
	# files that take 5 s to 60 s each alone (digital adders, timers and
	# converters simulated to their allowance: 370 of the corpus's 420 s);
	# the files left still include simulated converters, rectifiers and
	# ladders.
	slow=' adder_bip.cir fourbitadder.cir 01_timer_555_astavel_monostavel_pwm.cir sandler22.cir
		e1480.cir connect.cir bug_318.cir push_pull_xyce_baseline.cir sandler28.cir
		03_amp_op_somador.cir Todd_test.cir dcdc.sp UJT_Relaxation_Oscillator.cir.out
		v-i-sources-am-ffm.cir '
	# hidden entries are judged by their path under the corpus: the
	# corpus's own path may hold a "/.." (root/../shared)
	fast=()
	while IFS= read -r -d '' f; do
		case "/${f#"$corpus"/}" in */.*) continue ;; esac
		case " $(echo $slow) " in *" $(basename "$f") "*) continue ;; esac
		fast+=("$f")
	done < <(find "$corpus" -type f \( -name '*.cir' -o -name '*.sp' -o -name '*.net' -o -name '*.sim' \
		-o -name '*.cir.out' -o -name '*.spice' -o -name '*.ckt' \) -print0 | sort -z)
	start=$(date +%s)
	"$bin" check -j 1 --format json --fail-on never "${fast[@]}" > "$tmp/j1.json" 2> "$tmp/j1.err"
	"$bin" check -j 4 --format json --fail-on never "${fast[@]}" > "$tmp/j4f.json" 2> "$tmp/j4f.err"
	echo "reports: ${#fast[@]} corpus netlists at -j 1 and at -j 4: $(( $(date +%s) - start )) s"
	check "-j 1 and -j 4 give byte-identical reports over ${#fast[@]} corpus netlists" cmp -s "$tmp/j1.json" "$tmp/j4f.json"
	check "and byte-identical diagnostics" cmp -s "$tmp/j1.err" "$tmp/j4f.err"
	for k in json err; do # where they differ, for the log
		cmp -s "$tmp/j1.$k" "$tmp/j4f.$k" || diff "$tmp/j1.$k" "$tmp/j4f.$k" | head -20 | sed "s/^/reports: FAIL -j 1 vs -j 4 ($k) | /"
	done
	check "that run checked a real share of the corpus" python3 -c "
import json,sys
d=json.load(open(sys.argv[1]))['summary']
assert d['checked'] >= 250, d
" "$tmp/j1.json"
	# Every entry under the corpus is checked or skipped with a reason, and
	# every format says so with the same numbers: the -j 4 run writes the
	# five other formats as well (--report, HTML included), one analysis
	start=$(date +%s)
	"$bin" check -j 4 --format json --fail-on never --report sarif="$tmp/corpus.sarif" \
		--report junit="$tmp/corpus.junit" --report csv="$tmp/corpus.csv" \
		--report html="$tmp/corpus.html" --report text="$tmp/corpus.text" "$corpus" > "$tmp/j4.json" 2> "$tmp/j4.err"
	echo "reports: the corpus at -j 4 in six formats, one run: $(( $(date +%s) - start )) s"
	cp "$tmp/j4.json" "$tmp/corpus.json"
	check "the corpus report is valid JSON" python3 -c "import json; json.load(open('$tmp/j4.json'))"
	check "corpus: 305 checked, 72 skipped by their endings, and the files not checked are docs/netlist.md's table, each with its first error, each a fault of the file" python3 -c "
import collections,json,re,sys
d=json.load(open(sys.argv[1])); root=sys.argv[2].rstrip('/')+'/'
got={f['path'][len(root):]: '%d:%d | %s' % (f['errors'][0]['line'], f['errors'][0]['col'], f['errors'][0]['message'])
     for f in d['files'] if f['status'] != 'checked'}
doc=open(sys.argv[3]).read().split('## The third-party corpus: files not checked')[1]
want={m.group(1): '%s | %s' % (m.group(2), m.group(3).replace(chr(92) + '|', '|'))
      for m in re.finditer(r'(?m)^\| \x60([^\x60]+)\x60 \| (\d+:\d+) \| (.*?) \| (?:fault|dialect): ', doc)}
assert d['summary']['checked'] == 305, d['summary']
assert d['summary']['skipped'] == 72, d['summary']
assert 'dialect:' not in doc.split('| file |')[1], 'a file left unchecked for another simulator\\'s construct'
reasons = collections.Counter(k['reason'].split(':')[0] for k in d['skipped'])
assert reasons == {'a library by its name': 65,
                   'a Spectre netlist by its name': 2, 'name does not end in a netlist extension (see --netlist-ext)': 5}, reasons
assert got == want, (sorted(set(got) ^ set(want)), [k for k in got if k in want and got[k] != want[k]])
" "$tmp/j4.json" "$corpus" "$root/docs/netlist.md"
	check "over the corpus seen = the entries a walk of our own finds, netlists = checked + not checked" python3 -c "
import json,os,sys
d=json.load(open(sys.argv[1]))['summary']
seen=netlists=0
ends=('.cir', '.sp', '.spice', '.net', '.ckt', '.cdl', '.cir.out', '.spi', '.deck', '.sim', '.pspice', '.hspice', '.tspice', '.xyce')
for root, dirs, files in os.walk(sys.argv[2]):
    seen += sum(1 for x in dirs if x.startswith('.'))
    dirs[:] = [x for x in dirs if not x.startswith('.')]
    seen += len(files)
    netlists += sum(1 for x in files if not x.startswith('.') and x.lower().endswith(ends))
assert (d['seen'], d['checked'] + d['not_checked']) == (seen, netlists), (d, seen, netlists)
assert d['seen'] == d['checked'] + d['not_checked'] + d['skipped']
" "$tmp/j4.json" "$corpus"
	for fmt in sarif junit csv html text; do
		check "corpus: $fmt gives the JSON report's counts, errors, warnings and skipped entries" \
			python3 tests/report_files.py compare "$tmp/j4.json" "$fmt:$tmp/corpus.$fmt"
	done
elif [ -n "${CI:-}" ]; then
	check "the corpus is present" false
else
	echo "reports: SKIPPED the corpus tests (determinism, file counts in every format): no corpus at $corpus; set HEADROOM_CORPUS"
fi

echo "reports: $pass passed, $fail failed"
[ $fail -eq 0 ]
