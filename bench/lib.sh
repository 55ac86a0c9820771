# Shared by the bench/ scripts: build the program, time commands, print
# ratios. Source it; it sets $work (removed on exit), $sweep and $smoke.
set -euo pipefail
here=$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)
export PATH="$PATH:/usr/local/go/bin"
work=$(mktemp -d "${TMPDIR:-/tmp}/sweep-bench.XXXXXX")
trap 'rm -rf "$work"' EXIT
sweep="$work/sweep"
(cd "$here" && go build -o "$sweep" ./cmd/sweep)
# BENCH_SMOKE=1: tiny sizes, one repeat, no ratio judged (CI).
smoke=${BENCH_SMOKE:-0}

# now prints the time in seconds.
now() { date +%s.%N; }

# seconds CMD...: runs CMD, prints its wall time in seconds; a command
# that fails stops the benchmark with its error output.
seconds() {
	local t0 t1
	t0=$(now)
	if ! "$@" >/dev/null 2>"$work/err"; then
		echo "bench: failed: $*" >&2
		tail -5 "$work/err" >&2
		exit 1
	fi
	t1=$(now)
	python3 -c "print(f'{$t1 - $t0:.4f}')"
}

# median V...: the median of numbers.
median() { printf '%s\n' "$@" | sort -g | awk '{ v[NR] = $1 } END { print (NR % 2) ? v[(NR + 1) / 2] : (v[NR / 2] + v[NR / 2 + 1]) / 2 }'; }

# report NAME OURS THEIRS TARGET [lower|higher]: prints
# "NAME ratio=X (A s vs B s; target ...)" and, unless in smoke mode, says
# whether the target is met (ratio at most TARGET, or at least it).
report() {
	local name=$1 a=$2 b=$3 target=$4 sense=${5:-lower}
	python3 - "$name" "$a" "$b" "$target" "$sense" "$smoke" <<'PY'
import sys
name, a, b, target, sense, smoke = sys.argv[1], float(sys.argv[2]), float(sys.argv[3]), float(sys.argv[4]), sys.argv[5], sys.argv[6]
r = a / b if b > 0 else float('inf')
ok = r <= target if sense == 'lower' else r >= target
verdict = '' if smoke == '1' else ('  meets' if ok else '  MISSES') + f' the target ({"at most" if sense == "lower" else "at least"} {target:g})'
print(f'{name} ratio={r:.2f} ({a:.3f} s vs {b:.3f} s){verdict}')
PY
}

# floor WHAT PART WHOLE: prints the share of WHOLE seconds that PART is,
# for naming the floor of a time that misses its target.
floor() {
	python3 -c "import sys; p, w = float(sys.argv[2]), float(sys.argv[3]); print(f'  of which {sys.argv[1]}: {p:.3f} s ({100 * p / w:.0f} %)')" "$1" "$2" "$3"
}
