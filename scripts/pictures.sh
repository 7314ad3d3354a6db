#!/usr/bin/env bash
# Draws the README's pictures with the README's commands, into docs/ or
# into the directory given (tests/pictures.rs draws them into a temporary
# one and checks that the committed ones are current).
#
#     bash scripts/pictures.sh [DIR]        # CANONODE=path/to/canonode to choose the binary
set -euo pipefail
cd "$(dirname "$0")/.."
out="${1:-docs}"
bin="${CANONODE:-target/release/canonode}"
mkdir -p "$out"
for ext in svg png; do
    "$bin" scan samples/demo_tamarind_halo.ode --vary 'h=0:1:0.05' --at 'M=1,l=2' --overtones 0..1 --plot "$out/demo_scan.$ext" > /dev/null
    "$bin" scan samples/demo_tamarind_halo.ode --vary 'h=0:0.6:0.05' --vary 'l=2:6:1' --at 'M=1' --plot "$out/demo_map.$ext" > /dev/null
    "$bin" scatter samples/demo_tamarind_halo.ode --at 'M=1,h=0.3' --omega 0.1:1.5:0.01 --sum-l 0..8 --plot "$out/demo_cross_section.$ext" > /dev/null
    "$bin" spectrum samples/demo_tamarind_halo.ode --at 'M=1,h=0.3,l=2' --overtones 0..1 --mode-reach 12 --mode-plot "$out/demo_modes.$ext" > /dev/null
done
