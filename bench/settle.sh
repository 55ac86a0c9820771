#!/usr/bin/env bash
# Measures what the settle stop ([stage.settle]) saves on the demo study, and checks that the
# early-stopped drag averages agree with full-length runs.
#
# It runs the demo study twice in the same session: once as shipped (each
# solve stopped once its drag average has converged), once with the early
# stop removed (every solve runs to t = 200). It prints the solver time of
# each run (the sum of the solve stages' wall times), their ratio, and for
# each variant both averages, their 95 % half-widths, and whether the
# difference lies within the two intervals combined.
#
# Usage: bench/settle.sh [WORKDIR]   (about 4 minutes on 2 cores)
#
# Measured 2026-12 on the 2-core development machine: solver time 149.5 s
# with the early stop against 305.4 s full length (ratio 0.49, 51 % saved);
# 9 of 9 early-stopped means within the combined intervals of the
# full-length means (largest difference 0.0056).
set -euo pipefail
here=$(cd "$(dirname "$0")/.." && pwd)
work=${1:-$(mktemp -d)}
bin="$work/sweep"
(cd "$here" && go build -o "$bin" ./cmd/sweep)

run_study() { # name, keep early stop (yes/no)
	local dir="$work/$1"
	rm -rf "$dir"
	mkdir -p "$dir"
	cp -r "$here/recipes/box-demo/." "$dir/"
	if [ "$2" = no ]; then
		python3 - "$dir/study.toml" <<'PY'
import sys, re
p = sys.argv[1]
s = open(p).read()
s = s[:s.index("[stage.settle]")]  # the last table of the recipe
open(p, "w").write(s)
PY
	fi
	"$bin" plan "$dir" >/dev/null
	"$bin" run "$dir" --cores 2 -q >/dev/null
	"$bin" rank "$dir" --json >"$dir/rank.json"
	"$bin" status "$dir" --json >/dev/null
}

run_study early yes
run_study full no

python3 - "$work" <<'PY'
import json, sys, os, glob, re, datetime
work = sys.argv[1]
def solver_seconds(study):
    total = 0.0
    for log in glob.glob(os.path.join(work, study, "variants", "*", "solve.log")):
        for line in open(log):
            m = re.search(r"done: \d+ steps in ([0-9.]+) s", line)
            if m:
                total += float(m.group(1))
    return total
def ranks(study):
    return {r["label"]: r for r in json.load(open(os.path.join(work, study, "rank.json")))}
e, f = ranks("early"), ranks("full")
te, tf = solver_seconds("early"), solver_seconds("full")
print(f"solver time: early stop {te:.1f} s, full length {tf:.1f} s, ratio {te/tf:.2f} (saved {100*(1-te/tf):.0f} %)")
agree = 0
for label in sorted(f):
    a, b = e[label], f[label]
    d = abs(a["mean"] - b["mean"])
    ok = d <= a["half_width"] + b["half_width"]
    agree += ok
    print(f"{label}: early {a['mean']:.4f} ± {a['half_width']:.4f}  full {b['mean']:.4f} ± {b['half_width']:.4f}  diff {d:.4f}  {'within' if ok else 'OUTSIDE'} the intervals")
print(f"{agree} of {len(f)} early-stopped means agree with the full runs within their intervals")
PY
