#!/usr/bin/env bash
# Runs `headroom parts` over the third-party netlist corpus, read in place
# from ../shared/corpus/real (never copied into this repository).
# Checks, per file: the run ends with exit 0 or 2 (never a signal, never a
# hang), and every file whose MANIFEST.tsv says ngspice accepts it
# (ngspice_parse = ok) is accepted (exit 0) unless it is listed in
# tests/corpus_gaps.txt with a reason. Prints the counts.
set -u
bin=${HEADROOM:-build/headroom}
here=$(cd "$(dirname "$0")" && pwd)
corpus=${HEADROOM_CORPUS:-$here/../../shared/corpus/real}
gaps=$here/corpus_gaps.txt
if [ ! -f "$corpus/MANIFEST.tsv" ]; then
	if [ -n "${CI:-}" ]; then
		echo "corpus: MANIFEST.tsv not found under $corpus" >&2
		exit 1
	fi
	echo "corpus: SKIPPED, no corpus at $corpus"
	exit 0
fi
total=0 accepted=0 crashes=0 regress=0 ngok=0 ngok_acc=0 gapped=0
fail=()
declare -A kinds=()
while IFS=$'\t' read -r file _repo _path _commit _lic _status parse; do
	[ "$file" = file ] && continue
	total=$((total + 1))
	timeout 20 "$bin" parts --format count "$corpus/$file" >/dev/null 2>/tmp/corpus_err.$$
	rc=$?
	if [ $rc -ne 0 ] && [ $rc -ne 2 ]; then
		crashes=$((crashes + 1))
		fail+=("exit $rc (signal or hang): $file")
		continue
	fi
	[ $rc -eq 0 ] && accepted=$((accepted + 1))
	# structure recognition over the same file: never a signal or a hang
	timeout 20 "$bin" topo --format count "$corpus/$file" >/tmp/corpus_topo.$$ 2>/dev/null
	trc=$?
	if [ $trc -ne 0 ] && [ $trc -ne 2 ]; then
		crashes=$((crashes + 1))
		fail+=("topo exit $trc (signal or hang): $file")
	fi
	for kv in $(sed -n 's/^.*structures*: //p' /tmp/corpus_topo.$$ | tr -d ' ' | tr ',' ' '); do
		k=${kv%%[0-9]*}
		kinds[$k]=$(( ${kinds[$k]:-0} + ${kv#"$k"} ))
	done
	[ "$parse" = ok ] || continue
	ngok=$((ngok + 1))
	if [ $rc -eq 0 ]; then
		ngok_acc=$((ngok_acc + 1))
	elif grep -q -F -x -e "$file" <(cut -f1 "$gaps"); then
		gapped=$((gapped + 1))
	else
		regress=$((regress + 1))
		fail+=("rejected but ngspice accepts it: $file: $(grep -m1 error: /tmp/corpus_err.$$)")
	fi
done < "$corpus/MANIFEST.tsv"
rm -f /tmp/corpus_err.$$ /tmp/corpus_topo.$$
summary=""
for k in $(printf '%s\n' "${!kinds[@]}" | sort); do summary="$summary $k=${kinds[$k]}"; done
echo "corpus: structures found by topo:${summary:- none}"
echo "corpus: $accepted/$total files accepted; ngspice-accepted files: $ngok_acc/$ngok accepted, $gapped known gaps (tests/corpus_gaps.txt)"
for f in "${fail[@]+"${fail[@]}"}"; do echo "corpus: FAIL $f"; done
failed=$((crashes + regress))
echo "corpus: $((total - failed)) passed, $failed failed"
[ $failed -eq 0 ]
