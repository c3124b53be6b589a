//! What a browser-hosted spreadsheet add-in needs from `steamcell serve`: the Excel add-in's own
//! files at `GET /addin/...`, and the private-network answer of a CORS preflight.
//!
//! - `GET /addin/` lists the files; `/addin/manifest.xml` is the add-in only manifest with this
//!   server's address in place of the committed one (scheme from `X-Forwarded-Proto` when a TLS
//!   proxy sets it, else http; host from the already checked `Host` header), so that Excel loads
//!   the functions from the same origin it then calls (no CORS at all); the other files are
//!   served as committed. They are public (no token needed: they hold no secret), like
//!   `/health`.
//! - A preflight that asks `Access-Control-Request-Private-Network: true` (a page on a public
//!   address calling a server on a private or loopback one) is answered
//!   `Access-Control-Allow-Private-Network: true`, for an allowed origin only (the guard has
//!   refused every other origin before).
//!
//! The files are compiled in from `clients/excel/`, which `clients/generate.py` writes from
//! `clients/functions.json` (its `--check` keeps them in step). Invariant: every listed file is
//! served with its content type, and nothing outside the list is.

use jsonrpsee::server::{HttpBody, HttpRequest, HttpResponse};

/// The URL prefix of the add-in's files.
pub const PREFIX: &str = "/addin/";

/// The address the committed manifest uses for the add-in's files (replaced when served).
pub const MANIFEST_BASE: &str = "https://localhost:3000/addin";

/// (file name, content type, content) of every served file.
pub const FILES: &[(&str, &str, &[u8])] = &[
    (
        "manifest.xml",
        "application/xml; charset=utf-8",
        include_bytes!("../../clients/excel/manifest.xml"),
    ),
    (
        "functions.json",
        "application/json; charset=utf-8",
        include_bytes!("../../clients/excel/functions.json"),
    ),
    (
        "functions-table.js",
        "text/javascript; charset=utf-8",
        include_bytes!("../../clients/excel/functions-table.js"),
    ),
    (
        "functions.js",
        "text/javascript; charset=utf-8",
        include_bytes!("../../clients/excel/functions.js"),
    ),
    (
        "taskpane.html",
        "text/html; charset=utf-8",
        include_bytes!("../../clients/excel/taskpane.html"),
    ),
    (
        "icon-16.png",
        "image/png",
        include_bytes!("../../clients/excel/icon-16.png"),
    ),
    (
        "icon-32.png",
        "image/png",
        include_bytes!("../../clients/excel/icon-32.png"),
    ),
    (
        "icon-80.png",
        "image/png",
        include_bytes!("../../clients/excel/icon-80.png"),
    ),
];

/// True for a GET/HEAD of a path under [`PREFIX`] (public: no token asked).
pub fn is_addin_request(req: &HttpRequest) -> bool {
    (req.method() == http::Method::GET || req.method() == http::Method::HEAD)
        && (req.uri().path() == "/addin" || req.uri().path().starts_with(PREFIX))
}

fn header<'a>(req: &'a HttpRequest, name: &str) -> Option<&'a str> {
    req.headers().get(name).and_then(|v| v.to_str().ok())
}

/// The base address of the add-in's files as the client reached this server (https when the
/// request came over TLS or a proxy says so with `X-Forwarded-Proto: https`).
pub fn base_url(req: &HttpRequest) -> String {
    let over_tls = req.extensions().get::<super::http::OverTls>().is_some();
    let scheme = match header(req, "x-forwarded-proto") {
        _ if over_tls => "https",
        Some(p) if p.trim().eq_ignore_ascii_case("https") => "https",
        _ => "http",
    };
    let host = header(req, "host")
        .map(str::to_string)
        .or_else(|| req.uri().authority().map(|a| a.to_string()))
        .unwrap_or_else(|| "localhost".to_string());
    // The guard has checked the Host; still keep anything that could break out of an XML
    // attribute out of the manifest.
    let host: String = host
        .chars()
        .filter(|c| c.is_ascii_alphanumeric() || "-.:[]".contains(*c))
        .collect();
    format!("{scheme}://{host}/addin")
}

fn response(status: u16, content_type: &str, body: Vec<u8>) -> HttpResponse {
    http::Response::builder()
        .status(status)
        .header(http::header::CONTENT_TYPE, content_type)
        .header(http::header::CACHE_CONTROL, "no-cache")
        .header("x-content-type-options", "nosniff")
        .body(HttpBody::from(body))
        .unwrap_or_else(|_| http::Response::new(HttpBody::from("internal error")))
}

/// The answer to a request under [`PREFIX`] (see the module doc); `None` for other requests.
pub fn answer(req: &HttpRequest) -> Option<HttpResponse> {
    if !is_addin_request(req) {
        return None;
    }
    let name = req
        .uri()
        .path()
        .strip_prefix(PREFIX)
        .unwrap_or("")
        .to_string();
    if name.is_empty() {
        let list: Vec<&str> = FILES.iter().map(|(n, _, _)| *n).collect();
        let body = format!(
            "steamcell Excel add-in files: {}\nSideload {}/manifest.xml in Excel (see clients/excel/README.md).\n",
            list.join(", "),
            base_url(req)
        );
        return Some(response(
            200,
            "text/plain; charset=utf-8",
            body.into_bytes(),
        ));
    }
    let Some((_, content_type, bytes)) = FILES.iter().find(|(n, _, _)| *n == name) else {
        let list: Vec<&str> = FILES.iter().map(|(n, _, _)| *n).collect();
        return Some(response(
            404,
            "text/plain; charset=utf-8",
            format!("no add-in file '{name}'; files: {}", list.join(", ")).into_bytes(),
        ));
    };
    let body = if name == "manifest.xml" {
        String::from_utf8_lossy(bytes)
            .replace(MANIFEST_BASE, &base_url(req))
            .into_bytes()
    } else {
        bytes.to_vec()
    };
    Some(response(200, content_type, body))
}

/// True when `origin` (an `Origin` header) is this server's own, as the request's `Host` names
/// it: a page this server served itself, e.g. the add-in's `taskpane.html`. The scheme is not
/// compared (a TLS proxy in front of the server may have changed it); the host was checked.
pub fn is_same_origin(req: &HttpRequest, origin: &str) -> bool {
    let Some(authority) = origin
        .strip_prefix("http://")
        .or_else(|| origin.strip_prefix("https://"))
    else {
        return false;
    };
    header(req, "host").is_some_and(|h| {
        !h.is_empty()
            && h.trim()
                .eq_ignore_ascii_case(authority.trim_end_matches('/'))
    })
}

/// Adds `Access-Control-Allow-Private-Network: true` to a preflight answer when the request
/// asked for it.
pub fn allow_private_network(req: &HttpRequest, resp: &mut HttpResponse) {
    let asked = header(req, "access-control-request-private-network")
        .is_some_and(|v| v.trim().eq_ignore_ascii_case("true"));
    if asked {
        resp.headers_mut().insert(
            http::HeaderName::from_static("access-control-allow-private-network"),
            http::HeaderValue::from_static("true"),
        );
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn get(path: &str, headers: &[(&str, &str)]) -> HttpRequest {
        let mut b = http::Request::builder().method("GET").uri(path);
        for (k, v) in headers {
            b = b.header(*k, *v);
        }
        b.body(HttpBody::from("")).unwrap()
    }

    #[test]
    fn manifest_points_at_the_server_it_came_from() {
        let r = get("/addin/manifest.xml", &[("host", "127.0.0.1:8790")]);
        assert_eq!(base_url(&r), "http://127.0.0.1:8790/addin");
        let r = get(
            "/addin/manifest.xml",
            &[
                ("host", "steam.plant.example"),
                ("x-forwarded-proto", "https"),
            ],
        );
        assert_eq!(base_url(&r), "https://steam.plant.example/addin");
        let r = get("/addin/manifest.xml", &[("host", "a\"><x y=\"")]);
        assert_eq!(base_url(&r), "http://axy/addin");
    }

    #[test]
    fn committed_manifest_uses_the_replaced_base() {
        let manifest = FILES
            .iter()
            .find(|(n, _, _)| *n == "manifest.xml")
            .map(|(_, _, b)| String::from_utf8_lossy(b).into_owned())
            .unwrap_or_default();
        assert!(manifest.contains(&format!("{MANIFEST_BASE}/functions.js")));
    }

    #[test]
    fn same_origin_is_the_host_itself() {
        let r = get("/", &[("host", "127.0.0.1:8790")]);
        assert!(is_same_origin(&r, "http://127.0.0.1:8790"));
        assert!(is_same_origin(&r, "https://127.0.0.1:8790"));
        assert!(!is_same_origin(&r, "http://127.0.0.1:8791"));
        assert!(!is_same_origin(&r, "http://evil.example"));
        assert!(!is_same_origin(&r, "null"));
        assert!(!is_same_origin(&get("/", &[]), "http://"));
    }

    #[test]
    fn only_addin_paths() {
        assert!(answer(&get("/addin/functions.js", &[])).is_some());
        assert!(answer(&get("/cell/h", &[])).is_none());
        assert!(answer(&get("/addinx", &[])).is_none());
        let post = http::Request::builder()
            .method("POST")
            .uri("/addin/functions.js")
            .body(HttpBody::from(""))
            .unwrap();
        assert!(answer(&post).is_none());
    }
}
