//! Puts the memory map on the linker search path as `memory.x`: the emulated board's
//! (`memory-qemu.x`, default) or a small MCU's (`memory-mcu.x`, with `PHDOSE_BOARD_MEMORY=mcu`).
//! Neither file is called `memory.x` itself: the linker would find that one in the package's
//! folder first, whatever this script copies.
use std::{env, fs, path::PathBuf};

fn main() {
    let out = PathBuf::from(env::var_os("OUT_DIR").unwrap_or_default());
    let map = match env::var("PHDOSE_BOARD_MEMORY").as_deref() {
        Ok("mcu") => "memory-mcu.x",
        _ => "memory-qemu.x",
    };
    if let Err(e) = fs::copy(map, out.join("memory.x")) {
        println!("cargo:warning=cannot copy {map}: {e}");
    }
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rerun-if-changed=memory-qemu.x");
    println!("cargo:rerun-if-changed=memory-mcu.x");
    println!("cargo:rerun-if-env-changed=PHDOSE_BOARD_MEMORY");
}
