#!/usr/bin/env bash
# Render: `sweep plan` of 200 variants of a base case holding 1 GiB of
# large files (8 mesh files of 128 MiB, allocated on disk) and one small
# rendered file, against `cp -al` of the base case 200 times; interleaved,
# the median of REPEATS runs each (target: at most 2.0), and the disk the
# 200 variants added beside one copy of the base case (target: under 1 %).
#
# Usage: bench/render.sh [REPEATS]
source "$(dirname "$0")/lib.sh"
reps=${1:-5}
n=200 files=8 mib=128
if [ "$smoke" = 1 ]; then reps=1 n=5 files=2 mib=1; fi
tpl="$work/template"
mkdir -p "$tpl/mesh"
printf 'k = {{.k}}\n' >"$tpl/case.txt"
for i in $(seq "$files"); do
	fallocate -l "${mib}M" "$tpl/mesh/part$i" 2>/dev/null || dd if=/dev/zero of="$tpl/mesh/part$i" bs=1M count="$mib" status=none
done
study() {
	local d=$1
	mkdir -p "$d"
	cat >"$d/study.toml" <<TOML
[case]
base = "$tpl"
render = ["case.txt"]
[[param]]
name = "k"
min = 1
max = $n
steps = $n
[design]
scheme = "factorial"
[[stage]]
name = "s"
run = "true"
TOML
}
# used DIR...: kilobytes allocated below the DIRs, each hard-linked file
# counted once over all of them.
used() { du -skc "$@" | tail -1 | cut -f1; }
ours=() theirs=() added=0
for i in $(seq "$reps"); do
	study "$work/s$i"
	before=$(used "$tpl" "$work/s$i")
	ours+=("$(seconds "$sweep" plan "$work/s$i")")
	added=$(($(used "$tpl" "$work/s$i") - before))
	mkdir -p "$work/c$i"
	theirs+=("$(seconds sh -c "for v in \$(seq $n); do cp -al '$tpl' '$work/c$i/'\$v; done")")
	rm -rf "$work/s$i" "$work/c$i"
done
report "render($n variants, $((files * mib)) MiB shared)" "$(median "${ours[@]}")" "$(median "${theirs[@]}")" 2.0
python3 -c "import sys; a, one = int(sys.argv[1]), int(sys.argv[2]); print(f'render disk added={a / 1024:.1f} MiB ({100 * a / one:.2f} % of one copy of {one / 1024:.0f} MiB; target under 1 %)')" "$added" "$(used "$tpl")"
