#!/usr/bin/env bash
# layers.sh: enforce headroom's module layering on compiled objects and #includes.
#   bash scripts/layers.sh [--root DIR] OBJDIR   check OBJDIR/*.o, and the includes of DIR's
#                                                src/ include/ grammar/ (DIR: parent of scripts/)
#   bash scripts/layers.sh --self-test           run the checker on tiny made-up modules
# Exit 0 when clean, 1 with one "layers: ..." line per problem, 2 on usage errors.
#
# A module is an object's basename without .o (spice.lex, spice.tab: the generated
# scanner and parser). MODULES gives each module its layer, one line per module; USES
# says which layers a layer may use. A module found but not in MODULES is an error; one
# listed but absent is fine (planned). Edges: A -> B when an undefined symbol of A.o is
# defined by B.o (one symbol is named per edge), and when a.c or a.h has `#include "b.h"`.
# A cycle of modules is an error in any layer. HEADERS gives a layer to headers not named
# like a module ("-": ignored); for cycles such a header stands for what it includes.
set -u -o pipefail

MODULES='
arena base
dense base
diag base
num base
utf8 base
infile base
smap base
suggest base
expr base
dialect base
deck front
parse front
spice.lex front
spice.tab front
device front
behav front
devval front
wave front
elab front
scope front
subsize front
nl front
annot front
dmodel front
thermal front
sig analysis
form analysis
prop analysis
topo analysis
proof analysis
audit analysis
sim solver
simdev solver
simbjt solver
simmos solver
simjfet solver
simvdmos solver
simsw solver
simsrc solver
simmat solver
simrun solver
simpss solver
simbehav solver
profile check
bomval check
bom check
rating check
stress check
current check
discharge check
life check
capbias base
verify check
rules check
waiver check
check check
simbound check
dstring check
cstring check
floatnet check
hull check
surge check
loadout check
defects check
report_parts reports
report_topo reports
report_rules reports
report_check reports
report_csv reports
report_files reports
report_html reports
report_junit reports
report_sarif reports
report_text reports
main program
cli_* program
'
# layer -> the layers it may use. The solver is a leaf beside the analysis.
USES='
base base
front base front
analysis base front analysis
solver base front solver
check base front analysis solver check
reports base front analysis check reports
program base front analysis solver check reports program
'
# Headers whose name is not a module (include check only).
HEADERS='
report_formats reports
lexctx front
elab_state front
simint solver
cli program
version base
version_git base
cli_* program
testutil -
'

usage() { echo "usage: bash scripts/layers.sh [--root DIR] OBJDIR | --self-test" >&2; exit 2; }

# Object edges: "node M" per object, "edge A B symbol S" per use.
object_edges() {
  local f m
  for f in "$1"/*.o; do
    m=${f##*/}; m=${m%.o}
    echo "node $m"
    nm -g --defined-only "$f" | awk -v m="$m" '{ print m, $NF }' >>"$tmp/def" || return 2
    nm -u "$f" | awk -v m="$m" '{ print m, $NF }' >>"$tmp/und" || return 2
  done
  awk 'FNR == NR { def[$2] = def[$2] " " $1; next }
       { n = split(def[$2], d, " ")
         for (i = 1; i <= n; i++) print "edge", $1, d[i], "symbol " $2 }' "$tmp/def" "$tmp/und"
}

# Include edges: "node M" per file, "edge A B #include ..." per quoted include.
include_edges() {
  local f
  for f in "$1"/src/*.c "$1"/src/*.h "$1"/include/*.h "$1"/grammar/*.h "$1"/grammar/*.y "$1"/grammar/*.l; do
    [ -f "$f" ] || continue
    awk -v file="${f#"$1"/}" '
      BEGIN { m = file; sub(/.*\//, "", m)
              if (sub(/\.y$/, "", m)) m = m ".tab"; else if (sub(/\.l$/, "", m)) m = m ".lex"; else sub(/\.[ch]$/, "", m)
              print "node", m }
      /^[ \t]*#[ \t]*include[ \t]*"/ {
              h = $0; sub(/^[^"]*"/, "", h); sub(/".*/, "", h); sub(/.*\//, "", h); x = h; sub(/\.h$/, "", x)
              print "node", x; print "edge", m, x, "#include \"" h "\" in " file }' "$f" || return 2
  done
}

# Judge node/edge lines on stdin against the tables; $1 is "object" or "include".
judge() {
  LC_ALL=C sort -u | awk -v kind="$1" -v q="'" '
    function load(text, t,   n, i, f, L) {
      n = split(text, L, "\n")
      for (i = 1; i <= n; i++) if (split(L[i], f, " ") == 2) {
        if (f[1] ~ /\*$/) glob[t, substr(f[1], 1, length(f[1]) - 1)] = f[2]; else lay[t, f[1]] = f[2] } }
    function find(m, t,   k, p) {
      if ((t, m) in lay) return lay[t, m]
      for (k in glob) if (split(k, p, SUBSEP) == 2 && p[1] == t && index(m, p[2]) == 1) return glob[k]
      return "" }
    function layer(m) { return find(m, "m") != "" ? find(m, "m") : find(m, "h") }
    function pseudo(m) { return find(m, "m") == "" && find(m, "h") != "" }
    # u uses v; a header-only v stands for what it includes (a.c -> formats.h -> a.h: no cycle)
    function through(u, v,   n, i, nb) {
      if (!pseudo(v)) { if (v != u && !((u, v) in r)) { r[u, v] = 1; radj[u] = radj[u] " " v }; return }
      if ((u, v) in r) return
      r[u, v] = 1; n = split(adj[v], nb, " ")
      for (i = 1; i <= n; i++) through(u, nb[i]) }
    function see(m) { if (!(m in known)) { known[m] = 1; order[++nn] = m } }
    function dfs(u,   n, i, k, v, s, nb) {
      state[u] = 1; stack[++sp] = u
      n = split(radj[u], nb, " ")
      for (i = 1; i <= n; i++) {
        v = nb[i]
        if (state[v] == 1) {
          for (k = sp; stack[k] != v; k--) ;
          for (s = v; ++k <= sp; ) s = s " -> " stack[k]
          print "layers: " (kind == "include" ? "include " : "") "cycle: " s " -> " v
        } else if (!state[v]) dfs(v)
      }
      sp--; state[u] = 2 }
    BEGIN { load(ENVIRON["MODULES"], "m"); if (kind == "include") load(ENVIRON["HEADERS"], "h")
            n = split(ENVIRON["USES"], L, "\n")
            for (i = 1; i <= n; i++) for (j = split(L[i], f, " "); j > 1; j--) ok[f[1], f[j]] = 1 }
    $1 == "node" && layer($2) == "" { print "layers: module " q $2 q " has no layer: add it to the table in scripts/layers.sh" }
    $1 != "edge" || $2 == $3 || ($2, $3) in seen || layer($2) == "-" || layer($3) == "-" { next }
    { seen[$2, $3] = 1; see($2); see($3); adj[$2] = adj[$2] " " $3
      a = layer($2); b = layer($3); why = $0; sub(/^[^ ]+ [^ ]+ [^ ]+ /, "", why)
      if (a != "" && b != "" && !((a, b) in ok))
        print "layers: " a " module " q $2 q " uses " b " module " q $3 q " (" why ")" }
    END { for (i = 1; i <= nn; i++) if (!pseudo(u = order[i])) {
            n = split(adj[u], nb, " "); for (j = 1; j <= n; j++) through(u, nb[j]) }
          for (i = 1; i <= nn; i++) if (!pseudo(order[i]) && !state[order[i]]) dfs(order[i]) }'
}

# check OBJDIR ROOT: print the problems, return 0 clean, 1 problems, 2 usage.
check() {
  local out
  compgen -G "$1/*.o" >/dev/null || { echo "layers: no objects in '$1'" >&2; return 2; }
  [ -d "$2" ] || { echo "layers: no such root '$2'" >&2; return 2; }
  object_edges "$1" >"$tmp/obj" || return 2
  include_edges "$2" >"$tmp/inc" || return 2
  out=$( { judge object <"$tmp/obj"; judge include <"$tmp/inc"; } | awk '!seen[$0]++')
  [ -z "$out" ] && return 0
  printf '%s\n' "$out"; return 1
}

# Self-test: tiny modules compiled with cc, each case run through this script.
self_test() {
  local t=$tmp bad=0
  obj() { mkdir -p "$t/$1"; printf '%s\n' "$3" >"$t/$1/$2.c"; cc -c -o "$t/$1/$2.o" "$t/$1/$2.c" || bad=1; }
  src() { mkdir -p "$t/$1/src"; printf '%s\n' "$3" >"$t/$1/src/$2"; }
  expect() {  # NAME EXIT TEXT -- ARGS: run the script with ARGS, want EXIT and TEXT in its output
    local name=$1 want=$2 text=$3 out got; shift 4
    out=$(bash "$self" "$@" 2>&1); got=$?
    if [ "$got" = "$want" ] && [[ $out == *"$text"* ]]; then echo "ok   $name"
    else echo "FAIL $name: exit $got (want $want), output:"; printf '%s\n' "$out" | sed 's/^/       /'; bad=1; fi
  }
  mkdir -p "$t/empty"
  obj up arena 'void report_check_end(void); void arena_alloc(void) { report_check_end(); }'
  obj up report_check 'void report_check_end(void) {}'
  obj clean arena 'void arena_alloc(void) {}'
  obj clean report_check 'void arena_alloc(void); void report_check_end(void) { arena_alloc(); }'
  obj cycle device 'void elab_run(void); void dev_read(void) { elab_run(); }'
  obj cycle elab 'void dev_read(void); void elab_run(void) { dev_read(); }'
  obj beside sim 'void sig_eval(void); void sim_run(void) { sig_eval(); }'
  obj beside sig 'void sig_eval(void) {}'
  obj nolayer stray 'void stray_read(void) {}'
  src inc arena.c '#include "report_check.h"'
  src inccycle device.c '#include "elab.h"'
  src inccycle elab.c '#include "device.h"'
  src formats report_check.c '#include "report_formats.h"'
  mkdir -p "$t/formats/include"; echo '#include "report_check.h"' >"$t/formats/include/report_formats.h"
  expect "object: base uses reports -> fails" 1 "layers: base module 'arena' uses reports module 'report_check' (symbol report_check_end)" -- --root "$t/empty" "$t/up"
  expect "object: reports uses base -> passes" 0 "" -- --root "$t/empty" "$t/clean"
  expect "object: device <-> elab -> cycle" 1 "layers: cycle: device -> elab -> device" -- --root "$t/empty" "$t/cycle"
  expect "object: solver uses analysis -> fails" 1 "layers: solver module 'sim' uses analysis module 'sig' (symbol sig_eval)" -- --root "$t/empty" "$t/beside"
  expect "object: module not in the table -> fails" 1 "layers: module 'stray' has no layer" -- --root "$t/empty" "$t/nolayer"
  expect "include: arena.c includes report_check.h -> fails" 1 "layers: base module 'arena' uses reports module 'report_check' (#include \"report_check.h\" in src/arena.c)" -- --root "$t/inc" "$t/clean"
  expect "include: device.c <-> elab.c -> include cycle" 1 "layers: include cycle: device -> elab -> device" -- --root "$t/inccycle" "$t/clean"
  expect "include: a.c -> header-only h -> a.h is no cycle" 0 "" -- --root "$t/formats" "$t/clean"
  expect "usage: no objects -> exit 2" 2 "no objects" -- --root "$t/empty" "$t/empty"
  return $bad
}

self=$(cd "$(dirname "$0")" && pwd)/$(basename "$0")
root=$(dirname "$(dirname "$self")") objdir='' mode=check
while [ $# -gt 0 ]; do
  case $1 in --self-test) mode=self ;; --root) [ $# -ge 2 ] || usage; root=$2; shift ;;
    -*) usage ;; *) [ -z "$objdir" ] || usage; objdir=$1 ;; esac; shift
done
[ $mode = self ] || [ -n "$objdir" ] || usage
tmp=$(mktemp -d) || exit 2
trap 'rm -rf "$tmp"' EXIT
export MODULES USES HEADERS
if [ $mode = self ]; then self_test; else check "$objdir" "$root"; fi
