//! Named site networks for one-number answers: `GET /site/{name}/{quantity}?{path=value...}` and
//! `steamcell site FILE QUANTITY [path=value...]`, so that a spreadsheet cell can show a site
//! total of `balance.solve` without sending the network (too long for a URL) with every call.
//!
//! The operator registers networks when the server starts (`serve --site NAME=FILE`); each is
//! read and solved once then, so a broken file stops the start with its reason. A request
//! solves the registered network after applying its query pairs: `units` and `ambient` are the
//! method's own params; every other name is a dotted path into the network, as the `path` of
//! `balance.sweep` (`units.LP_users.demand=40 t/h`, `streams.hp_to_bpt.flow=30`); the value is a
//! number in the request's preset or a text with its unit. The answer is the number at
//! `quantity` in the result: a bare name is a site total (`net_power`, `fuel_heat_input`, ...),
//! a dotted path reaches anything else (`units.BPT.power`, `streams.ds1_out.state.T`).
//!
//! Invariants: the registered networks never change while the server runs (a request edits a
//! copy), and `balance.solve` is deterministic, so a solved result is kept per (site, query
//! pairs in their order) and the other cells of a workbook page that ask the same site with
//! the same pairs for another quantity are answered from it (up to [`CACHE_ENTRIES`] results,
//! then the cache starts afresh); every failure is a [`CellError`] with an HTTP status and a
//! one-line reason.

use super::balance::set_path;
use super::cell::{pairs_from_args, wire_value, CellError};
use serde_json::{Map, Value};
use std::collections::BTreeMap;
use std::collections::HashMap;
use std::path::Path;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::{Arc, Mutex, OnceLock};

/// The method a site request calls.
pub const SOLVE_METHOD: &str = "balance.solve";

/// Query names that are params of `balance.solve` rather than paths into the network.
pub const RESERVED: &[&str] = &["units", "ambient"];

static SITES: OnceLock<BTreeMap<String, Value>> = OnceLock::new();

/// Solved site results kept for the GET route (see the module invariants).
pub const CACHE_ENTRIES: usize = 256;

type CacheKey = (String, Vec<(String, String)>);

static SOLVED: OnceLock<Mutex<HashMap<CacheKey, Arc<Value>>>> = OnceLock::new();

/// How many site networks the GET route has solved (cache misses), for tests and the log.
static SOLVES: AtomicU64 = AtomicU64::new(0);

/// The number of site solves done for the GET route so far.
pub fn solves() -> u64 {
    SOLVES.load(Ordering::Relaxed)
}

/// The solved result of site `name` (network `network`) with `pairs` applied, from the cache
/// when the same site was asked with the same pairs before.
fn solved_cached(
    name: &str,
    network: &Value,
    pairs: &[(String, String)],
) -> Result<Arc<Value>, CellError> {
    let cache = SOLVED.get_or_init(|| Mutex::new(HashMap::new()));
    let key = (name.to_string(), pairs.to_vec());
    if let Some(hit) = cache.lock().ok().and_then(|c| c.get(&key).cloned()) {
        return Ok(hit);
    }
    SOLVES.fetch_add(1, Ordering::Relaxed);
    let result = Arc::new(solve(network, pairs)?);
    if let Ok(mut c) = cache.lock() {
        if c.len() >= CACHE_ENTRIES {
            c.clear();
        }
        c.insert(key, Arc::clone(&result));
    }
    Ok(result)
}

fn err(status: u16, reason: impl Into<String>) -> CellError {
    CellError {
        status,
        reason: reason.into(),
    }
}

/// Reads a network file: the `network` object of `balance.solve`, or a whole params object
/// with a `network` member.
pub fn read(path: &Path) -> Result<Value, String> {
    let text =
        std::fs::read_to_string(path).map_err(|e| format!("site file {}: {e}", path.display()))?;
    let v: Value = serde_json::from_str(&text)
        .map_err(|e| format!("site file {}: not JSON ({e})", path.display()))?;
    Ok(match v.get("network") {
        Some(n) => n.clone(),
        None => v,
    })
}

/// Reads a network file and checks that it solves as it stands.
pub fn load(path: &Path) -> Result<Value, String> {
    let net = read(path)?;
    solve(&net, &[]).map_err(|e| format!("site file {}: {}", path.display(), e.reason))?;
    Ok(net)
}

/// Registers the named networks for `GET /site/...` (once per process; later calls are
/// refused). Each `(name, file)` is loaded and solved first.
pub fn register(sites: &[(String, std::path::PathBuf)]) -> Result<(), String> {
    let mut map = BTreeMap::new();
    for (name, file) in sites {
        if name.is_empty()
            || !name
                .chars()
                .all(|c| c.is_ascii_alphanumeric() || "_-".contains(c))
        {
            return Err(format!(
                "site name '{name}': use letters, digits, '_' and '-' only"
            ));
        }
        if map.insert(name.clone(), load(file)?).is_some() {
            return Err(format!("site name '{name}' is given twice"));
        }
    }
    SITES
        .set(map)
        .map_err(|_| "the sites are already registered".to_string())
}

/// The names of the registered sites.
pub fn names() -> Vec<String> {
    SITES
        .get()
        .map(|m| m.keys().cloned().collect())
        .unwrap_or_default()
}

/// Solves `network` after applying the query pairs; returns the `balance.solve` result.
fn solve(network: &Value, pairs: &[(String, String)]) -> Result<Value, CellError> {
    let mut net = network.clone();
    let mut top = Map::new();
    let mut seen = std::collections::BTreeSet::new();
    for (k, v) in pairs {
        if !seen.insert(k.as_str()) {
            return Err(err(400, format!("'{k}' is given twice")));
        }
        if RESERVED.contains(&k.as_str()) {
            let value = if k == "ambient" {
                wire_value(v)
            } else {
                Value::String(v.clone())
            };
            top.insert(k.clone(), value);
        } else if k.starts_with("units.") || k.starts_with("streams.") {
            set_path(&mut net, k, wire_value(v)).map_err(|e| err(400, e.to_string()))?;
        } else {
            return Err(err(
                400,
                format!(
                    "'{k}' is not a specification path such as units.NAME.FIELD or \
                     streams.NAME.FIELD, nor one of: {}",
                    RESERVED.join(", ")
                ),
            ));
        }
    }
    top.insert("network".into(), net);
    Ok(super::call(SOLVE_METHOD, Value::Object(top))?)
}

/// The number at `quantity` in a `balance.solve` result (a bare name: a site total).
fn pick(result: &Value, quantity: &str) -> Result<String, CellError> {
    let path: Vec<&str> = if quantity.contains('.') {
        quantity.split('.').collect()
    } else {
        vec!["totals", quantity]
    };
    let mut at = result;
    for (k, part) in path.iter().enumerate() {
        at = match at.get(part) {
            Some(v) => v,
            None => {
                let known: Vec<&str> = at
                    .as_object()
                    .map(|o| o.keys().map(String::as_str).collect())
                    .unwrap_or_default();
                let within = if k == 0 {
                    "the result".to_string()
                } else {
                    path[..k].join(".")
                };
                return Err(err(
                    404,
                    format!(
                        "unknown quantity '{quantity}': '{part}' is not in {within}; known there: {}",
                        known.join(", ")
                    ),
                ));
            }
        };
    }
    match at {
        Value::Number(n) => Ok(n.as_f64().map_or_else(|| n.to_string(), |x| format!("{x}"))),
        Value::Null => Err(err(422, format!("{quantity}: not defined for this site"))),
        Value::String(s) => Ok(s.split_whitespace().collect::<Vec<_>>().join(" ")),
        Value::Bool(b) => Ok(b.to_string()),
        _ => Err(err(
            404,
            format!("{quantity} is not a single value; name one of its fields (a dotted path)"),
        )),
    }
}

/// Answers one site request against a given network: the number at `quantity` of the solved
/// network with `pairs` applied, as text.
pub fn answer(
    network: &Value,
    quantity: &str,
    pairs: &[(String, String)],
) -> Result<String, CellError> {
    if quantity.is_empty() {
        return Err(err(
            404,
            "name a quantity, e.g. net_power or units.NAME.power",
        ));
    }
    pick(&solve(network, pairs)?, quantity)
}

/// Answers `GET /site/{name}/{quantity}` against the registered site `name`.
pub fn site_cell(
    name: &str,
    quantity: &str,
    pairs: &[(String, String)],
) -> Result<String, CellError> {
    let Some(net) = SITES.get().and_then(|m| m.get(name)) else {
        let known = names();
        return Err(err(
            404,
            if known.is_empty() {
                format!(
                    "no site '{name}': none is registered (start the server with --site NAME=FILE)"
                )
            } else {
                format!("no site '{name}'; registered: {}", known.join(", "))
            },
        ));
    };
    if quantity.is_empty() {
        return answer(net, quantity, pairs);
    }
    pick(solved_cached(name, net, pairs)?.as_ref(), quantity)
}

/// `steamcell site FILE QUANTITY [path=value...]`: the same answer from a network file.
pub fn from_file(file: &Path, quantity: &str, args: &[String]) -> Result<String, CellError> {
    let pairs = pairs_from_args(args)?;
    let net = read(file).map_err(|e| err(400, e))?;
    answer(&net, quantity, &pairs)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn pairs(list: &[(&str, &str)]) -> Vec<(String, String)> {
        list.iter()
            .map(|(k, v)| (k.to_string(), v.to_string()))
            .collect()
    }

    /// Two quantities with the same pairs cost one solve and agree with an uncached answer;
    /// other pairs solve again. (The name keys the cache; this one is never registered.)
    #[test]
    fn same_site_and_pairs_solve_once() {
        let net: Value =
            serde_json::from_str(include_str!("../../examples/site/site.json")).unwrap();
        let name = "cache-test-site";
        let q = pairs(&[("units.MP_users.demand", "40 t/h")]);
        let before = solves();
        let a = solved_cached(name, &net, &q).unwrap();
        let b = solved_cached(name, &net, &q).unwrap();
        assert!(
            Arc::ptr_eq(&a, &b),
            "the second ask is answered from the cache"
        );
        assert_eq!(
            pick(&a, "net_power").unwrap(),
            answer(&net, "net_power", &q).unwrap()
        );
        assert_eq!(
            pick(&b, "fuel_heat_input").unwrap(),
            answer(&net, "fuel_heat_input", &q).unwrap()
        );
        let other = pairs(&[("units.MP_users.demand", "30 t/h")]);
        let c = solved_cached(name, &net, &other).unwrap();
        assert_ne!(
            pick(&a, "net_power").unwrap(),
            pick(&c, "net_power").unwrap()
        );
        // Other tests in this binary may solve sites at the same time: at least our 2 misses.
        assert!(solves() - before >= 2);
        let d = solved_cached(name, &net, &other).unwrap();
        assert!(Arc::ptr_eq(&c, &d));
    }
}
