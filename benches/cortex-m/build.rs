//! Linker set-up for `thumbv*` targets only (cortex-m-rt's `link.x` and this crate's
//! `memory.x`, the lm3s6965evb / mps2-an386 map); host builds get no linker arguments.

use std::path::PathBuf;
use std::{env, fs};

fn main() {
    println!("cargo:rerun-if-changed=memory.x");
    println!("cargo:rerun-if-changed=build.rs");
    let target = env::var("TARGET").unwrap_or_default();
    if !target.starts_with("thumbv") {
        return;
    }
    let (Some(manifest), Some(out)) = (env::var_os("CARGO_MANIFEST_DIR"), env::var_os("OUT_DIR"))
    else {
        println!("cargo:warning=CARGO_MANIFEST_DIR or OUT_DIR not set");
        return;
    };
    let out = PathBuf::from(out);
    if let Err(e) = fs::copy(
        PathBuf::from(manifest).join("memory.x"),
        out.join("memory.x"),
    ) {
        println!("cargo:warning=cannot copy memory.x: {e}");
        return;
    }
    println!("cargo:rustc-link-search={}", out.display());
    println!("cargo:rustc-link-arg-bins=-Tlink.x");
}
