//! `steamcell serve --config FILE`: the serve flags as a TOML file, for running as a service.
//!
//! Every flag of `steamcell serve` but `--config` and `--check-config` has a key of the same
//! name without the dashes in front (`max-body-bytes = 1048576`, `allow-host = ["calc.example"]`,
//! `site = ["mill=/etc/steamcell/mill.json"]`, `insecure-http = true`); see
//! `deploy/steamcell.toml`. A key that is not one of them refuses the start with the key named
//! (and its line). Relative paths in the file are read from the file's own directory.
//!
//! Precedence: a flag given on the command line wins over the file; the file wins over the
//! environment (`STEAMCELL_TOKEN`) and the built-in defaults. A repeatable flag given on the
//! command line replaces the file's whole list. The tokens are one setting: `--tokens-file` or
//! `--token-file` on the command line replaces either key of the file.
//!
//! Invariant: [`KEYS`] lists every key; `tests/it/deploy.rs` checks it against the flags of
//! `steamcell serve --help`.

use serde::Deserialize;
use std::path::{Path, PathBuf};

/// Every key a config file may hold, in the order of `steamcell serve --help`.
pub const KEYS: &[&str] = &[
    "listen",
    "token-file",
    "tokens-file",
    "tls-cert",
    "tls-key",
    "insecure-http",
    "allow-host",
    "allow-origin",
    "max-body-bytes",
    "max-response-bytes",
    "max-batch-requests",
    "max-batch-rows",
    "max-json-depth",
    "max-ws-message-bytes",
    "max-connections",
    "max-in-flight",
    "request-timeout",
    "log-level",
    "audit",
    "site",
    "stop-on-stdin-eof",
];

/// The contents of a config file: each key optional.
#[derive(Debug, Clone, Default, PartialEq, Deserialize)]
#[serde(deny_unknown_fields, rename_all = "kebab-case")]
pub struct ConfigFile {
    /// `--listen`.
    pub listen: Option<String>,
    /// `--token-file`.
    pub token_file: Option<PathBuf>,
    /// `--tokens-file`.
    pub tokens_file: Option<PathBuf>,
    /// `--tls-cert`.
    pub tls_cert: Option<PathBuf>,
    /// `--tls-key`.
    pub tls_key: Option<PathBuf>,
    /// `--insecure-http`.
    pub insecure_http: Option<bool>,
    /// `--allow-host` (a list).
    pub allow_host: Option<Vec<String>>,
    /// `--allow-origin` (a list).
    pub allow_origin: Option<Vec<String>>,
    /// `--max-body-bytes`.
    pub max_body_bytes: Option<u32>,
    /// `--max-response-bytes`.
    pub max_response_bytes: Option<u32>,
    /// `--max-batch-requests`.
    pub max_batch_requests: Option<u32>,
    /// `--max-batch-rows`.
    pub max_batch_rows: Option<u32>,
    /// `--max-json-depth`.
    pub max_json_depth: Option<u32>,
    /// `--max-ws-message-bytes`.
    pub max_ws_message_bytes: Option<u32>,
    /// `--max-connections`.
    pub max_connections: Option<u32>,
    /// `--max-in-flight`.
    pub max_in_flight: Option<u32>,
    /// `--request-timeout` (seconds).
    pub request_timeout: Option<f64>,
    /// `--log-level`.
    pub log_level: Option<String>,
    /// `--audit`.
    pub audit: Option<PathBuf>,
    /// `--site` (a list of NAME=FILE).
    pub site: Option<Vec<String>>,
    /// `--stop-on-stdin-eof`.
    pub stop_on_stdin_eof: Option<bool>,
}

/// The 1-based line of byte offset `at` in `text`.
fn line_of(text: &str, at: usize) -> usize {
    text.as_bytes()[..at.min(text.len())]
        .iter()
        .filter(|b| **b == b'\n')
        .count()
        + 1
}

/// The key a `key = value` line sets, if line `line` (1-based) is one.
fn key_on_line(text: &str, line: usize) -> Option<&str> {
    let (key, _) = text.lines().nth(line.checked_sub(1)?)?.split_once('=')?;
    let key = key.trim();
    (!key.is_empty()
        && key
            .chars()
            .all(|c| c.is_ascii_alphanumeric() || c == '-' || c == '_'))
    .then_some(key)
}

/// Parses a config file's text; `dir` is the directory relative paths are read from.
pub fn parse(text: &str, dir: &Path) -> Result<ConfigFile, String> {
    let mut c: ConfigFile = toml::from_str(text).map_err(|e| {
        let message = e.message().trim().replace('\n', " ");
        match e.span() {
            Some(span) => {
                let line = line_of(text, span.start);
                // A value of the wrong type: the message names the type, not the key.
                match key_on_line(text, line) {
                    Some(key) if !message.contains(key) => {
                        format!("line {line}: {key}: {message}")
                    }
                    _ => format!("line {line}: {message}"),
                }
            }
            None => message,
        }
    })?;
    let resolve = |p: &mut Option<PathBuf>| {
        if let Some(path) = p {
            if path.is_relative() {
                *path = dir.join(&*path);
            }
        }
    };
    resolve(&mut c.token_file);
    resolve(&mut c.tokens_file);
    resolve(&mut c.tls_cert);
    resolve(&mut c.tls_key);
    resolve(&mut c.audit);
    if let Some(sites) = &mut c.site {
        for s in sites.iter_mut() {
            if let Some((name, file)) = s.split_once('=') {
                let f = PathBuf::from(file.trim());
                if f.is_relative() {
                    *s = format!("{}={}", name.trim(), dir.join(f).display());
                }
            }
        }
    }
    Ok(c)
}

/// Reads and parses a config file (the error names the file, the line and the key).
pub fn read(path: &Path) -> Result<ConfigFile, String> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| format!("cannot read the config file {}: {e}", path.display()))?;
    let dir = path
        .parent()
        .filter(|d| !d.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    parse(&text, dir).map_err(|e| format!("config file {}: {e}", path.display()))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keys_parse_and_paths_resolve() {
        let text = r#"
listen = "0.0.0.0:8790"
tokens-file = "tokens"
tls-cert = "/etc/steamcell/cert.pem"
max-batch-rows = 5000
request-timeout = 2.5
allow-host = ["calc.plant.example"]
site = ["mill=mill.json"]
insecure-http = false
"#;
        let c = parse(text, Path::new("/srv/sc")).unwrap();
        assert_eq!(c.listen.as_deref(), Some("0.0.0.0:8790"));
        assert_eq!(c.tokens_file, Some(PathBuf::from("/srv/sc/tokens")));
        assert_eq!(c.tls_cert, Some(PathBuf::from("/etc/steamcell/cert.pem")));
        assert_eq!(c.max_batch_rows, Some(5000));
        assert_eq!(c.request_timeout, Some(2.5));
        assert_eq!(c.site, Some(vec!["mill=/srv/sc/mill.json".to_string()]));
    }

    #[test]
    fn an_unknown_key_is_named_with_its_line() {
        let e = parse(
            "listen = \"127.0.0.1:1\"\nmax-body-byte = 3\n",
            Path::new("."),
        )
        .unwrap_err();
        assert!(e.contains("line 2"), "{e}");
        assert!(e.contains("max-body-byte"), "{e}");
        assert!(!e.contains('\n'), "one line: {e}");
        // A value of the wrong type is named by its key too.
        let e = parse(
            "listen = \"127.0.0.1:1\"\nmax-batch-rows = \"many\"\n",
            Path::new("."),
        )
        .unwrap_err();
        assert!(e.starts_with("line 2: max-batch-rows: "), "{e}");
        let e = parse("allow-host = \"calc.example\"\n", Path::new(".")).unwrap_err();
        assert!(e.starts_with("line 1: allow-host: "), "{e}");
    }

    #[test]
    fn every_key_is_a_field() {
        for k in KEYS {
            let value = match *k {
                "insecure-http" | "stop-on-stdin-eof" => "true",
                "allow-host" | "allow-origin" | "site" => "[]",
                "request-timeout" => "1.5",
                k if k.starts_with("max-") => "1",
                _ => "\"x\"",
            };
            let text = format!("{k} = {value}\n");
            assert!(parse(&text, Path::new(".")).is_ok(), "{k}");
        }
    }
}
