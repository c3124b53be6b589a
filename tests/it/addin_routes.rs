//! What `steamcell serve` gives a browser-hosted spreadsheet add-in, against the real binary:
//! the Excel add-in's files at `GET /addin/...` (public, the manifest pointing at the server it
//! came from), the private-network answer of an allowed CORS preflight, same-origin calls of a
//! page the server served itself, a readable 401 for an allowed origin, and
//! `--stop-on-stdin-eof` (the embedded engine of the LibreOffice add-in ends with its parent).
//!
//! Sources: CORS and preflight per the WHATWG Fetch standard; the private-network preflight
//! (`Access-Control-Request-Private-Network` / `Access-Control-Allow-Private-Network`) per the
//! WICG Private Network Access draft; the add-in only manifest per the Office Add-ins
//! documentation (SourceLocation, custom-functions metadata).

use crate::common::{post, request, start, CHECK_REQUEST};
use std::io::{BufRead, BufReader};
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

fn repo_file(rel: &str) -> String {
    std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join(rel))
        .unwrap_or_else(|e| panic!("{rel}: {e}"))
}

#[test]
fn manifest_names_the_server_it_was_fetched_from() {
    let s = start(&[], &[]);
    let r = request(&s.addr, "GET", "/addin/manifest.xml", &[], b"");
    assert_eq!(r.status, 200);
    assert!(r
        .header("content-type")
        .unwrap_or("")
        .starts_with("application/xml"));
    let text = r.text();
    let base = format!("http://{}/addin", s.addr);
    for file in [
        "functions.js",
        "functions.json",
        "taskpane.html",
        "icon-32.png",
    ] {
        assert!(text.contains(&format!("{base}/{file}")), "{file} in {text}");
    }
    assert!(!text.contains("localhost:3000"), "{text}");
    assert!(text.contains(r#"<bt:String id="Functions.Namespace" DefaultValue="SC"/>"#));
    // Behind a TLS proxy that says so, the manifest points at https.
    let r = request(
        &s.addr,
        "GET",
        "/addin/manifest.xml",
        &["Host: localhost:9443", "X-Forwarded-Proto: https"],
        b"",
    );
    assert!(r
        .text()
        .contains("https://localhost:9443/addin/functions.js"));
}

#[test]
fn served_files_are_the_committed_ones() {
    let s = start(&[], &[]);
    for (file, kind) in [
        ("functions.json", "application/json"),
        ("functions.js", "text/javascript"),
        ("functions-table.js", "text/javascript"),
        ("taskpane.html", "text/html"),
    ] {
        let r = request(&s.addr, "GET", &format!("/addin/{file}"), &[], b"");
        assert_eq!(r.status, 200, "{file}");
        assert!(r.header("content-type").unwrap_or("").starts_with(kind));
        assert_eq!(
            r.text(),
            repo_file(&format!("clients/excel/{file}")),
            "{file}"
        );
    }
    let r = request(&s.addr, "GET", "/addin/icon-80.png", &[], b"");
    assert_eq!(r.header("content-type"), Some("image/png"));
    assert!(r.body.starts_with(b"\x89PNG"));
    // Every function of the one function list is in the Excel metadata.
    let list: serde_json::Value =
        serde_json::from_str(&repo_file("clients/functions.json")).unwrap();
    let meta = request(&s.addr, "GET", "/addin/functions.json", &[], b"").json();
    let ids: Vec<&str> = meta["functions"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|f| f["id"].as_str())
        .collect();
    for f in list["functions"].as_array().unwrap() {
        assert!(ids.contains(&f["name"].as_str().unwrap()), "{f}");
    }
    let r = request(&s.addr, "GET", "/addin/", &[], b"");
    assert_eq!(r.status, 200);
    assert!(r.text().contains("manifest.xml"));
    let r = request(&s.addr, "GET", "/addin/../Cargo.toml", &[], b"");
    assert_eq!(r.status, 404);
    let r = request(&s.addr, "GET", "/addin/secret.txt", &[], b"");
    assert_eq!(r.status, 404);
    assert!(r.text().contains("no add-in file 'secret.txt'"));
}

#[test]
fn addin_files_need_no_token_but_calls_do() {
    let s = start(&[], &[("STEAMCELL_TOKEN", "addin-route-token")]);
    let r = request(&s.addr, "GET", "/addin/taskpane.html", &[], b"");
    assert_eq!(r.status, 200);
    let r = post(&s.addr, &[], CHECK_REQUEST.as_bytes());
    assert_eq!(r.status, 401);
    let r = request(&s.addr, "GET", "/cell/h?p=3%20MPa&T=300%20K", &[], b"");
    assert_eq!(r.status, 401);
}

#[test]
fn allowed_origin_can_read_a_token_refusal() {
    let good = "https://sheet.example";
    let s = start(
        &["--allow-origin", good],
        &[("STEAMCELL_TOKEN", "addin-route-token")],
    );
    let r = post(
        &s.addr,
        &[&format!("Origin: {good}"), "Authorization: Bearer wrong"],
        CHECK_REQUEST.as_bytes(),
    );
    assert_eq!(r.status, 401);
    assert_eq!(r.header("access-control-allow-origin"), Some(good));
    let r = post(
        &s.addr,
        &[
            "Origin: https://other.example",
            "Authorization: Bearer wrong",
        ],
        CHECK_REQUEST.as_bytes(),
    );
    assert_eq!(r.status, 403);
    assert!(r.header("access-control-allow-origin").is_none());
}

#[test]
fn private_network_preflight() {
    let good = "https://sheet.example";
    let s = start(&["--allow-origin", good], &[]);
    let ask = [
        format!("Origin: {good}"),
        "Access-Control-Request-Method: POST".to_string(),
        "Access-Control-Request-Headers: content-type, authorization".to_string(),
        "Access-Control-Request-Private-Network: true".to_string(),
    ];
    let ask: Vec<&str> = ask.iter().map(String::as_str).collect();
    let r = request(&s.addr, "OPTIONS", "/", &ask, b"");
    assert_eq!(r.status, 204);
    assert_eq!(r.header("access-control-allow-origin"), Some(good));
    assert_eq!(
        r.header("access-control-allow-private-network"),
        Some("true")
    );
    // Not asked: not answered.
    let r = request(&s.addr, "OPTIONS", "/", &ask[..3], b"");
    assert_eq!(r.status, 204);
    assert!(r.header("access-control-allow-private-network").is_none());
    // Another origin: refused, with neither header.
    let r = request(
        &s.addr,
        "OPTIONS",
        "/",
        &[
            "Origin: https://other.example",
            "Access-Control-Request-Method: POST",
            "Access-Control-Request-Private-Network: true",
        ],
        b"",
    );
    assert_eq!(r.status, 403);
    assert!(r.header("access-control-allow-private-network").is_none());
    assert!(r.header("access-control-allow-origin").is_none());
}

#[test]
fn a_page_served_by_the_server_calls_it_from_its_own_origin() {
    let s = start(&[], &[]);
    let own = format!("Origin: http://{}", s.addr);
    let r = post(&s.addr, &[&own], CHECK_REQUEST.as_bytes());
    assert_eq!(r.status, 200, "{}", r.text());
    crate::common::assert_check(&r.json());
    assert!(r.header("access-control-allow-origin").is_none());
    // The same host on another port is another origin.
    let port: u16 = s.addr.rsplit(':').next().unwrap().parse().unwrap();
    let other = format!("Origin: http://127.0.0.1:{}", port.wrapping_add(1));
    let r = post(&s.addr, &[&other], CHECK_REQUEST.as_bytes());
    assert_eq!(r.status, 403);
}

fn spawn_with_stdin(extra: &[&str]) -> std::process::Child {
    let mut child = Command::new(crate::common::BIN)
        .args(["serve", "--listen", "127.0.0.1:0"])
        .args(extra)
        .env_remove("STEAMCELL_TOKEN")
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::null())
        .spawn()
        .expect("binary starts");
    let mut line = String::new();
    BufReader::new(child.stdout.take().unwrap())
        .read_line(&mut line)
        .unwrap();
    assert!(line.contains("listening on http://"), "{line}");
    child
}

fn exits_within(child: &mut std::process::Child, limit: Duration) -> bool {
    let started = Instant::now();
    while started.elapsed() < limit {
        if child.try_wait().unwrap().is_some() {
            return true;
        }
        std::thread::sleep(Duration::from_millis(50));
    }
    false
}

#[test]
fn stop_on_stdin_eof_ends_with_its_parent() {
    let mut child = spawn_with_stdin(&["--stop-on-stdin-eof"]);
    drop(child.stdin.take());
    let stopped = exits_within(&mut child, Duration::from_secs(10));
    if !stopped {
        let _ = child.kill();
    }
    assert!(
        stopped,
        "serve --stop-on-stdin-eof still runs after its stdin closed"
    );
    assert!(child.wait().unwrap().success());
    // Without the flag a closed stdin changes nothing.
    let mut child = spawn_with_stdin(&[]);
    drop(child.stdin.take());
    let stopped = exits_within(&mut child, Duration::from_millis(700));
    let _ = child.kill();
    let _ = child.wait();
    assert!(
        !stopped,
        "serve without the flag stopped when its stdin closed"
    );
}
