#!/bin/sh
# Stand-in mesher: a real study calls its own meshing tool here.
set -eu
sleep 0.3
awk '$1 == "nose_radius" { r = $2 } END { printf "cells %d\n", 20000 + 5000 * r }' case.txt > mesh.txt
echo "mesh written for variant $SWEEP_VARIANT_LABEL"
