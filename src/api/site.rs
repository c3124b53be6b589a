//! Named site networks for one-number answers: `GET /site/{name}/{quantity}?{path=value...}` and
//! `steamcell site FILE QUANTITY [path=value...]`, so that a spreadsheet cell can show a site
//! total of `balance.solve` without sending the network (too long for a URL) with every call.
//!
//! The operator registers networks when the server starts (`serve --site NAME=FILE`); each is
//! read and solved once then, so a broken file stops the start with its reason. A request
//! solves the registered network after applying its query pairs: `units` and `ambient` are the
//! method's own params; every other name is a dotted path into the network, as the `path` of
//! `balance.sweep` (`units.LP_users.demand=40 t/h`, `streams.hp_to_bpt.flow=30`,
//! `costing.fuel_cost=35 /MWh`); the value is a number in the request's units or a text with
//! its unit; `unit` sets the unit of the answered quantity (as a `units` key of its field
//! name). The answer is the number at
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
use super::{vocab, ApiError};
use serde_json::{Map, Value};
use std::collections::BTreeMap;
use std::collections::HashMap;
use std::path::Path;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::{Arc, Mutex};

/// The method a site request calls.
pub const SOLVE_METHOD: &str = "balance.solve";

/// Query names that are params of `balance.solve` rather than paths into the network: `units`
/// (a preset, a JSON object or `key=unit` items, see [`vocab::units_from_text`]), `ambient`, and
/// `unit`, the unit of the answered quantity (a `units` key of the quantity's field name).
pub const RESERVED: &[&str] = &["units", "ambient", "unit"];

/// Solved site results kept for the GET route (see the module invariants).
pub const CACHE_ENTRIES: usize = 256;

type CacheKey = (String, Vec<(String, String)>);

/// The site networks registered with a server (`serve --site NAME=FILE`) and the results solved
/// for its GET route; held by the server's [`ServerCtx`](super::server_ctx::ServerCtx).
#[derive(Debug, Default)]
pub struct Sites {
    networks: BTreeMap<String, Value>,
    solved: Mutex<HashMap<CacheKey, Arc<Value>>>,
    solves: AtomicU64,
}

impl Sites {
    /// Loads the named networks: each `(name, file)` is read and solved first; a bad name, a
    /// name given twice or a network that does not solve is refused with its reason.
    pub fn load(sites: &[(String, std::path::PathBuf)]) -> Result<Sites, String> {
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
        Ok(Sites::from_networks(map))
    }

    /// Sites from networks already read (name -> the `network` of `balance.solve`).
    pub fn from_networks(networks: BTreeMap<String, Value>) -> Sites {
        Sites {
            networks,
            ..Sites::default()
        }
    }

    /// The names of the registered sites.
    pub fn names(&self) -> Vec<String> {
        self.networks.keys().cloned().collect()
    }

    /// The network registered as `name`, or the 404 answer naming the registered ones.
    pub fn network(&self, name: &str) -> Result<&Value, CellError> {
        self.networks.get(name).ok_or_else(|| {
            let known = self.names();
            err(
                404,
                if known.is_empty() {
                    format!(
                        "no site '{name}': none is registered (start the server with --site NAME=FILE)"
                    )
                } else {
                    format!("no site '{name}'; registered: {}", known.join(", "))
                },
            )
        })
    }

    /// How many site networks the GET route has solved (cache misses), for tests and the log.
    pub fn solves(&self) -> u64 {
        self.solves.load(Ordering::Relaxed)
    }

    /// The solved result of site `name` with `pairs` applied, from the cache when the same site
    /// was asked with the same pairs before.
    pub fn solved(&self, name: &str, pairs: &[(String, String)]) -> Result<Arc<Value>, ApiError> {
        self.solved_for(name, "", pairs)
    }

    /// As [`Sites::solved`], for the answer `quantity` (which a `unit` pair refers to).
    pub fn solved_for(
        &self,
        name: &str,
        quantity: &str,
        pairs: &[(String, String)],
    ) -> Result<Arc<Value>, ApiError> {
        let network = self
            .networks
            .get(name)
            .ok_or_else(|| ApiError::invalid_params(".", format!("no site '{name}'")))?;
        let mut key_pairs = pairs.to_vec();
        if pairs.iter().any(|(k, _)| k == "unit") {
            key_pairs.push((" quantity".into(), quantity.into()));
        }
        let key = (name.to_string(), key_pairs);
        if let Some(hit) = self.solved.lock().ok().and_then(|c| c.get(&key).cloned()) {
            return Ok(hit);
        }
        self.solves.fetch_add(1, Ordering::Relaxed);
        let result = Arc::new(solve(network, pairs, quantity)?);
        if let Ok(mut c) = self.solved.lock() {
            if c.len() >= CACHE_ENTRIES {
                c.clear();
            }
            c.insert(key, Arc::clone(&result));
        }
        Ok(result)
    }
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
    solve(&net, &[], "").map_err(|e| format!("site file {}: {}", path.display(), e.message))?;
    Ok(net)
}

/// Solves `network` after applying the query pairs; returns the `balance.solve` result. A
/// `unit` pair sets the unit of the field `quantity` names (by its last part, as a `units` key).
fn solve(network: &Value, pairs: &[(String, String)], quantity: &str) -> Result<Value, ApiError> {
    let mut net = network.clone();
    let mut top = Map::new();
    let mut seen = std::collections::BTreeSet::new();
    let mut unit: Option<&str> = None;
    for (k, v) in pairs {
        if !seen.insert(k.as_str()) {
            return Err(ApiError::invalid_params(k, format!("'{k}' is given twice")));
        }
        if RESERVED.contains(&k.as_str()) {
            let value = match k.as_str() {
                "ambient" => wire_value(v),
                "units" => serde_json::to_value(vocab::units_from_text(v)?)
                    .map_err(|e| ApiError::internal(e.to_string()))?,
                "unit" => {
                    unit = Some(v);
                    continue;
                }
                _ => Value::String(v.clone()),
            };
            top.insert(k.clone(), value);
        } else if k.starts_with("units.") || k.starts_with("streams.") {
            set_path(&mut net, k, wire_value(v))?;
        } else if k.starts_with("costing.") {
            if net.get("costing").is_none() {
                net["costing"] = Value::Object(Map::new());
            }
            set_path(&mut net, k, wire_value(v))?;
        } else {
            return Err(ApiError::invalid_params(
                k,
                format!(
                    "'{k}' is not a specification path such as units.NAME.FIELD, \
                     streams.NAME.FIELD or costing.FIELD, nor one of: {}",
                    RESERVED.join(", ")
                ),
            ));
        }
    }
    if let Some(u) = unit {
        let leaf = quantity.rsplit('.').next().unwrap_or(quantity);
        if vocab::field_dims(leaf).is_empty() {
            return Err(ApiError::invalid_params(
                "unit",
                format!("unit = '{u}': '{quantity}' is not a quantity with a unit"),
            ));
        }
        // Messages name `unit` and the quantity, as the caller wrote them.
        vocab::answer_unit(leaf, u)?;
        let units = top
            .remove("units")
            .map(|x| serde_json::from_value(x).unwrap_or(vocab::Units::Preset(String::new())));
        let units = vocab::units_with(units, leaf, u)?;
        top.insert(
            "units".into(),
            serde_json::to_value(units).map_err(|e| ApiError::internal(e.to_string()))?,
        );
    }
    top.insert("network".into(), net);
    super::call(SOLVE_METHOD, Value::Object(top))
}

/// Refuses a name given twice among the query pairs (400), before anything is solved.
pub fn check_pairs(pairs: &[(String, String)]) -> Result<(), CellError> {
    let mut seen = std::collections::BTreeSet::new();
    match pairs.iter().find(|(k, _)| !seen.insert(k.as_str())) {
        Some((k, _)) => Err(err(400, format!("'{k}' is given twice"))),
        None => Ok(()),
    }
}

/// Refuses an empty quantity (404), before anything is solved.
pub fn check_quantity(quantity: &str) -> Result<(), CellError> {
    if quantity.is_empty() {
        return Err(err(
            404,
            "name a quantity, e.g. net_power or units.NAME.power",
        ));
    }
    Ok(())
}

/// The number at `quantity` in a `balance.solve` result (a bare name: a site total).
pub fn pick(result: &Value, quantity: &str) -> Result<String, CellError> {
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
    check_quantity(quantity)?;
    pick(&solve(network, pairs, quantity)?, quantity)
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
    /// other pairs solve again; another server's sites keep their own cache.
    #[test]
    fn same_site_and_pairs_solve_once() {
        let net: Value =
            serde_json::from_str(include_str!("../../examples/site/site.json")).unwrap();
        let name = "cache-test-site";
        let sites = Sites::from_networks(BTreeMap::from([(name.to_string(), net.clone())]));
        let q = pairs(&[("units.MP_users.demand", "40 t/h")]);
        let a = sites.solved(name, &q).unwrap();
        let b = sites.solved(name, &q).unwrap();
        assert!(
            Arc::ptr_eq(&a, &b),
            "the second ask is answered from the cache"
        );
        assert_eq!(sites.solves(), 1);
        assert_eq!(
            pick(&a, "net_power").unwrap(),
            answer(&net, "net_power", &q).unwrap()
        );
        assert_eq!(
            pick(&b, "fuel_heat_input").unwrap(),
            answer(&net, "fuel_heat_input", &q).unwrap()
        );
        let other = pairs(&[("units.MP_users.demand", "30 t/h")]);
        let c = sites.solved(name, &other).unwrap();
        assert_ne!(
            pick(&a, "net_power").unwrap(),
            pick(&c, "net_power").unwrap()
        );
        assert_eq!(sites.solves(), 2);
        let d = sites.solved(name, &other).unwrap();
        assert!(Arc::ptr_eq(&c, &d));
        let elsewhere = Sites::from_networks(BTreeMap::from([(name.to_string(), net)]));
        elsewhere.solved(name, &q).unwrap();
        assert_eq!((sites.solves(), elsewhere.solves()), (2, 1));
    }
}
