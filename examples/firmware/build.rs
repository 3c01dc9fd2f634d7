//! Copies the memory layout of the QEMU board for `$TARGET` to `OUT_DIR/memory.x`, where
//! cortex-m-rt's `link.x` finds it, and adds `-Tdefmt.x` for the defmt example only.

use std::env;
use std::fs;
use std::path::PathBuf;

fn main() {
    let target = env::var("TARGET").unwrap_or_default();
    let file = if target.starts_with("thumbv6m") {
        "memory/microbit.x"
    } else if target.starts_with("thumbv7") {
        "memory/mps2-an386.x"
    } else {
        panic!("no QEMU board configured for target {target}")
    };
    let out = PathBuf::from(env::var("OUT_DIR").expect("OUT_DIR is set by cargo"));
    fs::copy(file, out.join("memory.x")).expect("copy memory.x");
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rerun-if-changed=memory/microbit.x");
    println!("cargo:rerun-if-changed=memory/mps2-an386.x");
    println!("cargo:rerun-if-changed=build.rs");
    if env::var_os("CARGO_FEATURE_DEFMT").is_some() {
        println!("cargo:rustc-link-arg-bin=defmt_log=-Tdefmt.x");
    }
}
