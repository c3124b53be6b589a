//! Named bearer tokens: who may call a server, until when, and which methods.
//!
//! A server without tokens serves everyone (loopback only). With `--token-file` or
//! `STEAMCELL_TOKEN` it has one token, named `default`, allowed everything. With `--tokens-file`
//! it reads one line per user or service:
//!
//! ```text
//! # name    token hash                                                                [options]
//! alice     sha256:2bb80d537b1da3e38bd30361aa855686bde0eacd7162fef6a25fe97bf527a25b  expires=2027-01-31
//! historian sha256:...                                       methods=water.batch,server.info
//! ```
//!
//! - `name`: 1 to 64 of `A-Z a-z 0-9 . _ @ -`, unique in the file; written to the audit line of
//!   every call made with the token.
//! - the hash: `sha256:` and the 64 lower- or upper-case hex digits of the SHA-256 of the token's
//!   UTF-8 bytes (what `steamcell token NAME` prints, or `printf %s TOKEN | sha256sum`); the file
//!   never holds a token itself. Two lines may not share a hash.
//! - `expires=` (optional): an instant in UTC, `YYYY-MM-DD` (00:00 that day) or
//!   `YYYY-MM-DDTHH:MM[:SS][Z]`; from that instant the token is refused.
//! - `methods=` (optional): a comma-separated allow-list of method names, `group.*` for every
//!   method of a group, or `*`; without it every method is allowed. The plain routes count as the
//!   method they run ([`permission_for`]): `GET /cell` is `water.state`, `GET /site/...` is
//!   `balance.solve`, `POST /columns` is `water.batch`, `GET /schema` is `server.schema`,
//!   `GET /validation` is `server.selftest` and `GET /metrics` is `server.metrics`.
//! - `#` starts a comment line; blank lines are ignored.
//!
//! A malformed file is refused as a whole with the number of its first bad line; on a reload
//! (SIGHUP) the tokens in force stay in force. Every call re-checks its token against the table
//! in force ([`Tokens::authorize`]), so a token removed from the file (revoked), expired or
//! replaced is refused from the next call on, also on an open WebSocket.
//!
//! Invariant: no token is ever stored, logged or echoed; only SHA-256 hashes are held, and a
//! presented token is hashed and compared with every hash in constant time.

use super::{codes, ApiError};
use serde_json::json;
use std::path::{Path, PathBuf};
use std::sync::{Arc, RwLock};

/// The name of the one token of `--token-file` / `STEAMCELL_TOKEN`.
pub const DEFAULT_NAME: &str = "default";

/// The permission name of `GET /metrics` (not a JSON-RPC method).
pub const METRICS_PERMISSION: &str = "server.metrics";

/// The method a call or route counts as for a token's allow-list: the JSON-RPC method itself,
/// `water.state` for `GET /cell` (its calls carry that name already), `balance.solve` for
/// `GET /site/...`, `water.batch` for `POST /columns`, `server.selftest` for `GET /validation`.
pub fn permission_for(call_name: &str) -> &str {
    if call_name.starts_with("GET /site") {
        "balance.solve"
    } else if call_name == "POST /columns" {
        "water.batch"
    } else if call_name == "GET /validation" {
        "server.selftest"
    } else {
        call_name
    }
}

/// Every name a `methods=` list may hold: the registered methods and `server.metrics`.
pub fn permission_names() -> Vec<&'static str> {
    let mut names: Vec<&'static str> = super::registry().iter().map(|m| m.name).collect();
    names.push(METRICS_PERMISSION);
    names
}

/// SHA-256 of `bytes`.
pub fn sha256(bytes: &[u8]) -> [u8; 32] {
    let d = ring::digest::digest(&ring::digest::SHA256, bytes);
    let mut out = [0u8; 32];
    out.copy_from_slice(d.as_ref());
    out
}

/// Lower-case hex of `bytes`.
pub fn hex(bytes: &[u8]) -> String {
    bytes.iter().map(|b| format!("{b:02x}")).collect()
}

/// The line of a tokens file for `name` and `token` (`sha256:` hash, options appended).
pub fn file_line(name: &str, token: &str, options: &[String]) -> String {
    let mut line = format!("{name} sha256:{}", hex(&sha256(token.as_bytes())));
    for o in options {
        line.push(' ');
        line.push_str(o);
    }
    line
}

/// A new random token: 32 bytes from the system's secure random source, as 64 hex digits.
pub fn mint() -> Result<String, String> {
    use ring::rand::SecureRandom;
    let mut bytes = [0u8; 32];
    ring::rand::SystemRandom::new()
        .fill(&mut bytes)
        .map_err(|_| "the system's random source failed".to_string())?;
    Ok(hex(&bytes))
}

fn constant_time_eq(a: &[u8; 32], b: &[u8; 32]) -> bool {
    let mut diff = 0u8;
    for (x, y) in a.iter().zip(b) {
        diff |= std::hint::black_box(x ^ y);
    }
    std::hint::black_box(diff) == 0
}

/// One method pattern of an allow-list: a method name, `group.*`, or `*`.
#[derive(Debug, Clone, PartialEq, Eq)]
enum Pattern {
    All,
    Group(String),
    Exact(String),
}

impl Pattern {
    fn matches(&self, method: &str) -> bool {
        match self {
            Pattern::All => true,
            Pattern::Group(g) => method
                .strip_prefix(g.as_str())
                .is_some_and(|rest| rest.starts_with('.')),
            Pattern::Exact(m) => m == method,
        }
    }
}

impl std::fmt::Display for Pattern {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Pattern::All => write!(f, "*"),
            Pattern::Group(g) => write!(f, "{g}.*"),
            Pattern::Exact(m) => write!(f, "{m}"),
        }
    }
}

/// One token of the table.
#[derive(Debug, Clone)]
pub struct Entry {
    /// The token's name (audit lines, metrics, messages).
    pub name: Arc<str>,
    hash: [u8; 32],
    /// Refused from this instant on (seconds since the Unix epoch, UTC).
    pub expires: Option<i64>,
    /// The allow-list; `None` allows every method.
    methods: Option<Vec<Pattern>>,
}

impl Entry {
    /// Whether this token may call `permission` (a method name or `server.metrics`).
    pub fn allows(&self, permission: &str) -> bool {
        self.methods
            .as_ref()
            .is_none_or(|ps| ps.iter().any(|p| p.matches(permission)))
    }

    fn allowed_text(&self) -> String {
        match &self.methods {
            None => "*".to_string(),
            Some(ps) => ps
                .iter()
                .map(ToString::to_string)
                .collect::<Vec<_>>()
                .join(","),
        }
    }
}

/// The tokens in force: a list of entries.
#[derive(Debug, Clone, Default)]
pub struct Table {
    entries: Vec<Entry>,
}

impl Table {
    /// The one token of `--token-file` / `STEAMCELL_TOKEN`, named `default`, allowed everything.
    pub fn single(token: &str) -> Table {
        Table {
            entries: vec![Entry {
                name: Arc::from(DEFAULT_NAME),
                hash: sha256(token.as_bytes()),
                expires: None,
                methods: None,
            }],
        }
    }

    /// Parses a tokens file (see the module doc); the error names the first bad line.
    pub fn parse(text: &str) -> Result<Table, String> {
        let known = permission_names();
        let mut entries: Vec<Entry> = Vec::new();
        for (i, raw) in text.lines().enumerate() {
            let n = i + 1;
            let line = raw.trim();
            if line.is_empty() || line.starts_with('#') {
                continue;
            }
            let entry = parse_line(line, &known).map_err(|e| format!("line {n}: {e}"))?;
            if entries.iter().any(|e| e.name == entry.name) {
                return Err(format!(
                    "line {n}: the name '{}' is given twice",
                    entry.name
                ));
            }
            if let Some(other) = entries.iter().find(|e| e.hash == entry.hash) {
                return Err(format!(
                    "line {n}: '{}' has the same token hash as '{}' (give every user their own token)",
                    entry.name, other.name
                ));
            }
            entries.push(entry);
        }
        if entries.is_empty() {
            return Err("no token in the file (one line per token: NAME sha256:HEX [expires=...] [methods=...])".to_string());
        }
        Ok(Table { entries })
    }

    /// Number of tokens.
    pub fn len(&self) -> usize {
        self.entries.len()
    }

    /// Whether the table holds no token.
    pub fn is_empty(&self) -> bool {
        self.entries.is_empty()
    }

    /// The entry whose hash is the SHA-256 of `presented`, compared in constant time with every
    /// entry.
    pub fn find(&self, presented: &str) -> Option<&Entry> {
        let h = sha256(presented.as_bytes());
        let mut found = None;
        for e in &self.entries {
            if constant_time_eq(&e.hash, &h) && found.is_none() {
                found = Some(e);
            }
        }
        found
    }
}

fn parse_line(line: &str, known: &[&str]) -> Result<Entry, String> {
    let mut fields = line.split_whitespace();
    let name = fields.next().unwrap_or_default();
    if name.is_empty()
        || name.len() > 64
        || !name
            .bytes()
            .all(|b| b.is_ascii_alphanumeric() || matches!(b, b'.' | b'_' | b'@' | b'-'))
    {
        return Err(format!(
            "the name '{name}' is not 1 to 64 of A-Z a-z 0-9 . _ @ -"
        ));
    }
    let Some(hash_text) = fields.next() else {
        return Err(format!(
            "'{name}' has no token hash (write sha256:HEX after the name)"
        ));
    };
    let Some(hex_text) = hash_text.strip_prefix("sha256:") else {
        return Err(format!(
            "the token hash of '{name}' must start with sha256: (got '{}')",
            hash_text.chars().take(12).collect::<String>()
        ));
    };
    if hex_text.len() != 64 || !hex_text.bytes().all(|b| b.is_ascii_hexdigit()) {
        return Err(format!(
            "the token hash of '{name}' is not 64 hex digits (got {} characters)",
            hex_text.len()
        ));
    }
    let mut hash = [0u8; 32];
    for (k, byte) in hash.iter_mut().enumerate() {
        *byte = u8::from_str_radix(&hex_text[2 * k..2 * k + 2], 16)
            .map_err(|_| format!("the token hash of '{name}' is not hex"))?;
    }
    let mut expires = None;
    let mut methods = None;
    for f in fields {
        let (key, value) = f
            .split_once('=')
            .ok_or_else(|| format!("'{f}' is not an option (expires=... or methods=...)"))?;
        match key {
            "expires" if expires.is_none() => {
                expires =
                    Some(super::clock::parse_instant(value).map_err(|e| format!("expires: {e}"))?)
            }
            "methods" if methods.is_none() => {
                let mut list = Vec::new();
                for m in value.split(',').map(str::trim) {
                    let p = if m == "*" {
                        Pattern::All
                    } else if let Some(g) = m.strip_suffix(".*") {
                        if !known
                            .iter()
                            .any(|k| Pattern::Group(g.to_string()).matches(k))
                        {
                            return Err(format!("methods: no method in the group '{m}'"));
                        }
                        Pattern::Group(g.to_string())
                    } else if known.contains(&m) {
                        Pattern::Exact(m.to_string())
                    } else {
                        return Err(format!(
                            "methods: unknown method '{m}' (known: {})",
                            known.join(", ")
                        ));
                    };
                    list.push(p);
                }
                methods = Some(list);
            }
            "expires" | "methods" => return Err(format!("the option {key}= is given twice")),
            other => {
                return Err(format!(
                    "unknown option '{other}=' (options: expires=, methods=)"
                ))
            }
        }
    }
    Ok(Entry {
        name: Arc::from(name),
        hash,
        expires,
        methods,
    })
}

/// The token a request was admitted with: its name and hash, re-checked on every call.
#[derive(Debug, Clone)]
pub struct Identity {
    /// The token's name.
    pub name: Arc<str>,
    hash: [u8; 32],
}

/// Why a presented token is refused at the door.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Refusal {
    /// No token, or one that matches no entry.
    Unknown,
    /// A known token past its expiry.
    Expired(String),
}

/// Where a server's tokens come from.
#[derive(Debug, Clone)]
enum Source {
    /// No token required.
    None,
    /// One fixed token (`--token-file` / `STEAMCELL_TOKEN`).
    Single,
    /// A tokens file, reloaded on SIGHUP.
    File(PathBuf),
}

/// The tokens of one server (held by its [`ServerCtx`](super::ServerCtx)).
#[derive(Debug)]
pub struct Tokens {
    source: Source,
    table: RwLock<Arc<Table>>,
}

impl Default for Tokens {
    fn default() -> Tokens {
        Tokens::none()
    }
}

impl Tokens {
    /// No token required.
    pub fn none() -> Tokens {
        Tokens {
            source: Source::None,
            table: RwLock::new(Arc::new(Table::default())),
        }
    }

    /// One token, named `default`.
    pub fn single(token: &str) -> Tokens {
        Tokens {
            source: Source::Single,
            table: RwLock::new(Arc::new(Table::single(token))),
        }
    }

    /// The tokens of a file (read now; the error names the file and the line).
    pub fn from_file(path: &Path) -> Result<Tokens, String> {
        let table = read_file(path)?;
        Ok(Tokens {
            source: Source::File(path.to_path_buf()),
            table: RwLock::new(Arc::new(table)),
        })
    }

    /// Whether requests need a token.
    pub fn required(&self) -> bool {
        !matches!(self.source, Source::None)
    }

    /// The tokens file, when the tokens come from one.
    pub fn file(&self) -> Option<&Path> {
        match &self.source {
            Source::File(p) => Some(p),
            _ => None,
        }
    }

    /// The table in force.
    pub fn current(&self) -> Arc<Table> {
        Arc::clone(&self.table.read().unwrap_or_else(|e| e.into_inner()))
    }

    /// Re-reads the tokens file: `Ok(count)` once the new table is in force; on an error the
    /// table in force stays. `Ok(None)` when the tokens do not come from a file.
    pub fn reload(&self) -> Result<Option<usize>, String> {
        let Source::File(path) = &self.source else {
            return Ok(None);
        };
        let table = read_file(path)?;
        let n = table.len();
        *self.table.write().unwrap_or_else(|e| e.into_inner()) = Arc::new(table);
        Ok(Some(n))
    }

    /// Admits a presented token at `now` (seconds since the epoch): its identity, or why not.
    pub fn admit(&self, presented: &str, now: i64) -> Result<Identity, Refusal> {
        let table = self.current();
        let Some(e) = table.find(presented) else {
            return Err(Refusal::Unknown);
        };
        if e.expires.is_some_and(|x| now >= x) {
            return Err(Refusal::Expired(e.name.to_string()));
        }
        Ok(Identity {
            name: Arc::clone(&e.name),
            hash: e.hash,
        })
    }

    /// Whether the token `who` may call `permission` now: still in the table in force (same
    /// name, same hash), not expired, and allowed the method. The error is code 1010
    /// (`forbidden`) naming the token, the method and the reason.
    pub fn authorize(&self, who: &Identity, permission: &str, now: i64) -> Result<(), ApiError> {
        let table = self.current();
        let entry = table
            .entries
            .iter()
            .find(|e| e.name == who.name && constant_time_eq(&e.hash, &who.hash));
        let Some(e) = entry else {
            return Err(forbidden(
                &who.name,
                permission,
                "revoked",
                format!(
                    "the token '{}' is no longer valid (revoked or replaced in the tokens file)",
                    who.name
                ),
            ));
        };
        if let Some(x) = e.expires.filter(|x| now >= *x) {
            return Err(forbidden(
                &who.name,
                permission,
                "expired",
                format!(
                    "the token '{}' expired at {}",
                    who.name,
                    super::clock::rfc3339_utc(x * 1000)
                ),
            ));
        }
        if !e.allows(permission) {
            return Err(forbidden(
                &who.name,
                permission,
                "method",
                format!(
                    "the token '{}' may not call {permission} (allowed: {})",
                    who.name,
                    e.allowed_text()
                ),
            ));
        }
        Ok(())
    }
}

fn read_file(path: &Path) -> Result<Table, String> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| format!("cannot read the tokens file {}: {e}", path.display()))?;
    Table::parse(&text).map_err(|e| format!("tokens file {}: {e}", path.display()))
}

/// A call refused for its token (code 1010, `forbidden`).
pub fn forbidden(token: &str, method: &str, reason: &str, message: String) -> ApiError {
    ApiError {
        code: codes::FORBIDDEN,
        message,
        data: json!({ "kind": "forbidden", "token": token, "method": method, "reason": reason }),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sha256_known_value() {
        // FIPS 180-2 Appendix B.1: SHA-256("abc").
        assert_eq!(
            hex(&sha256(b"abc")),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }

    fn line(name: &str, token: &str, opts: &str) -> String {
        format!("{name} sha256:{} {opts}", hex(&sha256(token.as_bytes())))
    }

    #[test]
    fn a_file_is_parsed_and_checked() {
        let text = format!(
            "# team\n\n{}\n{}\n  {}\n",
            line("alice", "tok-a", ""),
            line("historian", "tok-h", "methods=water.batch,server.*"),
            line("bob@plant", "tok-b", "expires=2000-01-01"),
        );
        let t = Tokens {
            source: Source::Single,
            table: RwLock::new(Arc::new(Table::parse(&text).unwrap())),
        };
        let now = super::super::clock::parse_instant("2026-01-01").unwrap();
        let alice = t.admit("tok-a", now).unwrap();
        assert_eq!(&*alice.name, "alice");
        assert!(t.authorize(&alice, "water.batch", now).is_ok());
        let h = t.admit("tok-h", now).unwrap();
        assert!(t.authorize(&h, "server.info", now).is_ok());
        assert!(t.authorize(&h, "server.metrics", now).is_ok());
        let e = t.authorize(&h, "water.state", now).unwrap_err();
        assert_eq!(e.code, codes::FORBIDDEN);
        assert_eq!(e.data["reason"], "method");
        assert!(e.message.contains("historian"), "{}", e.message);
        assert!(e.message.contains("water.state"), "{}", e.message);
        assert_eq!(
            t.admit("tok-b", now).unwrap_err(),
            Refusal::Expired("bob@plant".into())
        );
        assert_eq!(t.admit("tok-x", now).unwrap_err(), Refusal::Unknown);
        assert_eq!(t.admit("", now).unwrap_err(), Refusal::Unknown);
    }

    #[test]
    fn bad_lines_are_named() {
        let good = line("alice", "a", "");
        let cases = [
            (format!("{good}\nbob sha256:abc"), "line 2", "64 hex"),
            (format!("# c\n{good}\nbob"), "line 3", "no token hash"),
            (
                format!("{good}\n{}", line("alice", "b", "")),
                "line 2",
                "twice",
            ),
            (
                format!("{good}\n{}", line("bob", "a", "")),
                "line 2",
                "same token hash",
            ),
            (
                line("bob", "b", "methods=water.stat"),
                "line 1",
                "unknown method 'water.stat'",
            ),
            (
                line("bob", "b", "expires=tomorrow"),
                "line 1",
                "UTC instant",
            ),
            (
                line("bob", "b", "colour=blue"),
                "line 1",
                "unknown option 'colour='",
            ),
            (line("b/ob", "b", ""), "line 1", "is not 1 to 64"),
            ("bob md5:00".to_string(), "line 1", "sha256:"),
            ("# nothing\n".to_string(), "no token", ""),
        ];
        for (text, want1, want2) in cases {
            let e = Table::parse(&text).unwrap_err();
            assert!(e.contains(want1) && e.contains(want2), "{e}");
        }
    }

    #[test]
    fn reload_keeps_the_old_table_on_error() {
        let dir =
            std::env::temp_dir().join(format!("steamcell-tokens-unit-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("tokens");
        std::fs::write(&path, line("alice", "tok-a", "")).unwrap();
        let t = Tokens::from_file(&path).unwrap();
        let now = super::super::clock::now_unix();
        let alice = t.admit("tok-a", now).unwrap();
        std::fs::write(&path, "alice sha256:zz").unwrap();
        assert!(t.reload().unwrap_err().contains("line 1"));
        assert!(
            t.authorize(&alice, "water.state", now).is_ok(),
            "old table kept"
        );
        std::fs::write(&path, line("bob", "tok-b", "")).unwrap();
        assert_eq!(t.reload().unwrap(), Some(1));
        let e = t.authorize(&alice, "water.state", now).unwrap_err();
        assert_eq!(e.data["reason"], "revoked");
        assert!(t.admit("tok-b", now).is_ok());
        let _ = std::fs::remove_dir_all(&dir);
    }

    #[test]
    fn route_permissions() {
        assert_eq!(permission_for("GET /site/mill"), "balance.solve");
        assert_eq!(permission_for("POST /columns"), "water.batch");
        assert_eq!(permission_for("GET /validation"), "server.selftest");
        assert_eq!(permission_for("water.state"), "water.state");
        assert!(Pattern::Group("water".into()).matches("water.batch"));
        assert!(!Pattern::Group("water".into()).matches("waterx.batch"));
    }
}
