//! Puts `memory.x` (the RP2040 layout with the BOOT2 section) where cortex-m-rt's `link.x`
//! finds it, whatever directory the linker runs in.

use std::env;
use std::fs;
use std::path::PathBuf;

fn main() {
    let Some(out) = env::var_os("OUT_DIR").map(PathBuf::from) else {
        panic!("OUT_DIR is set by cargo")
    };
    if let Err(e) = fs::copy("memory.x", out.join("memory.x")) {
        panic!("copy memory.x: {e}")
    }
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rerun-if-changed=memory.x");
    println!("cargo:rerun-if-changed=build.rs");
}
