//! Shared helpers for the fixture tests: load a JSON fixture written by
//! tools/reference_fixtures.py and compare numbers.
#![allow(dead_code)]

use serde_json::Value;

/// Reads `tests/fixtures/<name>`.
pub fn fixture(name: &str) -> Value {
    let path = format!("{}/tests/fixtures/{name}", env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(&path)
        .unwrap_or_else(|e| panic!("{path}: {e} (run python3 tools/reference_fixtures.py)"));
    serde_json::from_str(&text).expect("fixture is valid JSON")
}

/// A JSON number as f64.
pub fn num(v: &Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

/// A JSON pair [re, im] as a complex number.
pub fn cplx(v: &Value) -> num_complex::Complex64 {
    num_complex::Complex64::new(num(&v[0]), num(&v[1]))
}

/// |a - b| / |b| (or |a - b| when b = 0).
pub fn rel_err(a: f64, b: f64) -> f64 {
    if b == 0.0 {
        (a - b).abs()
    } else {
        ((a - b) / b).abs()
    }
}
