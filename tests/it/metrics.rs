//! `GET /metrics` of the real binary, read by a strict parser of the Prometheus text
//! exposition format written here, and its counters checked after known calls.
//!
//! Source: the Prometheus text exposition format 0.0.4 (prometheus.io, "Exposition formats"):
//! lines end in `\n`; `# HELP name text` and `# TYPE name counter|gauge|histogram|summary|
//! untyped`, at most one each per family and before its samples; metric names match
//! `[a-zA-Z_:][a-zA-Z0-9_:]*`, label names `[a-zA-Z_][a-zA-Z0-9_]*`; label values are quoted
//! with `\\`, `\"` and `\n` escaped; a family's samples are together; a histogram has
//! `_bucket{le=...}` samples (cumulative, ending with `le="+Inf"`), `_sum` and `_count`, the
//! `+Inf` bucket equal to `_count`; counter names end in `_total` (a naming convention of the
//! same documentation). Check value IAPWS R7-97(2012) Table 5 (p = 3 MPa, T = 300 K).

use crate::common::team::*;
use crate::common::*;
use std::collections::{BTreeMap, HashMap};

/// One sample: metric name, labels, value.
#[derive(Debug, Clone)]
pub struct Sample {
    pub name: String,
    pub labels: BTreeMap<String, String>,
    pub value: f64,
}

/// A parsed exposition: family types and samples.
#[derive(Debug, Default)]
pub struct Exposition {
    pub types: HashMap<String, String>,
    pub samples: Vec<Sample>,
}

impl Exposition {
    /// The value of the one sample `name` with exactly these labels.
    pub fn get(&self, name: &str, labels: &[(&str, &str)]) -> Option<f64> {
        let want: BTreeMap<String, String> = labels
            .iter()
            .map(|(k, v)| (k.to_string(), v.to_string()))
            .collect();
        self.samples
            .iter()
            .find(|s| s.name == name && s.labels == want)
            .map(|s| s.value)
    }
}

fn is_name(s: &str, colon: bool) -> bool {
    let mut chars = s.chars();
    let ok_first = |c: char| c.is_ascii_alphabetic() || c == '_' || (colon && c == ':');
    chars.next().is_some_and(ok_first)
        && chars.all(|c| c.is_ascii_alphanumeric() || c == '_' || (colon && c == ':'))
}

fn parse_value(s: &str) -> Result<f64, String> {
    match s {
        "+Inf" => Ok(f64::INFINITY),
        "-Inf" => Ok(f64::NEG_INFINITY),
        "NaN" => Ok(f64::NAN),
        _ => s.parse::<f64>().map_err(|_| format!("bad value '{s}'")),
    }
}

/// The family a sample name belongs to (histogram suffixes stripped when the base is a
/// histogram).
fn family_of<'a>(name: &'a str, types: &HashMap<String, String>) -> &'a str {
    for suffix in ["_bucket", "_sum", "_count"] {
        if let Some(base) = name.strip_suffix(suffix) {
            if types.get(base).map(String::as_str) == Some("histogram") {
                return base;
            }
        }
    }
    name
}

/// Parses `text` strictly (see the module doc); `Err` names the line.
pub fn parse(text: &str) -> Result<Exposition, String> {
    if !text.ends_with('\n') {
        return Err("the last line does not end with a line feed".into());
    }
    let mut out = Exposition::default();
    let mut helps = HashMap::new();
    let mut seen_families: Vec<String> = Vec::new();
    let mut seen_samples = std::collections::HashSet::new();
    for (i, line) in text.lines().enumerate() {
        let n = i + 1;
        let err = |m: String| format!("line {n}: {m}: {line}");
        if line.trim().is_empty() {
            continue;
        }
        if let Some(rest) = line.strip_prefix("# ") {
            let mut parts = rest.splitn(3, ' ');
            let kind = parts.next().unwrap_or("");
            let name = parts.next().unwrap_or("").to_string();
            let tail = parts.next().unwrap_or("");
            match kind {
                "HELP" => {
                    if !is_name(&name, true) {
                        return Err(err("bad metric name".into()));
                    }
                    if helps.insert(name.clone(), tail.to_string()).is_some() {
                        return Err(err("second HELP".into()));
                    }
                    if tail.contains('\\') && !tail.contains("\\\\") && !tail.contains("\\n") {
                        return Err(err("bad escape in HELP".into()));
                    }
                }
                "TYPE" => {
                    if !["counter", "gauge", "histogram", "summary", "untyped"].contains(&tail) {
                        return Err(err(format!("bad type '{tail}'")));
                    }
                    if out.types.insert(name.clone(), tail.to_string()).is_some() {
                        return Err(err("second TYPE".into()));
                    }
                    if seen_families.contains(&name) {
                        return Err(err("TYPE after samples".into()));
                    }
                    if tail == "counter" && !name.ends_with("_total") {
                        return Err(err("a counter not named _total".into()));
                    }
                }
                _ => {}
            }
            continue;
        }
        if line.starts_with('#') {
            continue;
        }
        // name{labels} value
        let (name, rest) = match line.find(['{', ' ']) {
            Some(i) => (&line[..i], &line[i..]),
            None => return Err(err("no value".into())),
        };
        if !is_name(name, true) {
            return Err(err(format!("bad metric name '{name}'")));
        }
        let mut labels = BTreeMap::new();
        let rest = if let Some(body) = rest.strip_prefix('{') {
            let mut chars = body.char_indices().peekable();
            let end;
            loop {
                // label name
                let start = chars
                    .peek()
                    .map(|(i, _)| *i)
                    .ok_or_else(|| err("open labels".into()))?;
                if body[start..].starts_with('}') {
                    end = start + 1;
                    break;
                }
                let eq = body[start..]
                    .find('=')
                    .ok_or_else(|| err("label without =".into()))?
                    + start;
                let lname = &body[start..eq];
                if !is_name(lname, false) {
                    return Err(err(format!("bad label name '{lname}'")));
                }
                while chars.peek().is_some_and(|(i, _)| *i <= eq) {
                    chars.next();
                }
                if chars.next().map(|(_, c)| c) != Some('"') {
                    return Err(err("label value not quoted".into()));
                }
                let mut value = String::new();
                loop {
                    match chars.next() {
                        None => return Err(err("unterminated label value".into())),
                        Some((_, '"')) => break,
                        Some((_, '\\')) => match chars.next() {
                            Some((_, '\\')) => value.push('\\'),
                            Some((_, '"')) => value.push('"'),
                            Some((_, 'n')) => value.push('\n'),
                            _ => return Err(err("bad escape in a label value".into())),
                        },
                        Some((_, '\n')) => return Err(err("line feed in a label value".into())),
                        Some((_, c)) => value.push(c),
                    }
                }
                if labels.insert(lname.to_string(), value).is_some() {
                    return Err(err(format!("label '{lname}' twice")));
                }
                match chars.next() {
                    Some((_, ',')) => continue,
                    Some((i, '}')) => {
                        end = i + 1;
                        break;
                    }
                    _ => return Err(err("expected , or }".into())),
                }
            }
            &body[end..]
        } else {
            rest
        };
        let mut fields = rest.split_whitespace();
        let value =
            parse_value(fields.next().ok_or_else(|| err("no value".into()))?).map_err(err)?;
        if let Some(ts) = fields.next() {
            ts.parse::<i64>().map_err(|_| err("bad timestamp".into()))?;
        }
        if fields.next().is_some() {
            return Err(err("trailing text".into()));
        }
        let fam = family_of(name, &out.types).to_string();
        if !out.types.contains_key(&fam) {
            return Err(err(format!("sample of '{fam}' without a TYPE line")));
        }
        if !helps.contains_key(&fam) {
            return Err(err(format!("sample of '{fam}' without a HELP line")));
        }
        match seen_families.last() {
            Some(last) if *last == fam => {}
            _ => {
                if seen_families.contains(&fam) {
                    return Err(err(format!("samples of '{fam}' are not together")));
                }
                seen_families.push(fam.clone());
            }
        }
        let key = format!("{name}{labels:?}");
        if !seen_samples.insert(key) {
            return Err(err("the same sample twice".into()));
        }
        out.samples.push(Sample {
            name: name.to_string(),
            labels,
            value,
        });
    }
    check_histograms(&out)?;
    Ok(out)
}

/// Every histogram series: buckets cumulative in increasing `le`, ending with +Inf equal to
/// `_count`, with a `_sum`.
fn check_histograms(e: &Exposition) -> Result<(), String> {
    for (fam, kind) in &e.types {
        if kind != "histogram" {
            continue;
        }
        let mut series: BTreeMap<String, Vec<(f64, f64)>> = BTreeMap::new();
        for s in e
            .samples
            .iter()
            .filter(|s| s.name == format!("{fam}_bucket"))
        {
            let mut key = s.labels.clone();
            let le = key
                .remove("le")
                .ok_or(format!("{fam}: a bucket without le"))?;
            let le = parse_value(&le)?;
            series
                .entry(format!("{key:?}"))
                .or_default()
                .push((le, s.value));
        }
        for (key, buckets) in series {
            for w in buckets.windows(2) {
                if !(w[0].0 < w[1].0 && w[0].1 <= w[1].1) {
                    return Err(format!("{fam}{key}: buckets not increasing: {w:?}"));
                }
            }
            let last = buckets.last().unwrap();
            if last.0 != f64::INFINITY {
                return Err(format!("{fam}{key}: no +Inf bucket"));
            }
            let count = e
                .samples
                .iter()
                .find(|s| s.name == format!("{fam}_count") && format!("{:?}", s.labels) == key)
                .ok_or(format!("{fam}{key}: no _count"))?;
            if count.value != last.1 {
                return Err(format!(
                    "{fam}{key}: +Inf bucket {} != count {}",
                    last.1, count.value
                ));
            }
            if !e
                .samples
                .iter()
                .any(|s| s.name == format!("{fam}_sum") && format!("{:?}", s.labels) == key)
            {
                return Err(format!("{fam}{key}: no _sum"));
            }
        }
    }
    Ok(())
}

#[test]
fn the_parser_is_strict() {
    let good = "# HELP a_total A.\n# TYPE a_total counter\na_total{m=\"x\\\"y\\\\z\\n\"} 3\n";
    let e = parse(good).unwrap();
    assert_eq!(e.get("a_total", &[("m", "x\"y\\z\n")]), Some(3.0));
    for bad in [
        "# HELP a_total A.\n# TYPE a_total counter\na_total 3",
        "# TYPE a_total counter\na_total 3\n",
        "# HELP a A.\n# TYPE a counter\na 3\n",
        "# HELP a_total A.\n# TYPE a_total counter\na_total{m=x} 3\n",
        "# HELP a_total A.\n# TYPE a_total counter\na_total{m=\"\\q\"} 3\n",
        "# HELP a_total A.\n# TYPE a_total counter\na_total 3\na_total 4\n",
        "# HELP h A.\n# TYPE h histogram\nh_bucket{le=\"1\"} 2\nh_bucket{le=\"+Inf\"} 1\nh_sum 1\nh_count 1\n",
        "# HELP h A.\n# TYPE h histogram\nh_bucket{le=\"1\"} 1\nh_bucket{le=\"+Inf\"} 2\nh_sum 1\nh_count 3\n",
        "# HELP g A.\n# TYPE g gauge\ng 1\n# HELP k A.\n# TYPE k gauge\nk 1\ng{x=\"1\"} 2\n",
    ] {
        assert!(parse(bad).is_err(), "accepted: {bad:?}");
    }
}

const TOKEN: &str = "metrics-test-token-5d4c3b2a19080706";

#[test]
fn counters_after_known_calls() {
    let dir = temp_dir("metrics");
    let tokens = dir.join("tokens");
    std::fs::write(&tokens, token_line("ops", TOKEN, "")).unwrap();
    let s = start_logged(&dir, &["--tokens-file", tokens.to_str().unwrap()], &[]);
    let auth = format!("Authorization: Bearer {TOKEN}");
    let a = auth.as_str();
    // Without the token: 401 (and counted).
    assert_eq!(request(&s.addr, "GET", "/metrics", &[], b"").status, 401);
    // Known calls: 3 good water.state, 1 out of range, 1 GET /cell, a batch of 5 rows with one
    // bad row, a request nested too deep.
    for _ in 0..3 {
        assert_check(&post(&s.addr, &[a], CHECK_REQUEST.as_bytes()).json());
    }
    let bad = r#"{"jsonrpc":"2.0","id":1,"method":"water.state","params":{"given":{"p":"300 MPa","T":"300 K"}}}"#;
    assert_eq!(
        post(&s.addr, &[a], bad.as_bytes()).json()["error"]["code"],
        1001
    );
    assert_eq!(
        request(&s.addr, "GET", "/cell/h?p=3%20MPa&T=300%20K", &[a], b"").status,
        200
    );
    let batch = r#"{"jsonrpc":"2.0","id":2,"method":"water.batch","params":{"given":{"p":[1e6,2e6,3e6,4e6,5e8],"T":[300,300,300,300,300]},"want":["h"],"units":"si"}}"#;
    let v = post(&s.addr, &[a], batch.as_bytes()).json();
    assert_eq!(v["result"]["rows"], 5, "{v}");
    let deep = format!(
        "{{\"jsonrpc\":\"2.0\",\"id\":3,\"method\":\"water.state\",\"params\":{}1{}}}",
        "[".repeat(70),
        "]".repeat(70)
    );
    assert_eq!(post(&s.addr, &[a], deep.as_bytes()).status, 413);
    let info = post(
        &s.addr,
        &[a],
        br#"{"jsonrpc":"2.0","id":4,"method":"server.info"}"#,
    )
    .json();
    let digest = info["result"]["digest"].as_str().unwrap().to_string();

    let r = request(&s.addr, "GET", "/metrics", &[a], b"");
    assert_eq!(r.status, 200);
    assert_eq!(
        r.header("content-type"),
        Some("text/plain; version=0.0.4; charset=utf-8")
    );
    let text = r.text();
    let e = parse(&text).unwrap_or_else(|m| panic!("{m}\n{text}"));
    let m = |labels: &[(&str, &str)], name: &str| {
        e.get(name, labels)
            .unwrap_or_else(|| panic!("no {name}{labels:?} in\n{text}"))
    };
    let ws = [("method", "water.state")];
    assert_eq!(
        m(&ws, "steamcell_calls_total"),
        5.0,
        "3 + 1 error + GET /cell"
    );
    assert_eq!(
        m(
            &[("method", "water.state"), ("code", "1001")],
            "steamcell_call_errors_total"
        ),
        1.0
    );
    assert_eq!(m(&ws, "steamcell_call_duration_seconds_count"), 5.0);
    assert_eq!(
        m(
            &[("method", "water.state"), ("le", "+Inf")],
            "steamcell_call_duration_seconds_bucket"
        ),
        5.0
    );
    assert!(m(&ws, "steamcell_call_duration_seconds_sum") > 0.0);
    assert_eq!(
        m(&[("method", "water.batch")], "steamcell_calls_total"),
        1.0
    );
    assert_eq!(m(&[("method", "water.batch")], "steamcell_rows_total"), 5.0);
    assert_eq!(
        m(&[("method", "water.batch")], "steamcell_rows_failed_total"),
        1.0
    );
    assert_eq!(
        m(&[("method", "server.info")], "steamcell_calls_total"),
        1.0
    );
    assert_eq!(
        m(&[("method", "cycle.rankine")], "steamcell_calls_total"),
        0.0
    );
    assert_eq!(
        m(
            &[("limit", "JSON nesting depth")],
            "steamcell_limit_refusals_total"
        ),
        1.0
    );
    assert_eq!(
        m(&[("reason", "token")], "steamcell_access_denied_total"),
        1.0
    );
    assert_eq!(m(&[], "steamcell_calls_in_flight"), 0.0);
    assert!(m(&[], "steamcell_connections_open") >= 1.0);
    assert!(m(&[], "steamcell_connections_total") >= 9.0);
    assert_eq!(m(&[], "steamcell_tokens"), 1.0);
    assert!(m(&[], "steamcell_uptime_seconds") > 0.0);
    let build = e
        .samples
        .iter()
        .find(|s| s.name == "steamcell_build_info")
        .unwrap();
    assert_eq!(build.value, 1.0);
    assert_eq!(
        build.labels["digest"], digest,
        "the info metric's digest is server.info's"
    );
    assert_eq!(build.labels["version"], env!("CARGO_PKG_VERSION"));
    assert!(build.labels["formulation"].contains("IAPWS-IF97"));
    for (fam, kind) in &e.types {
        if fam.ends_with("_total") {
            assert_eq!(kind, "counter", "{fam}");
        }
    }
}
