#!/usr/bin/env bash
# Hostile inputs: netlists built to hurt the tool rather than to describe a
# circuit. Each case is generated here, run under a hard address-space limit
# (ulimit -v, 512 MB) and a 10 s timeout, and its time and peak memory are
# printed; the script ends with a "N passed, N failed" line.
#   chain   20,000 capacitors in series (was: the call stack overflowed)
#   pairs   32,000 undriven diode-capacitor pairs (was: quadratic, 11-17 s)
#   loops   64,000 subcircuit diodes straight across a source (was: each
#           diode-loop finding walked every part, quadratic: 6 s for 32,000)
#   bomb    40 nested definitions of two instances each, 2^40 parts (was:
#           refused at the 10-million-part cap after 44 s and 6.4 GB)
#   nest    the same nest 10 deep, 2^10 parts: a legitimate size still reads
#   params  100,000 .param cards each naming the next (was: 6.9 s)
set -u
bin=${HEADROOM:-build/headroom}
pass=0 fail=0
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
limit_kb=524288 # 512 MB
limit_s=10

check() { # name, condition (a command)
	local name=$1
	shift
	if "$@"; then pass=$((pass + 1)); else fail=$((fail + 1)); echo "hostile: FAIL $name"; fi
}

# Sanitizer builds reserve terabytes of address space for their shadow
# memory and cannot start under ulimit -v; they run with the timeout only.
hard=1
if ! { (ulimit -v $limit_kb && exec "$bin" --version) > /dev/null 2>&1; } 2> /dev/null; then
	hard=0
	echo "hostile: note: $bin does not start under ulimit -v (a sanitizer build?): no memory limit"
fi
measure=0
if [ -x /usr/bin/time ] && head -c 4 "$bin" | grep -q ELF; then measure=1; fi

run() { # case name, headroom args...: sets rc, secs, rss_kb; output in $tmp/NAME.out, .err
	local name=$1
	shift
	local t0 t1 wrap=()
	[ $measure = 1 ] && wrap=(/usr/bin/time -f '%M' -o "$tmp/$name.rss")
	t0=$(date +%s%N)
	(
		[ $hard = 1 ] && ulimit -v $limit_kb
		exec timeout -s KILL $limit_s "${wrap[@]}" "$bin" "$@"
	) > "$tmp/$name.out" 2> "$tmp/$name.err"
	rc=$?
	t1=$(date +%s%N)
	secs=$(awk -v a="$t0" -v b="$t1" 'BEGIN { printf "%.2f", (b - a) / 1e9 }')
	rss_kb=$([ -s "$tmp/$name.rss" ] && tail -1 "$tmp/$name.rss" || echo 0)
	case $rss_kb in *[!0-9]* | '') rss_kb=0 ;; esac
	local peak="peak memory $((rss_kb / 1024)) MB"
	[ $measure = 1 ] && [ "$rss_kb" = 0 ] && peak="peak memory not measured (killed)"
	[ $measure = 0 ] && peak="peak memory not measured"
	echo "hostile: $name: exit $rc, $secs s, $peak" \
		"(limits: $limit_s s, $([ $hard = 1 ] && echo "$((limit_kb / 1024)) MB" || echo "no memory limit"))"
}

small_enough() { # peak memory within the limit (measured on a plain build)
	[ $measure = 0 ] || [ $hard = 0 ] || [ "$rss_kb" -le $limit_kb ]
}

python3 - "$tmp" << 'EOF'
import sys
d = sys.argv[1]
n = 20000
chain = ["series chain", "V1 n0 0 SIN(0 10 1k)"]
chain += [f"C{i} n{i} n{i + 1} 1u" for i in range(n)]
chain += [f"R1 n{n} 0 1k", ".end"]
open(f"{d}/chain.cir", "w").write("\n".join(chain) + "\n")
# the same chain with a clamp: D1 holds n1 at or above ground
clamp = chain[:2] + ["D1 0 n1 dm", ".model dm D"] + chain[2:]
open(f"{d}/chain-clamp.cir", "w").write("\n".join(clamp) + "\n")
pairs = ["undriven pairs", ".model dm D"]
for i in range(32000):
    pairs += [f"D{i} a{i} b{i} dm", f"C{i} b{i} 0 1u"]
open(f"{d}/pairs.cir", "w").write("\n".join(pairs + [".end"]) + "\n")
loops = ["diodes across a source", ".model dm D", ".subckt cell a b", "D1 a b dm",
         "R1 a b 1k", ".ends", "V1 s 0 5"]
loops += [f"X{i} s 0 cell" for i in range(64000)]
open(f"{d}/loops.cir", "w").write("\n".join(loops + [".end"]) + "\n")
def nest(levels, title):
    s = [title, ".subckt s0 a b", "R1 a b 1k", ".ends"]
    for i in range(1, levels + 1):
        s += [f".subckt s{i} a b", f"X1 a m s{i - 1}", f"X2 m b s{i - 1}", ".ends"]
    return "\n".join(s + [f"X1 1 0 s{levels}", "V1 1 0 1", ".end"]) + "\n"
open(f"{d}/bomb.cir", "w").write(nest(40, "expansion bomb"))
open(f"{d}/nest.cir", "w").write(nest(10, "legitimate nest"))
params = ["forward parameters"] + [f".param p{i}={{p{i + 1}+1}}" for i in range(100000)]
params += [".param p100000=0", "V1 1 0 1", "R1 1 0 {p0+1}", ".end"]
open(f"{d}/params.cir", "w").write("\n".join(params) + "\n")
EOF

# 1. A series chain: every node but the first follows its neighbour's AC,
# a chain as long as the circuit.
run chain check "$tmp/chain.cir"
check "chain: checked, no crash (exit 0 or 1)" test $rc -le 1
check "chain: within the memory limit" small_enough
check "chain: a netlist without diodes has no structure to judge" grep -q '0 structures' "$tmp/chain.out"

# With the clamp, C0 charges to the source's 10 V peak at its negative
# swing (n1 cannot fall below ground while n0 reaches -10 V) and D1 keeps it
# from discharging; the 20,000-capacitor string behind it is 50 pF, which
# with R1 draws almost nothing. So C0 holds about 10 V, and no sound bound
# may be lower; nor can any capacitor here see more than the source's peak
# to peak at its high corner, 2 x 11 V. The analysis does not claim a proof
# for C0 (R1 feeds AC into the string) and the circuit is past the solver's
# size, so the analysis's own figure (`analytic`) is the number to read.
run chain-clamp check --format json "$tmp/chain-clamp.cir"
check "chain-clamp: checked, no crash (exit 0 or 1)" test $rc -le 1
check "chain-clamp: within the memory limit" small_enough
check "chain-clamp: C0 bounded at no less than the 10 V peak, no more than 22 V" python3 -c "
import json, sys
f = json.load(open('$tmp/chain-clamp.out'))['files'][0]
caps = [s for s in f['stresses'] if s['element'] == 'C' and s['quantity'] == 'voltage']
c0 = [s for s in caps if s['part'] == 'C0'][0]
assert len(caps) == 20000, len(caps)
assert 10 <= c0['analytic'] <= 22, c0
"

# 2. Undriven diode-capacitor pairs: all one network through ground.
run pairs check --format csv "$tmp/pairs.cir"
check "pairs: finished in time, no crash (exit 0 or 1)" test $rc -le 1
check "pairs: within the memory limit" small_enough
check "pairs: every diode and capacitor has its voltage row" bash -c \
	"test \$(grep -c '^[^,]*,D[0-9]*,D,[^,]*,[^,]*,[^,]*,reverse_voltage,' '$tmp/pairs.out') -eq 32000 &&
	 test \$(grep -c '^[^,]*,C[0-9]*,C,[^,]*,[^,]*,[^,]*,voltage,' '$tmp/pairs.out') -eq 32000"

# 3. A diode across a source in each of 64,000 instances: one diode-loop
# error each, none of them inside a device macromodel.
run loops check "$tmp/loops.cir"
check "loops: finished in time (exit 1: errors found)" test $rc -eq 1
check "loops: within the memory limit" small_enough
check "loops: every diode is a diode-loop error" test \
	"$(grep -c 'error: X[0-9]*\.D1 is driven forward by up to 5 V.*\[diode-loop\]' "$tmp/loops.out")" -eq 64000

# 4. The expansion bomb: refused from the definitions, before any of it is
# built, at the top-level card (line 165), naming the size and the limit.
run bomb check "$tmp/bomb.cir"
check "bomb: a netlist error (exit 2), not a kill" test $rc -eq 2
check "bomb: refused at once (under 2 s)" awk -v s="$secs" 'BEGIN { exit !(s < 2) }'
check "bomb: within the memory limit" small_enough
check "bomb: located error naming the size and the limit" grep -q \
	"bomb.cir:165:1: error: X1 expands to 1099511627776 parts, past the limit of 10000000 (see --max-parts) \[expansion\]" \
	"$tmp/bomb.err"
check "bomb: one error, not one per card" test "$(grep -c ': error:' "$tmp/bomb.err")" -eq 1

# 5. A nest of legitimate size still expands: 2^10 resistors and V1.
run nest parts --format count "$tmp/nest.cir"
check "nest: reads (exit 0)" test $rc -eq 0
check "nest: 1025 parts" grep -q 'nest.cir: 1025 parts' "$tmp/nest.out"
run nest-limit parts --format count --max-parts 1024 "$tmp/nest.cir"
check "nest: one part over --max-parts is refused at its card" bash -c \
	"test $rc -eq 2 && grep -q 'nest.cir:45:1: error: X1 expands to 1024 parts; with the 1 already in the circuit that passes the limit of 1024' '$tmp/nest-limit.err'"

# 6. 100,000 .param cards, each naming the one after it (read in the order
# of their dependences: was 6.9 s, each resolved 200 links deep)
run params parts --format csv "$tmp/params.cir"
check "params: a chain of forward references reads (exit 0, R1 = 100001)" bash -c \
	"test $rc -eq 0 && grep -q '^R1,resistor,1 0,100001,ohm,' '$tmp/params.out'"
check "params: under 3 s" awk -v s="$secs" 'BEGIN { exit !(s < 3) }'
check "params: within the memory limit" small_enough

echo "hostile: $pass passed, $fail failed"
[ $fail -eq 0 ]
