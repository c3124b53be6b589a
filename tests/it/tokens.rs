//! Named tokens (`serve --tokens-file`) against the real binary: the audit line names the
//! token, SIGHUP reloads the file without dropping connections (a kept-alive HTTP connection
//! and an open WebSocket go on), a revoked token is refused from the next request and the next
//! call on an open WebSocket, expiry is honoured (at the door and on an open WebSocket), the
//! method allow-list holds for JSON-RPC, WebSocket and the plain routes, a malformed file
//! refuses the start with its line number and, on SIGHUP, keeps the tokens in force; the single
//! `--token-file` still works and is audited as "default"; `steamcell token` mints a usable line.
//!
//! Sources: the bearer scheme, RFC 6750; SHA-256, FIPS 180-4 (computed here with ring, apart
//! from the server's code); the check value IAPWS R7-97(2012) Table 5 (p = 3 MPa, T = 300 K:
//! h = 115.331273 kJ/kg).

use crate::common::team::*;
use crate::common::*;
use serde_json::Value;
use std::path::Path;

const ALICE: &str = "alice-0f1e2d3c4b5a69788796a5b4c3d2e1f0";
const BOB: &str = "bob-1234567890abcdef1234567890abcdef";
const CAROL: &str = "carol-fedcba0987654321fedcba0987654321";
const HIST: &str = "historian-aaaaaaaaaaaaaaaaaaaaaaaaaaaaaaaa";

fn bearer(t: &str) -> String {
    format!("Authorization: Bearer {t}")
}

fn write_tokens(path: &Path, lines: &[String]) {
    std::fs::write(path, lines.join("\n") + "\n").unwrap();
}

fn audit_lines(path: &Path) -> Vec<Value> {
    std::fs::read_to_string(path)
        .unwrap_or_default()
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect()
}

fn rpc_error(v: &Value) -> (i64, String) {
    (
        v["error"]["code"].as_i64().unwrap_or(0),
        v["error"]["data"]["reason"]
            .as_str()
            .unwrap_or("")
            .to_string(),
    )
}

#[test]
fn the_audit_line_names_the_token() {
    let dir = temp_dir("tokens-audit");
    let tokens = dir.join("tokens");
    write_tokens(
        &tokens,
        &[
            "# the team".to_string(),
            token_line("alice", ALICE, ""),
            token_line("bob@plant", BOB, "expires=2999-12-31"),
        ],
    );
    let audit = dir.join("audit.jsonl");
    let s = start_logged(
        &dir,
        &[
            "--tokens-file",
            tokens.to_str().unwrap(),
            "--audit",
            audit.to_str().unwrap(),
        ],
        &[],
    );
    let r = post(&s.addr, &[&bearer(ALICE)], CHECK_REQUEST.as_bytes());
    assert_check(&r.json());
    let r = request(
        &s.addr,
        "GET",
        "/cell/h?p=3%20MPa&T=300%20K",
        &[&bearer(BOB)],
        b"",
    );
    assert_eq!(r.status, 200, "{}", r.text());
    let mut ws = Ws::connect_with(&s.addr, &[&bearer(ALICE)]);
    assert_check(&serde_json::from_str(&ws.call(CHECK_REQUEST)).unwrap());
    // Refused at the door: not a call, no audit line.
    assert_eq!(
        post(&s.addr, &[&bearer("nobody")], CHECK_REQUEST.as_bytes()).status,
        401
    );
    let lines = audit_lines(&audit);
    let names: Vec<&str> = lines
        .iter()
        .map(|l| l["token"].as_str().unwrap_or("?"))
        .collect();
    assert_eq!(names, ["alice", "bob@plant", "alice"], "{lines:?}");
    let text = std::fs::read_to_string(&audit).unwrap();
    for secret in [ALICE, BOB] {
        assert!(!text.contains(secret), "a token in the audit file");
        assert!(!s.stderr_text().contains(secret), "a token in the log");
    }
}

#[test]
fn sighup_reloads_revokes_and_keeps_connections() {
    let dir = temp_dir("tokens-reload");
    let tokens = dir.join("tokens");
    write_tokens(
        &tokens,
        &[token_line("alice", ALICE, ""), token_line("bob", BOB, "")],
    );
    let s = start_logged(&dir, &["--tokens-file", tokens.to_str().unwrap()], &[]);
    // Connections opened before the reload.
    let mut bob_http = KeepAlive::plain(&s.addr);
    assert_check(
        &bob_http
            .post(&[&bearer(BOB)], CHECK_REQUEST.as_bytes())
            .json(),
    );
    let mut alice_ws = Ws::connect_with(&s.addr, &[&bearer(ALICE)]);
    assert_check(&serde_json::from_str(&alice_ws.call(CHECK_REQUEST)).unwrap());
    assert_eq!(
        post(&s.addr, &[&bearer(CAROL)], CHECK_REQUEST.as_bytes()).status,
        401
    );

    // Revoke alice, add carol, reload.
    write_tokens(
        &tokens,
        &[token_line("bob", BOB, ""), token_line("carol", CAROL, "")],
    );
    s.hangup();
    eventually("carol's token works after SIGHUP", || {
        post(&s.addr, &[&bearer(CAROL)], CHECK_REQUEST.as_bytes()).status == 200
    });
    // Revoked at once: a new request, and the next call on the open WebSocket.
    let r = post(&s.addr, &[&bearer(ALICE)], CHECK_REQUEST.as_bytes());
    assert_eq!(r.status, 401, "{}", r.text());
    let v: Value = serde_json::from_str(&alice_ws.call(CHECK_REQUEST)).unwrap();
    assert_eq!(rpc_error(&v), (1010, "revoked".to_string()), "{v}");
    assert!(
        v["error"]["message"].as_str().unwrap().contains("alice"),
        "{v}"
    );
    // The WebSocket itself is still open (it answers), and bob's kept-alive connection goes on.
    let v: Value = serde_json::from_str(&alice_ws.call(CHECK_REQUEST)).unwrap();
    assert_eq!(rpc_error(&v).0, 1010);
    assert_check(
        &bob_http
            .post(&[&bearer(BOB)], CHECK_REQUEST.as_bytes())
            .json(),
    );
    assert!(
        s.stderr_text().contains("tokens file reloaded: 2 tokens"),
        "{}",
        s.stderr_text()
    );

    // A malformed file on SIGHUP: the tokens in force stay, the log says why (with the line).
    std::fs::write(
        &tokens,
        format!("{}\ncarol sha256:00\n", token_line("bob", BOB, "")),
    )
    .unwrap();
    s.hangup();
    eventually("the failed reload is logged", || {
        s.stderr_text().contains("tokens file not reloaded")
    });
    let log = s.stderr_text();
    assert!(log.contains("line 2"), "{log}");
    // A log that is not a terminal (a file, the journal) holds no colour escape codes.
    assert!(
        !log.contains('\u{1b}'),
        "escape codes in the log file: {log:?}"
    );
    assert_eq!(
        post(&s.addr, &[&bearer(CAROL)], CHECK_REQUEST.as_bytes()).status,
        200
    );
    let m = request(&s.addr, "GET", "/metrics", &[&bearer(BOB)], b"").text();
    assert!(
        m.contains("steamcell_token_reloads_total{result=\"ok\"} 1"),
        "{m}"
    );
    assert!(
        m.contains("steamcell_token_reloads_total{result=\"error\"} 1"),
        "{m}"
    );
    assert!(m.contains("steamcell_tokens 2"), "{m}");
}

/// An instant `secs` from now as `YYYY-MM-DDTHH:MM:SSZ`.
fn from_now(secs: i64) -> String {
    let now = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .unwrap()
        .as_secs() as i64;
    steamcell::api::clock::rfc3339_utc((now + secs) * 1000).replace(".000Z", "Z")
}

#[test]
fn expiry_is_honoured() {
    let dir = temp_dir("tokens-expiry");
    let tokens = dir.join("tokens");
    let soon = from_now(3);
    write_tokens(
        &tokens,
        &[
            token_line("old", ALICE, "expires=2001-01-01"),
            token_line("soon", BOB, &format!("expires={soon}")),
        ],
    );
    let s = start_logged(&dir, &["--tokens-file", tokens.to_str().unwrap()], &[]);
    let r = post(&s.addr, &[&bearer(ALICE)], CHECK_REQUEST.as_bytes());
    assert_eq!(r.status, 401);
    assert!(r.text().contains("'old' has expired"), "{}", r.text());
    let mut ws = Ws::connect_with(&s.addr, &[&bearer(BOB)]);
    assert_check(&serde_json::from_str(&ws.call(CHECK_REQUEST)).unwrap());
    // Past its expiry the open WebSocket's next call is refused, and so is a new request.
    std::thread::sleep(std::time::Duration::from_millis(3500));
    let v: Value = serde_json::from_str(&ws.call(CHECK_REQUEST)).unwrap();
    assert_eq!(rpc_error(&v), (1010, "expired".to_string()), "{v}");
    let r = post(&s.addr, &[&bearer(BOB)], CHECK_REQUEST.as_bytes());
    assert_eq!(r.status, 401);
    assert!(r.text().contains("'soon' has expired"), "{}", r.text());
}

#[test]
fn the_method_allow_list_holds_on_every_route() {
    let dir = temp_dir("tokens-methods");
    let tokens = dir.join("tokens");
    write_tokens(
        &tokens,
        &[
            token_line("historian", HIST, "methods=water.batch,server.info"),
            token_line("ops", BOB, "methods=server.*"),
            token_line("alice", ALICE, ""),
        ],
    );
    let s = start_logged(&dir, &["--tokens-file", tokens.to_str().unwrap()], &[]);
    let batch = r#"{"jsonrpc":"2.0","id":2,"method":"water.batch","params":{"given":{"p":[3e6],"T":[300]},"units":"si","want":["h"]}}"#;
    let h = bearer(HIST);
    let r = post(&s.addr, &[&h], batch.as_bytes());
    assert!(r.json()["result"]["rows"] == 1, "{}", r.text());
    let r = post(&s.addr, &[&h], CHECK_REQUEST.as_bytes());
    assert_eq!(
        r.status, 200,
        "a call's error travels in a JSON-RPC response"
    );
    let v = r.json();
    assert_eq!(rpc_error(&v), (1010, "method".to_string()), "{v}");
    let msg = v["error"]["message"].as_str().unwrap();
    assert!(
        msg.contains("historian") && msg.contains("water.state"),
        "{msg}"
    );
    assert_eq!(v["error"]["data"]["token"], "historian");
    // The plain routes count as their methods.
    let r = request(&s.addr, "GET", "/cell/h?p=3%20MPa&T=300%20K", &[&h], b"");
    assert_eq!(r.status, 403, "{}", r.text());
    assert!(r.text().contains("water.state"), "{}", r.text());
    for path in ["/metrics", "/schema", "/validation"] {
        let r = request(&s.addr, "GET", path, &[&h], b"");
        assert_eq!(r.status, 403, "{path}: {}", r.text());
    }
    assert_eq!(request(&s.addr, "GET", "/health", &[], b"").status, 200);
    let mut ws = Ws::connect_with(&s.addr, &[&h]);
    let v: Value = serde_json::from_str(&ws.call(CHECK_REQUEST)).unwrap();
    assert_eq!(rpc_error(&v).0, 1010, "{v}");
    let info = r#"{"jsonrpc":"2.0","id":3,"method":"server.info"}"#;
    let v: Value = serde_json::from_str(&ws.call(info)).unwrap();
    assert!(v["result"]["digest"].is_string(), "{v}");
    // A group pattern: server.* allows /metrics (server.metrics) and /validation
    // (server.selftest), not water.state.
    let o = bearer(BOB);
    assert_eq!(request(&s.addr, "GET", "/metrics", &[&o], b"").status, 200);
    let r = request(&s.addr, "GET", "/validation?format=json", &[&o], b"");
    assert_eq!(r.status, 200, "{}", r.text());
    assert_eq!(
        rpc_error(&post(&s.addr, &[&o], CHECK_REQUEST.as_bytes()).json()).0,
        1010
    );
    // No list: everything.
    assert_check(&post(&s.addr, &[&bearer(ALICE)], CHECK_REQUEST.as_bytes()).json());
    let m = request(&s.addr, "GET", "/metrics", &[&o], b"").text();
    assert!(
        m.contains("steamcell_access_denied_total{reason=\"forbidden\"} 7"),
        "{m}"
    );
}

#[test]
fn a_malformed_tokens_file_refuses_to_start_with_its_line() {
    let dir = temp_dir("tokens-bad");
    let tokens = dir.join("tokens");
    std::fs::write(
        &tokens,
        format!(
            "# team\n{}\n\nbob sha256:{}\n",
            token_line("alice", ALICE, ""),
            "ab".repeat(31)
        ),
    )
    .unwrap();
    let (code, out, err) = run(&["serve", "--tokens-file", tokens.to_str().unwrap()], &[]);
    assert_eq!(code, Some(1), "{err}");
    assert!(out.is_empty());
    assert!(
        err.contains("line 4") && err.contains("64 hex digits"),
        "{err}"
    );
    assert!(err.contains(tokens.to_str().unwrap()), "{err}");
    assert_eq!(err.trim_end().lines().count(), 1, "{err}");
    std::fs::write(&tokens, token_line("alice", ALICE, "methods=water.stat")).unwrap();
    let (code, _, err) = run(&["serve", "--tokens-file", tokens.to_str().unwrap()], &[]);
    assert_eq!(code, Some(1));
    assert!(
        err.contains("line 1") && err.contains("unknown method 'water.stat'"),
        "{err}"
    );
    let (code, _, err) = run(
        &["serve", "--tokens-file", dir.join("none").to_str().unwrap()],
        &[],
    );
    assert_eq!(code, Some(1));
    assert!(err.contains("cannot read the tokens file"), "{err}");
}

#[test]
fn the_single_token_file_is_named_default() {
    let dir = temp_dir("tokens-single");
    let token = dir.join("token");
    std::fs::write(&token, format!("{ALICE}\n")).unwrap();
    let audit = dir.join("audit.jsonl");
    let s = start_logged(
        &dir,
        &[
            "--token-file",
            token.to_str().unwrap(),
            "--audit",
            audit.to_str().unwrap(),
        ],
        &[],
    );
    assert_check(&post(&s.addr, &[&bearer(ALICE)], CHECK_REQUEST.as_bytes()).json());
    assert_eq!(
        post(&s.addr, &[&bearer(BOB)], CHECK_REQUEST.as_bytes()).status,
        401
    );
    assert_eq!(audit_lines(&audit)[0]["token"], "default");
    drop(s);
    // Without a token the audit line says null.
    let audit2 = dir.join("audit2.jsonl");
    let s = start_logged(&dir, &["--audit", audit2.to_str().unwrap()], &[]);
    assert_check(&post(&s.addr, &[], CHECK_REQUEST.as_bytes()).json());
    assert!(audit_lines(&audit2)[0]["token"].is_null());
}

#[test]
fn steamcell_token_mints_a_working_line() {
    let dir = temp_dir("tokens-mint");
    let out_file = dir.join("ops.token");
    let (code, line, err) = run(
        &[
            "token",
            "ops",
            "--methods",
            "water.*,server.info",
            "--expires",
            "2999-01-01",
            "--token-out",
            out_file.to_str().unwrap(),
        ],
        &[],
    );
    assert_eq!(code, Some(0), "{err}");
    assert!(line.starts_with("ops sha256:"), "{line}");
    assert!(line.contains("methods=water.*,server.info") && line.contains("expires=2999-01-01"));
    let token = std::fs::read_to_string(&out_file)
        .unwrap()
        .trim()
        .to_string();
    assert_eq!(token.len(), 64, "32 random bytes as hex");
    assert!(
        !line.contains(&token),
        "the line holds the hash, not the token"
    );
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        let mode = std::fs::metadata(&out_file).unwrap().permissions().mode();
        assert_eq!(mode & 0o077, 0, "the token file is private: {mode:o}");
    }
    // The line's hash is SHA-256 of the token, as computed independently here.
    assert_eq!(
        line.trim(),
        token_line(
            "ops",
            &token,
            "expires=2999-01-01 methods=water.*,server.info"
        )
    );
    let tokens = dir.join("tokens");
    std::fs::write(&tokens, &line).unwrap();
    let s = start_logged(&dir, &["--tokens-file", tokens.to_str().unwrap()], &[]);
    assert_check(&post(&s.addr, &[&bearer(&token)], CHECK_REQUEST.as_bytes()).json());
    // A bad option is refused by the command itself.
    let (code, _, err) = run(&["token", "x", "--methods", "water.nope"], &[]);
    assert_eq!(code, Some(1));
    assert!(err.contains("unknown method 'water.nope'"), "{err}");
    // Without --token-out the token goes to stderr and only the line to stdout, so that
    // `steamcell token eve >> tokens` (the README's command) appends a line the server takes.
    let (code, out, err) = run(&["token", "eve", "--methods", "water.*"], &[]);
    assert_eq!(code, Some(0));
    let token = err
        .trim()
        .strip_prefix("token for eve (give it to them; it is kept nowhere): ")
        .unwrap_or_else(|| panic!("the token on stderr: {err}"));
    assert_eq!(token.len(), 64, "{err}");
    assert_eq!(
        out,
        format!("{}\n", token_line("eve", token, "methods=water.*"))
    );
    let appended = dir.join("appended");
    std::fs::write(&appended, format!("{line}{out}")).unwrap();
    let s = start_logged(&dir, &["--tokens-file", appended.to_str().unwrap()], &[]);
    assert_check(&post(&s.addr, &[&bearer(token)], CHECK_REQUEST.as_bytes()).json());
    // `call --url` without the token says how to give it; with STEAMCELL_TOKEN it computes.
    let url = format!("http://{}", s.addr);
    let (code, _, err) = run(
        &["call", "--url", &url, "water.saturation", "{\"p\": 1}"],
        &[],
    );
    assert_eq!(code, Some(1), "{err}");
    assert!(
        err.contains("HTTP 401") && err.contains("--token-file FILE or STEAMCELL_TOKEN"),
        "{err}"
    );
    let (code, out, err) = run(
        &["call", "--url", &url, "water.saturation", "{\"p\": 1}"],
        &[("STEAMCELL_TOKEN", token)],
    );
    assert_eq!(code, Some(0), "{err}");
    // IAPWS R7-97(2012) Table 35: T_sat(1 MPa) = 453.035632 K.
    let v: Value = serde_json::from_str(&out).unwrap();
    assert!(
        (v["T"].as_f64().unwrap() + 273.15 - 453.035632).abs() < 1e-5,
        "{v}"
    );
}
