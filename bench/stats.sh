#!/usr/bin/env bash
# Stats: `sweep stats FILE --column 2 --json` on a 10 MB five-column
# history (time and four force coefficients, a shedding signal with
# correlated noise), against mawk merely averaging the same column;
# interleaved, the median of REPEATS runs each (target: at most 1.0).
# Also prints the share of the time that is starting the program (sweep
# --version on the same machine) and reading the column.
#
# Usage: bench/stats.sh [REPEATS]
source "$(dirname "$0")/lib.sh"
reps=${1:-11}
lines=200000
if [ "$smoke" = 1 ]; then reps=1 lines=2000; fi
awk_=$(command -v mawk || command -v awk)
"$awk_" -v n="$lines" 'BEGIN { srand(1); print "# time Cd Cl Cs Cm"; x = 0
  for (i = 1; i <= n; i++) { x = 0.9 * x + rand() - 0.5
    printf "%.5f %.9f %.9f %.9f %.9f\n", i * 0.001, 0.8 + 0.05 * sin(i * 0.1) + 0.01 * x, 0.3 * sin(i * 0.05) + 0.1 * x, 0.01 * x, 0.001 * x } }' >"$work/h.dat"
ours=() theirs=() start=()
for _ in $(seq "$reps"); do
	ours+=("$(seconds "$sweep" stats "$work/h.dat" --column 2 --json)")
	theirs+=("$(seconds "$awk_" '!/^#/ { s += $2; n++ } END { print s / n }' "$work/h.dat")")
	start+=("$(seconds "$sweep" --version)")
done
size=$(du -m --apparent-size "$work/h.dat" | cut -f1)
report "stats(${size} MB history)" "$(median "${ours[@]}")" "$(median "${theirs[@]}")" 1.0
floor "starting the program" "$(median "${start[@]}")" "$(median "${ours[@]}")"
