#!/usr/bin/env bash
# Regenerates the README's titration-curve figure from the built-in example:
#   docs/img/titration-curve.svg  written by `phdose curve --example --svg`
#   docs/img/titration-curve.png  converted with rsvg-convert (Debian: apt-get install librsvg2-bin)
# Run from anywhere: bash docs/img/render.sh
set -euo pipefail
cd "$(dirname "$0")/../.."
out=docs/img
cargo run -q -p phdose-host -- curve --example --svg "$out/titration-curve.svg" > /dev/null
if ! command -v rsvg-convert > /dev/null; then
    echo "error: rsvg-convert not found (Debian/Ubuntu: apt-get install librsvg2-bin)" >&2
    exit 1
fi
rsvg-convert --width 1000 --background-color white "$out/titration-curve.svg" --output "$out/titration-curve.png"
echo "wrote $out/titration-curve.svg and $out/titration-curve.png"
