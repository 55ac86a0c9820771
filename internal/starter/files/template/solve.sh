#!/bin/sh
# Stand-in solver: writes an invented drag and lift history (time Cd Cl)
# with a start-up transient and a shedding-like oscillation. The numbers
# are made up for the demonstration; a real study calls its solver here.
set -eu
test -f mesh.txt || { echo "no mesh: run the mesh stage first" >&2; exit 1; }
awk -v seed="$SWEEP_VARIANT_LABEL" '
  $1 == "nose_radius" { r = $2 }
  $1 == "tail_angle"  { a = $2 }
  $1 == "steps"       { n = $2 }
  END {
    srand(length(seed) * 7 + r * 1000 + a)
    cd = 0.62 - 0.5 * r + 0.35 * r * r + 0.0009 * (a - 9) * (a - 9)
    print "# time Cd Cl"
    for (i = 1; i <= n; i++) {
      t = i * 0.05
      tr = 0.4 * exp(-t / 1.5)
      printf "%.3f %.6f %.6f\n", t, cd + tr + 0.02 * sin(2.1 * t) + 0.01 * (rand() - 0.5), 0.1 * sin(2.1 * t + 0.3)
    }
  }' case.txt > forces.dat
sleep 1
echo "solve finished: $(wc -l < forces.dat) lines of history"
