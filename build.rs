//! Records what the validation record says about this build (`src/api/record.rs`): the git
//! commit of the checkout (or `STEAMCELL_BUILD_COMMIT` when set, e.g. by a packager building
//! from a source archive), the target triple, the profile and the compiler's version line.
//!
//! Release builds ask git for HEAD (the commit, not any uncommitted change) and run again when
//! HEAD or the branch it names moves; debug builds record "not recorded in debug builds" unless
//! `STEAMCELL_BUILD_COMMIT` is set, so that committing does not recompile the crate while
//! developing. Without git the commit is recorded as empty ("unknown").

use std::path::{Path, PathBuf};
use std::process::Command;

fn git(args: &[&str]) -> Option<String> {
    let out = Command::new("git").args(args).output().ok()?;
    if !out.status.success() {
        return None;
    }
    let s = String::from_utf8(out.stdout).ok()?.trim().to_string();
    (!s.is_empty()).then_some(s)
}

fn watch(manifest: &Path, git_path: &str) {
    if let Some(p) = git(&["rev-parse", "--git-path", git_path]) {
        let p = PathBuf::from(p);
        let p = if p.is_absolute() { p } else { manifest.join(p) };
        if p.exists() {
            println!("cargo:rerun-if-changed={}", p.display());
        }
    }
}

fn main() {
    let manifest = PathBuf::from(std::env::var("CARGO_MANIFEST_DIR").unwrap_or_default());
    println!("cargo:rerun-if-changed=build.rs");
    println!("cargo:rerun-if-env-changed=STEAMCELL_BUILD_COMMIT");
    let profile = std::env::var("PROFILE").unwrap_or_default();
    let given = std::env::var("STEAMCELL_BUILD_COMMIT")
        .ok()
        .filter(|c| !c.trim().is_empty());
    // Only release builds (what a team deploys) ask git: watching HEAD in debug builds would
    // recompile the crate after every commit while developing.
    let release = profile == "release";
    let commit = match given {
        Some(c) => c,
        None if release => git(&["rev-parse", "HEAD"]).unwrap_or_default(),
        None => "not recorded in debug builds".to_string(),
    };
    if release && std::env::var_os("STEAMCELL_BUILD_COMMIT").is_none() {
        watch(&manifest, "HEAD");
        if let Some(branch) = git(&["symbolic-ref", "-q", "HEAD"]) {
            watch(&manifest, &branch);
        }
        watch(&manifest, "packed-refs");
    }
    let rustc = std::env::var("RUSTC").unwrap_or_else(|_| "rustc".to_string());
    let version = Command::new(rustc)
        .arg("-V")
        .output()
        .ok()
        .and_then(|o| String::from_utf8(o.stdout).ok())
        .map(|s| s.trim().to_string())
        .unwrap_or_default();
    println!("cargo:rustc-env=STEAMCELL_BUILD_COMMIT={}", commit.trim());
    println!(
        "cargo:rustc-env=STEAMCELL_BUILD_TARGET={}",
        std::env::var("TARGET").unwrap_or_default()
    );
    println!("cargo:rustc-env=STEAMCELL_BUILD_PROFILE={profile}");
    println!("cargo:rustc-env=STEAMCELL_BUILD_RUSTC={version}");
}
