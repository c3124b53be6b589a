//! Tidy tests: the architecture invariants of DEVELOPERS.md checked on the source text, in the
//! manner of rust-analyzer's tidy tests.
//!
//! - the physics crate (`crates/steamcell-core`) has no dependencies and no module in it
//!   imports serde, schemars, jsonrpsee, tokio or std's I/O, network, process or environment
//!   modules, or prints;
//! - JSON (serde, serde_json, `json!`, schemars) appears only in `src/api` and `src/server`;
//! - every Rust module of the workspace (sources, tests, benches, examples) opens with its `//!`
//!   doc;
//! - every method of the registry has a one-line summary and a description;
//! - no code, script or data file of the checkout refers to the developers' shared folder beside
//!   the checkout
//!   (a user's clone has none: what the project uses is copied into it).
//!
//! Each scanner is a plain function over (path, text) so that its own test can show it fails
//! on a bad text: a tidy test that cannot fail is a defect.

use std::path::{Path, PathBuf};

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    for entry in entries {
        let path = entry.unwrap().path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

fn files_under(dirs: &[&str]) -> Vec<(PathBuf, String)> {
    let mut files = Vec::new();
    for d in dirs {
        rust_files(&root().join(d), &mut files);
    }
    files.sort();
    files
        .into_iter()
        .map(|f| {
            let text = std::fs::read_to_string(&f).unwrap();
            (f, text)
        })
        .collect()
}

/// The lines of `text` that are code (not `//` comments, so a doc may name what it avoids).
fn code_lines(text: &str) -> impl Iterator<Item = (usize, &str)> {
    text.lines()
        .enumerate()
        .filter(|(_, l)| !l.trim_start().starts_with("//"))
        .map(|(i, l)| (i + 1, l))
}

/// What the physics crate may not use: serialisation, async runtimes, protocol crates, I/O.
const IMPURE: &[&str] = &[
    "serde",
    "schemars",
    "jsonrpsee",
    "tokio",
    "std::io",
    "std::fs",
    "std::net",
    "std::process",
    "std::env",
    "println!",
    "eprintln!",
    "print!(",
    "eprint!(",
    "dbg!(",
];

/// Violations of the purity rule in one file of the physics crate.
fn impure_uses(path: &Path, text: &str) -> Vec<String> {
    let mut out = Vec::new();
    for (n, line) in code_lines(text) {
        for pat in IMPURE {
            if line.contains(pat) {
                out.push(format!("{}:{n}: uses {pat}", path.display()));
            }
        }
    }
    out
}

/// What only the API and server layers may use: JSON and its schema.
const JSON: &[&str] = &["serde_json", "use serde", "serde::", "json!(", "schemars"];

/// Violations of the JSON rule in one file outside `src/api` and `src/server`.
fn json_uses(path: &Path, text: &str) -> Vec<String> {
    let mut out = Vec::new();
    for (n, line) in code_lines(text) {
        for pat in JSON {
            if line.contains(pat) {
                out.push(format!(
                    "{}:{n}: uses {pat} (JSON belongs in src/api or src/server)",
                    path.display()
                ));
            }
        }
    }
    out
}

/// Whether a module opens with its `//!` doc (blank lines before it are allowed).
fn has_module_doc(text: &str) -> bool {
    text.lines()
        .find(|l| !l.trim().is_empty())
        .is_some_and(|l| l.trim_start().starts_with("//!"))
}

/// The `[dependencies]` entries of a Cargo manifest.
fn dependencies(manifest: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut inside = false;
    for line in manifest.lines() {
        let t = line.trim();
        if t.starts_with('[') {
            inside = t == "[dependencies]";
            continue;
        }
        if inside && !t.is_empty() && !t.starts_with('#') {
            out.push(t.split('=').next().unwrap_or(t).trim().to_string());
        }
    }
    out
}

#[test]
fn the_physics_crate_has_no_dependencies() {
    let manifest =
        std::fs::read_to_string(root().join("crates/steamcell-core/Cargo.toml")).unwrap();
    assert_eq!(
        dependencies(&manifest),
        Vec::<String>::new(),
        "crates/steamcell-core must stay free of dependencies (no serde, tokio, jsonrpsee, schemars)"
    );
}

#[test]
fn the_physics_crate_is_pure() {
    let files = files_under(&["crates/steamcell-core/src"]);
    assert!(files.len() > 50, "the core's sources were not found");
    let bad: Vec<String> = files.iter().flat_map(|(p, t)| impure_uses(p, t)).collect();
    assert!(bad.is_empty(), "impure physics:\n{}", bad.join("\n"));
}

#[test]
fn json_lives_only_in_api_and_server() {
    let files = files_under(&["src", "crates/steamcell-core/src"]);
    let allowed = [root().join("src/api"), root().join("src/server")];
    let checked: Vec<&(PathBuf, String)> = files
        .iter()
        .filter(|(f, _)| !allowed.iter().any(|a| f.starts_with(a)))
        .collect();
    assert!(checked.iter().any(|(f, _)| f.ends_with("src/main.rs")));
    let bad: Vec<String> = checked.iter().flat_map(|(p, t)| json_uses(p, t)).collect();
    assert!(
        bad.is_empty(),
        "JSON outside its layers:\n{}",
        bad.join("\n")
    );
}

#[test]
fn every_module_opens_with_its_doc() {
    let files = files_under(&[
        "src",
        "crates/steamcell-core/src",
        "tests/it",
        "benches",
        "examples",
    ]);
    let bad: Vec<String> = files
        .iter()
        .filter(|(_, t)| !has_module_doc(t))
        .map(|(p, _)| p.display().to_string())
        .collect();
    assert!(
        bad.is_empty(),
        "modules without an opening //! doc:\n{}",
        bad.join("\n")
    );
}

#[test]
fn every_method_is_described() {
    let methods = steamcell::api::registry();
    assert!(methods.len() > 10);
    for m in methods {
        assert!(
            !m.summary.trim().is_empty() && !m.description.trim().is_empty(),
            "method {} lacks a summary or a description",
            m.name
        );
        assert!(
            !m.summary.contains('\n') && !m.summary.ends_with('.'),
            "the summary of {} is one line without a closing period: {:?}",
            m.name,
            m.summary
        );
        assert!(
            m.description.len() > m.summary.len() / 2,
            "the description of {} says too little: {:?}",
            m.name,
            m.description
        );
    }
}

/// The file kinds that run or feed a build, a test or the server (documents may name the
/// folder when they say that nothing reads it).
const CODE_EXTENSIONS: &[&str] = &[
    "rs", "py", "sh", "js", "mjs", "toml", "json", "yml", "yaml", "cfg", "xml", "xcu", "xcs",
    "idl", "html", "service", "R", "r",
];

/// Folders that are not the project's own text: build output, environments, dependencies.
const SKIPPED_DIRS: &[&str] = &["target", ".git", ".venv", "node_modules", "__pycache__"];

fn code_files(dir: &Path, out: &mut Vec<PathBuf>) {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    for entry in entries {
        let path = entry.unwrap().path();
        let name = path.file_name().unwrap().to_string_lossy().to_string();
        if path.is_dir() {
            if !SKIPPED_DIRS.contains(&name.as_str()) && !name.starts_with(".venv") {
                code_files(&path, out);
            }
        } else if path
            .extension()
            .is_some_and(|e| CODE_EXTENSIONS.contains(&e.to_string_lossy().as_ref()))
            || name == "Dockerfile"
            || name == "run"
        {
            out.push(path);
        }
    }
}

/// The developers' folder beside the checkout, spelled in pieces so that this file does not
/// name it itself.
const SHARED: &str = concat!("..", "/", "shared");
const SHARED_ABS: &str = concat!("/work", "/", "shared");

/// The lines of `text` that name the developers' shared folder.
fn shared_folder_uses(path: &Path, text: &str) -> Vec<String> {
    text.lines()
        .enumerate()
        .filter(|(_, l)| l.contains(SHARED) || l.contains(SHARED_ABS))
        .map(|(i, l)| format!("{}:{}: {}", path.display(), i + 1, l.trim()))
        .collect()
}

#[test]
fn nothing_reads_the_shared_folder() {
    let mut files = Vec::new();
    code_files(root(), &mut files);
    assert!(
        files.len() > 100,
        "the checkout's files were not found ({})",
        files.len()
    );
    let bad: Vec<String> = files
        .iter()
        .filter_map(|f| std::fs::read_to_string(f).ok().map(|t| (f, t)))
        .flat_map(|(f, t)| shared_folder_uses(f.strip_prefix(root()).unwrap_or(f), &t))
        .collect();
    assert!(
        bad.is_empty(),
        "files that refer to {SHARED} (copy what they need into the project):\n{}",
        bad.join("\n")
    );
}

/// The scanners find what they look for (each tidy test above can fail).
#[test]
fn the_scanners_catch_what_they_look_for() {
    let p = Path::new("x.rs");
    assert_eq!(impure_uses(p, "use std::io::Write;\n").len(), 1);
    assert_eq!(impure_uses(p, "    println!(\"x\");\n").len(), 1);
    assert!(impure_uses(p, "//! no serde here, and no std::io\nfn f() {}\n").is_empty());
    assert_eq!(
        json_uses(p, "let v = serde_json::to_string(&x);\n").len(),
        1
    );
    assert_eq!(json_uses(p, "let v = json!({});\n").len(), 1);
    assert_eq!(json_uses(p, "#[derive(serde::Serialize)]\n").len(), 1);
    assert!(json_uses(p, "// serde_json is named in a comment\n").is_empty());
    assert_eq!(
        shared_folder_uses(p, &format!("x = open('{SHARED}/reference/a.json')\n")).len(),
        1
    );
    assert!(shared_folder_uses(p, "x = open('tests/data/a.json')\n").is_empty());
    assert!(has_module_doc("\n//! Doc.\nfn f() {}\n"));
    assert!(!has_module_doc("/// item doc\nfn f() {}\n"));
    assert!(!has_module_doc("use x;\n//! late\n"));
    assert_eq!(
        dependencies("[package]\nname = \"a\"\n\n[dependencies]\nserde = \"1\"\n\n[dev-dependencies]\nx = \"1\"\n"),
        vec!["serde".to_string()]
    );
    assert!(dependencies("[dependencies]\n# none\n\n[dev-dependencies]\nx = \"1\"\n").is_empty());
}
