//! The one error type of case files: which key, what is wrong, how to fix it.

use std::fmt;

/// A case file problem, naming the dotted key (`section.width`), the problem
/// and a fix. Displays as `case file: <key>: <problem>. Fix: <fix>`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct CaseError {
    /// Dotted key path, e.g. `body.radius`; for syntax errors `line L, column C`.
    pub key: String,
    /// What is wrong (no trailing full stop).
    pub message: String,
    /// What to change.
    pub fix: String,
}

impl CaseError {
    /// Builds an error; trailing full stops are trimmed from message and fix.
    pub fn new(key: impl Into<String>, message: impl Into<String>, fix: impl Into<String>) -> Self {
        let trim = |s: String| s.trim_end_matches(['.', ' ', '\n']).to_string();
        CaseError {
            key: key.into(),
            message: trim(message.into()),
            fix: trim(fix.into()),
        }
    }
}

impl fmt::Display for CaseError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "case file: {}: {}. Fix: {}.",
            self.key, self.message, self.fix
        )
    }
}

impl std::error::Error for CaseError {}

/// Short description of what each key takes, used in type-error fixes.
/// `*` stands for any material name.
pub(crate) const KEY_HELP: &[(&str, &str)] = &[
    ("units.length", "a string: \"nm\", \"um\", \"mm\" or \"m\""),
    (
        "body.kind",
        "a string: \"revolution\", \"ring\" or \"straight\"",
    ),
    ("body.radius", "a positive number, in units.length"),
    ("body.half_turns", "a whole number (negative for the opposite handedness)"),
    ("body.twist_rate", "a number, radians per units.length"),
    (
        "section.shape",
        "a string: \"rectangle\", \"disc\", \"ellipse\", \"polygon\" or \"gmsh\"",
    ),
    ("section.width", "a positive number, in units.length"),
    ("section.thickness", "a positive number, in units.length"),
    ("section.radius", "a positive number, in units.length"),
    ("section.corner_radius", "a number >= 0, in units.length"),
    ("section.centre", "two numbers [u, v], in units.length"),
    (
        "section.material",
        "a string naming a [materials.NAME] table",
    ),
    (
        "section.semi_axes",
        "two positive numbers [a, b], in units.length",
    ),
    (
        "section.vertices",
        "a list of [u, v] pairs, e.g. [[0, 0], [1, 0], [0, 1]], in units.length",
    ),
    ("section.file", "a string: path to a Gmsh .msh file"),
    (
        "materials.*.epsilon",
        "a number, or [re, im] with im >= 0 for loss (3x3 tensors are planned)",
    ),
    (
        "materials.*.mu",
        "a number, or [re, im] with im >= 0 for loss",
    ),
    ("surroundings.kind", "a string: \"open\" or \"metal\""),
    ("surroundings.epsilon", "a number, or [re, im] with im >= 0"),
    ("surroundings.padding", "a positive number, in units.length"),
    (
        "surroundings.pml_thickness",
        "a number >= 0, in units.length",
    ),
    ("mesh.order", "1 or 2"),
    (
        "mesh.resolution",
        "a positive number (elements per local wavelength)",
    ),
    ("mesh.pi_symmetric", "true or false"),
    ("mesh.mirror_symmetric", "true or false"),
    ("search.m", "a whole number, or a half-integer such as 2.5"),
    ("search.beta", "a number, radians per units.length"),
    (
        "search.near_frequency",
        "a string with a unit, e.g. \"6.2 GHz\" (Hz, kHz, MHz, GHz, THz)",
    ),
    (
        "search.near_wavelength",
        "a string with a unit, e.g. \"1.55 um\" (nm, um, mm, m)",
    ),
    ("search.count", "a whole number >= 1"),
    ("search.harmonics", "a whole number >= 1, or \"auto\""),
    (
        "search.max_harmonics",
        "a whole number >= 1: the largest window half-width \"auto\" may reach",
    ),
    (
        "search.tolerance",
        "a number between 0 and 0.1: the relative change of k0 allowed when the harmonic window narrows",
    ),
    (
        "search.near_q",
        "a number > 0: the expected quality factor of the resonances",
    ),
    (
        "boundary.midplane",
        "a string: \"none\", \"electric\" or \"magnetic\"",
    ),
];

/// The help text for a dotted key (material names matched by `*`).
pub(crate) fn key_help(key: &str) -> Option<&'static str> {
    let parts: Vec<&str> = key.split('.').collect();
    KEY_HELP.iter().find_map(|(pattern, help)| {
        let p: Vec<&str> = pattern.split('.').collect();
        (p.len() == parts.len() && p.iter().zip(&parts).all(|(a, b)| *a == "*" || a == b))
            .then_some(*help)
    })
}

/// The closest of `candidates` to `word` when it is close enough to be a
/// likely typo (normalised Damerau-Levenshtein similarity >= 0.5).
pub(crate) fn closest<'a>(word: &str, candidates: &[&'a str]) -> Option<&'a str> {
    candidates
        .iter()
        .map(|c| (strsim::normalized_damerau_levenshtein(word, c), *c))
        .filter(|(s, _)| *s >= 0.5)
        .max_by(|a, b| a.0.total_cmp(&b.0))
        .map(|(_, c)| c)
}
