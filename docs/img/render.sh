#!/usr/bin/env bash
# Regenerates the README's figures from the built-in examples:
#   docs/img/titration-curve.svg  written by `phdose curve --example --svg`
#   docs/img/simulation.svg       written by `phdose simulate --out` (the built-in scenario)
#   docs/img/*.png                converted with rsvg-convert (Debian package librsvg2-bin,
#                                 installed with apt-get when it is missing)
# Run from anywhere: bash docs/img/render.sh
set -euo pipefail
cd "$(dirname "$0")/../.."
out=docs/img
if ! command -v rsvg-convert > /dev/null; then
    echo "rsvg-convert not found: installing librsvg2-bin" >&2
    sudo=""
    if [ "$(id -u)" -ne 0 ]; then sudo=sudo; fi
    $sudo apt-get update -qq
    $sudo apt-get install -y -qq librsvg2-bin
fi
cargo run -q -p phdose-host -- curve --example --svg "$out/titration-curve.svg" > /dev/null
rsvg-convert --width 1000 --background-color white "$out/titration-curve.svg" --output "$out/titration-curve.png"
tmp=$(mktemp -d)
cargo run -q --release -p phdose-host -- simulate --out "$tmp" > /dev/null
cp "$tmp/simulation.svg" "$out/simulation.svg"
rm -rf "$tmp"
rsvg-convert --width 1000 --background-color white "$out/simulation.svg" --output "$out/simulation.png"
echo "wrote $out/titration-curve.{svg,png} and $out/simulation.{svg,png}"
