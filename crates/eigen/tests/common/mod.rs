//! Helpers shared by the integration tests: fixtures and eigenvalue-set comparisons.
#![allow(dead_code)] // each test binary uses a different subset

use std::path::PathBuf;

use twistmode_eigen::{c64, sparse_from_triplets, Pencil, Spectrum};

pub fn fixture(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
        .join("tests/fixtures")
        .join(name)
}

/// Exact values sorted by distance to `sigma`, first `count`.
pub fn nearest(exact: &[c64], sigma: c64, count: usize) -> Vec<c64> {
    let mut e = exact.to_vec();
    e.sort_by(|a, b| (a - sigma).norm().total_cmp(&(b - sigma).norm()));
    e.truncate(count);
    e
}

/// Every computed value matches a distinct exact one (a one-to-one matching), i.e. the
/// returned set is exactly the nearest `count` with multiplicity: none skipped.
pub fn assert_same_multiset(found: &[c64], expected: &[c64], rel: f64) {
    assert_eq!(
        found.len(),
        expected.len(),
        "found {found:?}\nexpected {expected:?}"
    );
    let mut used = vec![false; expected.len()];
    for f in found {
        let hit = expected
            .iter()
            .enumerate()
            .filter(|(i, e)| !used[*i] && (*f - **e).norm() <= rel * e.norm().max(1.0))
            .map(|(i, _)| i)
            .next();
        match hit {
            Some(i) => used[i] = true,
            None => panic!("{f} matches no unused expected value in {expected:?}"),
        }
    }
}

pub fn lambdas(s: &Spectrum) -> Vec<c64> {
    s.pairs.iter().map(|p| p.lambda).collect()
}

pub fn real(v: &[f64]) -> Vec<c64> {
    v.iter().map(|&x| c64::new(x, 0.0)).collect()
}

/// The JSON fixture `random_pencil.json` (tools/eigen_fixtures.py).
pub fn random_pencil_json() -> serde_json::Value {
    let text = std::fs::read_to_string(fixture("random_pencil.json")).unwrap();
    serde_json::from_str(&text).unwrap()
}

/// Triplets `[row, col, re, im]` stored under `key` in a fixture.
pub fn triplets(json: &serde_json::Value, key: &str) -> Vec<(usize, usize, c64)> {
    json[key]
        .as_array()
        .unwrap()
        .iter()
        .map(|t| {
            let t = t.as_array().unwrap();
            (
                t[0].as_u64().unwrap() as usize,
                t[1].as_u64().unwrap() as usize,
                c64::new(t[2].as_f64().unwrap(), t[3].as_f64().unwrap()),
            )
        })
        .collect()
}

/// The random complex pencil of the fixture and its eigenvalues (dense QZ).
pub fn random_pencil() -> (Pencil, Vec<c64>) {
    let json = random_pencil_json();
    let n = json["n"].as_u64().unwrap() as usize;
    let pencil = Pencil::try_new(
        sparse_from_triplets(n, n, &triplets(&json, "k")).unwrap(),
        sparse_from_triplets(n, n, &triplets(&json, "m")).unwrap(),
    )
    .unwrap();
    let exact = json["eigenvalues"]
        .as_array()
        .unwrap()
        .iter()
        .map(|z| c64::new(z[0].as_f64().unwrap(), z[1].as_f64().unwrap()))
        .collect();
    (pencil, exact)
}
