#!/usr/bin/env bash
# Dispatch: `sweep run --cores 2` on 2,000 planned variants whose only
# stage is `true`, against `xargs -P 2 -n 1 true` starting the same 2,000
# commands, interleaved, five times each; prints the median ratio
# (target: at most 1.5, every job's start and end still committed to the
# study database before the program acts on it).
#
# Usage: bench/dispatch.sh [VARIANTS] [REPEATS]
source "$(dirname "$0")/lib.sh"
n=${1:-2000}
reps=${2:-5}
if [ "$smoke" = 1 ]; then n=20 reps=1; fi
study() {
	local d=$1
	mkdir -p "$d/template"
	echo x >"$d/template/case.txt"
	cat >"$d/study.toml" <<TOML
[case]
base = "template"
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
	"$sweep" plan "$d" >/dev/null
}
ours=() theirs=()
for i in $(seq "$reps"); do
	study "$work/s$i"
	ours+=("$(seconds "$sweep" run "$work/s$i" --cores 2 -q)")
	theirs+=("$(seconds sh -c "seq $n | xargs -P 2 -n 1 true")")
	rm -rf "$work/s$i"
done
report "dispatch($n variants, 2 cores)" "$(median "${ours[@]}")" "$(median "${theirs[@]}")" 1.5
