#!/usr/bin/env bash
# Link-time no-panic proof for the controller-facing API (see src/main.rs), thumbv7em-none-eabihf,
# release, LTO. The build fails with "error(panic-never): your program contains at least one
# panicking branch" if any call in src/main.rs can panic. To find the branch:
#   cargo build --release --no-default-features   # same code, a plain panic handler
#   arm-none-eabi-objdump -d -C target/thumbv7em-none-eabihf/release/phdose-no-panic | grep 'bl.*panic'
#   arm-none-eabi-addr2line -f -i -C -e target/thumbv7em-none-eabihf/release/phdose-no-panic 0xADDR
set -euo pipefail
cd "$(dirname "$0")"
cargo build --release
elf=target/thumbv7em-none-eabihf/release/phdose-no-panic
echo "no reachable panic: $elf links with panic-never"
if command -v arm-none-eabi-size >/dev/null 2>&1; then
    arm-none-eabi-size "$elf"
fi
