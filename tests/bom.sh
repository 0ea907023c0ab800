#!/usr/bin/env bash
# check --bom: three invented BOMs in three column layouts give the ratings
# of an equivalent parts table on the shipped examples; every problem of a
# row is a located warning in the reports; precedence against --parts and
# *@part; the file-level errors. Ends with a "N passed, N failed" line.
set -u
bin=${HEADROOM:-build/headroom}
here=$(cd "$(dirname "$0")" && pwd)
data=$here/data/bom
ex=$here/../examples
pass=0 fail=0
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT

check() { # name, condition (a command)
	local name=$1
	shift
	if "$@"; then pass=$((pass + 1)); else fail=$((fail + 1)); echo "bom: FAIL $name"; fi
}

run() { # args...: sets rc; stdout in $tmp/out, stderr in $tmp/err
	"$bin" "$@" >"$tmp/out" 2>"$tmp/err"
	rc=$?
}

# stresses of a JSON report as "file part quantity rating kind ratio" lines
stresses() {
	python3 - "$1" <<'EOF'
import json, sys
d = json.load(open(sys.argv[1]))
for f in d["files"]:
    for s in f["stresses"] or []:
        print(f["path"], s["part"], s["quantity"], s["rating"], s["kind"], s["ratio"])
    for g in f["findings"] or []:
        print(f["path"], "finding", g["rule"], g["part"], g["rating"])
EOF
}

# how many stresses of a JSON report have their rating from a BOM
from_bom() {
	python3 -c "import json,sys; d=json.load(open(sys.argv[1])); \
print(sum(1 for f in d['files'] for s in f['stresses'] or [] if (s['rating_from'] or '').startswith('BOM ')))" "$1"
}

# --- the same ratings from three layouts and from a parts table ---
run check --fail-on never --format json -o "$tmp/parts.json" --parts "$data/equiv_parts.csv" "$ex"
check "the equivalent parts table checks the examples" test $rc -eq 0
stresses "$tmp/parts.json" >"$tmp/parts.txt"
run check --fail-on never --format json -o "$tmp/none.json" "$ex"
stresses "$tmp/none.json" >"$tmp/none.txt"
check "the parts table changes the ratings (the comparison can fail)" bash -c "! cmp -s '$tmp/parts.txt' '$tmp/none.txt'"
for layout in layout_designator layout_reference layout_ref_comment; do
	run check --fail-on never --format json -o "$tmp/$layout.json" --bom "$data/$layout.csv" "$ex"
	check "$layout: exit 0" test $rc -eq 0
	stresses "$tmp/$layout.json" >"$tmp/$layout.txt"
	check "$layout: the same ratings, kinds, ratios and findings as the parts table" \
		diff -u "$tmp/parts.txt" "$tmp/$layout.txt"
	check "$layout: 15 stresses rated from the BOM" test "$(from_bom "$tmp/$layout.json")" -eq 15
	check "$layout: no BOM warning" bash -c "! grep -q 'warning:' '$tmp/err'"
	check "$layout: stderr says which columns were read" grep -q "^headroom: BOM .*$layout.csv: header on line 1, .* separated; designator: column 1" "$tmp/err"
done
check "layout 1: the grouped row's line is the rating's source" \
	grep -q '"rating_from": "BOM [^"]*layout_designator.csv:4"' "$tmp/layout_designator.json"
run check --fail-on never --bom "$data/layout_reference.csv" "$ex/charge_pump.cir"
check "layout 2: ';' and the quantity column" \
	grep -q "';' separated; designator: column 1 'Reference'; value: column 3 'Value'; mpn: column 4 'Part Number'; quantity: column 2 'Qty'" "$tmp/err"
check "the JSON report notes the columns read" \
	grep -q "\"code\": \"bom\", \"message\": \"BOM [^\"]*layout_ref_comment.csv: header on line 1" "$tmp/layout_ref_comment.json"

# --- text report: rating_from names the BOM file and line ---
run check --bom "$data/layout_reference.csv" "$ex/charge_pump.cir"
check "text: the limits line names the BOM row" grep -q "limits: rating 25 V (BOM .*layout_reference.csv:2)" "$tmp/out"
check "text: the columns note is in the report" grep -q "layout_reference.csv:1:1: note: BOM .*header on line 1" "$tmp/out"

# --- precedence: *@part > --parts > --bom > model BV ---
printf 'Designator,Voltage,Type\nCP1,50V,X7R\nCM2,400V,electrolytic\nDP2,45V,schottky\n' >"$tmp/prec.csv"
printf 'ref,v_rated\nCP1,16V\n' >"$tmp/prec_parts.csv"
run check --fail-on never --format json --bom "$tmp/prec.csv" --parts "$tmp/prec_parts.csv" \
	"$ex/charge_pump.cir" "$ex/mains_doubler.cir"
cp "$tmp/out" "$tmp/prec.json"
rating_of() { # part: "rating|rating_from" of its first stress
	python3 -c "import json,sys; d=json.load(open(sys.argv[1])); \
s=[s for f in d['files'] for s in f['stresses'] if s['part']==sys.argv[2]][0]; \
print('%g|%s|%s' % (s['rating'], s['rating_from'], s['kind']))" "$tmp/prec.json" "$1"
}
check "--parts overrides the BOM (CP1 16 V from the table)" \
	bash -c "[[ '$(rating_of CP1)' == 16\|*prec_parts.csv:2\|ceramic-x7r ]]"
check "*@part overrides the BOM (CM2 250 V from the annotation)" \
	bash -c "[[ '$(rating_of CM2)' == '250|annotation '*mains_doubler.cir:18'|alu-electrolytic' ]]"
check "the BOM overrides the model's BV (DP2 45 V, not 30 V)" \
	bash -c "[[ '$(rating_of DP2)' == 45\|'BOM '*prec.csv:4\|schottky ]]"

# --- each problem is a located warning, in every report ---
run check --fail-on never --bom "$data/warnings.csv" "$ex/charge_pump.cir"
w=$data/warnings.csv
check "unreadable voltage cell" grep -q "^$w:2:17: warning: voltage '2O V' cannot be read: it is not a voltage .*\[bom\]$" "$tmp/out"
check "unreadable voltage in the value text" grep -q "^$w:3:10: warning: value '5OV' in '100n 5OV': it is not a voltage .*\[bom\]$" "$tmp/out"
check "an AC rating is not taken as DC" grep -q "^$w:4:10: warning: voltage '275VAC' cannot be read: it is an AC rating" "$tmp/out"
check "an unknown kind word" grep -q "^$w:4:17: warning: kind 'unobtainium': it names no part kind" "$tmp/out"
check "a bad range in a group is located at its token" grep -q "^$w:5:7: warning: designator 'DP4-DX2' cannot be read: a range is written C1-C4" "$tmp/out"
check "a backwards range rates nothing: parts-unmatched" grep -q "^$w:6:1: warning: this BOM row has no designator that can be read (the range runs backwards): it rates nothing \[parts-unmatched\]$" "$tmp/out"
check "an unknown designator: parts-unmatched" grep -q "^$w:7:1: warning: BOM designator 'C99' matches no part in any file checked: its row's rating applies to nothing \[parts-unmatched\]$" "$tmp/out"
check "a designator listed twice" grep -q "^$w:8:1: warning: designator 'DP1' is already listed on line 5 of this BOM" "$tmp/out"
check "the warnings are counted" grep -q "reading the netlists: 0 errors, 6 warnings, 1 note" "$tmp/out"
check "stderr quotes the BOM line with a caret" grep -q '^    CP3,100n 5OV,,X7R$' "$tmp/err"
check "the rows around a bad cell still rate (CP1 kind from its row)" grep -q "CP1 has no voltage rating" "$tmp/out"
run check --fail-on never --format json --bom "$data/warnings.csv" "$ex/charge_pump.cir"
check "json: the warnings are the file's, located" python3 -c "
import json, sys
d = json.load(open(sys.argv[1]))
w = [(x['line'], x['col'], x['code']) for x in d['files'][0]['warnings'] if x['severity'] == 'warning']
assert w == [(2, 17, 'bom'), (3, 10, 'bom'), (4, 10, 'bom'), (4, 17, 'bom'), (5, 7, 'bom'), (8, 1, 'bom')], w
r = sorted((x['rule'], x['line'], x['col'], x['part']) for x in d['run_findings'])
assert r == [('parts-unmatched', 6, 1, None), ('parts-unmatched', 7, 1, 'C99')], r
" "$tmp/out"
check "json: the report with BOM warnings fits docs/report.schema.json" python3 -c "
import json, sys, jsonschema
jsonschema.validate(json.load(open(sys.argv[1])), json.load(open(sys.argv[2])))
" "$tmp/out" "$here/../docs/report.schema.json"
run check --fail-on never --format sarif --bom "$data/warnings.csv" "$ex/charge_pump.cir"
check "sarif: the unknown designator is a result in the BOM" grep -q "BOM designator 'C99' matches no part" "$tmp/out"
run check --bom "$data/warnings.csv" "$ex/charge_pump.cir"
check "parts-unmatched counts towards --fail-on warning only" test $rc -eq 0
run check --fail-on warning --bom "$data/warnings.csv" "$ex/charge_pump.cir"
check "--fail-on warning: exit 1" test $rc -eq 1
# a BOM for another design: its warnings stay out of this file's report
run check --fail-on never --bom "$data/warnings.csv" "$ex/sensor_restorer.cir"
check "rows that name no part of the file put no warning in it" bash -c "! grep -q '\[bom\]' '$tmp/out'"

# --- rows that are no concern: resistors, connectors ---
printf 'Designator,Value,Voltage\nRLOAD,18k,\nJ1,header,\nR77,10k,\nCP1,100n,25V\n' >"$tmp/other.csv"
run check --fail-on never --bom "$tmp/other.csv" "$ex/charge_pump.cir"
check "an unrated row naming a resistor or a missing connector is no warning" bash -c "! grep -q 'warning: .*\(RLOAD\|J1\|R77\)' '$tmp/out'"

# --- file-level problems are errors: exit 2 ---
printf 'Part,Value,Voltage\nC1,1u,50V\n' >"$tmp/nodes.csv"
run check --bom "$tmp/nodes.csv" "$ex/charge_pump.cir"
check "no designator column: a located error" bash -c "test $rc -eq 2 && grep -q 'nodes.csv: error: no header row with a designator column' '$tmp/err'"
printf 'Designator,Value\nCP1,"100n 25V\n' >"$tmp/quote.csv"
run check --bom "$tmp/quote.csv" "$ex/charge_pump.cir"
check "an unclosed quote: a located error" bash -c "test $rc -eq 2 && grep -q 'quote.csv:2:5: error: a quoted cell opened here has no closing quote' '$tmp/err'"
run check --bom "$tmp/absent.csv" "$ex/charge_pump.cir"
check "a missing BOM: an error" bash -c "test $rc -eq 2 && grep -q 'absent.csv: error: cannot read the BOM: no such file' '$tmp/err'"
printf '\xff\xfeD\x00' >"$tmp/utf16.csv"
run check --bom "$tmp/utf16.csv" "$ex/charge_pump.cir"
check "UTF-16: an error that says how to export" bash -c "test $rc -eq 2 && grep -q 'export it as UTF-8 CSV' '$tmp/err'"

# --- what exports look like: tabs, sep=, a title above the header, BOM mark ---
printf 'Bill of materials\nBoard: pump demo\n\nRefDes\tValue\tRated Voltage (V)\nCP1\t100n\t25\n' >"$tmp/tab.csv"
run check --fail-on never --format json --bom "$tmp/tab.csv" "$ex/charge_pump.cir"
check "tab separated, title rows above the header" grep -q '"rating": 25, "rating_from": "BOM [^"]*tab.csv:5"' "$tmp/out"
check "tab: the header line and separator are said" grep -q "header on line 4, '\\\\t' separated" "$tmp/err"
printf '\xef\xbb\xbfsep=;\r\n"Part Reference";"Voltage Rating";Technology\r\n"CP1, CP2";"1,5kV";ceramic X5R\r\n' >"$tmp/sep.csv"
run check --fail-on never --format json --bom "$tmp/sep.csv" "$ex/charge_pump.cir"
check "sep= line, byte-order mark, CRLF, quoted cells" python3 -c "
import json, sys
d = json.load(open(sys.argv[1]))
s = {x['part']: x for x in d['files'][0]['stresses']}
assert s['CP2']['kind'] == 'ceramic-x7r' and s['CP2']['rating'] is None, s['CP2']
" "$tmp/out"
check "'1,5kV' in a ';' file is not read as 1.5 kV: a warning" grep -q "sep.csv:3:13: warning: voltage '1,5kV' cannot be read" "$tmp/err"

echo "bom: $pass passed, $fail failed"
[ $fail -eq 0 ]
