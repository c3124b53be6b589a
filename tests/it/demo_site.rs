//! The README's demo (examples/demo, an invented site): every request solves, and every
//! component's mass and energy balance closes to 1e-9 relative.

use serde_json::Value;

#[test]
fn demo_requests_solve_and_balance() {
    let dir = concat!(env!("CARGO_MANIFEST_DIR"), "/examples/demo");
    let mut files: Vec<_> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "json"))
        .collect();
    files.sort();
    assert!(files.len() >= 6, "{files:?}");
    for f in files {
        let req: Value = serde_json::from_str(&std::fs::read_to_string(&f).unwrap()).unwrap();
        let method = req["method"].as_str().unwrap();
        let res = steamcell::api::call(method, req["params"].clone())
            .unwrap_or_else(|e| panic!("{}: {} {}", f.display(), e.code, e.message));
        let b = &res["balance"];
        for k in ["mass_residual", "energy_residual"] {
            let r = b[k].as_f64().unwrap();
            assert!(r < 1e-9, "{}: {k} = {r}", f.display());
        }
        assert!(res["caution"]
            .as_str()
            .unwrap()
            .contains("licensed engineer"));
    }
}
