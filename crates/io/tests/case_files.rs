//! Case files: examples, every class of bad input, overrides, robustness.

use num_complex::Complex64;
use proptest::prelude::*;
use std::path::{Path, PathBuf};
use twistmode_io::case::{
    scalar_tensor, Body, Case, CaseError, Midplane, ModeOrder, SectionOutline, SurroundingMedium,
};
use twistmode_mesh::{DomainKind, GeometryOrder, SectionShape, Surroundings};

/// Speed of light, m/s (exact, SI definition of the metre).
const C: f64 = 299_792_458.0;

fn examples_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../../examples")
}

fn close(a: f64, b: f64, rel: f64) -> bool {
    (a - b).abs() <= rel * b.abs().max(1e-300)
}

const RING: &str = r#"
[units]
length = "mm"
[body]
kind = "ring"
radius = 30.0
[section]
shape = "rectangle"
width = 8.0
thickness = 3.0
material = "k38"
[materials.k38]
epsilon = [38.0, 0.00038]
[surroundings]
padding = 8.0
pml_thickness = 6.0
[search]
m = 18
near_frequency = "7 GHz"
"#;

/// Reads the base ring with overrides `a=b`.
fn ring_with(sets: &[&str]) -> Result<Case, CaseError> {
    let overrides: Vec<(String, String)> = sets
        .iter()
        .map(|s| twistmode_io::case::parse_set_argument(s).unwrap())
        .collect();
    Case::from_toml_str(RING, &overrides)
}

/// Asserts the error names `key`, says `problem` and gives a fix containing `fix`.
fn assert_refused(result: Result<Case, CaseError>, key: &str, problem: &str, fix: &str) {
    let e = result.expect_err("the case should have been refused");
    let shown = e.to_string();
    assert_eq!(e.key, key, "wrong key in: {shown}");
    assert!(
        e.message.contains(problem),
        "message lacks '{problem}': {shown}"
    );
    assert!(e.fix.contains(fix), "fix lacks '{fix}': {shown}");
    assert!(shown.starts_with(&format!("case file: {key}: ")), "{shown}");
    assert!(shown.contains(". Fix: "), "{shown}");
}

#[test]
fn ceramic_ring_example_reads_in_si_units() {
    let case = Case::load(&examples_dir().join("ceramic-ribbon-ring.toml"), &[]).unwrap();
    assert_eq!(
        case.body,
        Body::Ring {
            radius: 0.030,
            half_turns: 0
        }
    );
    let m = &case.materials["kestrel-38"];
    assert_eq!(m.epsilon, scalar_tensor(Complex64::new(38.0, 0.00038)));
    assert_eq!(m.mu, scalar_tensor(Complex64::new(1.0, 0.0)));
    assert!(m.is_isotropic());
    assert_eq!(case.search.near_frequency, 7e9);
    assert_eq!(case.search.harmonics, 0);
    assert!(!case.mesh.pi_symmetric);
    let spec = case.generator_spec().unwrap();
    assert_eq!(spec.domain, DomainKind::Disc);
    assert_eq!(spec.order, GeometryOrder::Quadratic);
    // Body size: lambda0 / (sqrt|eps| * resolution); lambda0 = c / f.
    let lambda0 = C / 7e9;
    let n = (38.0f64.hypot(0.00038)).sqrt();
    assert!(close(spec.body.max_edge, lambda0 / (n * 10.0), 1e-12));
    match spec.surroundings {
        Surroundings::Medium {
            padding,
            pml_thickness,
            max_edge,
        } => {
            assert!(close(padding, 8e-3, 1e-12) && close(pml_thickness, 6e-3, 1e-12));
            assert!(close(max_edge, lambda0 / 10.0, 1e-12));
        }
        other => panic!("expected an open problem, got {other:?}"),
    }
    match spec.body.shape {
        SectionShape::Rectangle {
            width,
            thickness,
            corner_radius,
        } => {
            assert!(close(width, 8e-3, 1e-12) && close(thickness, 3e-3, 1e-12));
            assert!(close(corner_radius, 0.3e-3, 1e-12));
        }
        other => panic!("expected a rectangle, got {other:?}"),
    }
}

#[test]
fn glass_sphere_example_is_a_half_plane_problem() {
    let case = Case::load(&examples_dir().join("glass-sphere.toml"), &[]).unwrap();
    assert_eq!(case.body, Body::Revolution);
    assert_eq!(case.midplane, Midplane::None);
    let lambda0 = 1.55e-6;
    assert!(close(case.search.near_frequency, C / lambda0, 1e-12));
    // Default layers: half a wavelength of the surrounding medium (air) each.
    match case.surroundings {
        SurroundingMedium::Open {
            padding,
            pml_thickness,
            ..
        } => {
            assert!(close(padding, 0.5 * lambda0, 1e-12));
            assert!(close(pml_thickness, 0.5 * lambda0, 1e-12));
        }
        SurroundingMedium::Metal => panic!("expected open"),
    }
    let spec = case.generator_spec().unwrap();
    assert_eq!(spec.domain, DomainKind::HalfPlane);
    assert!(!spec.upper_half_only && !spec.pi_symmetric);
    assert!(close(spec.body.max_edge, lambda0 / (1.5 * 12.0), 1e-12));
}

#[test]
fn twisted_ring_example_defaults_to_pi_symmetric_mesh() {
    let case = Case::load(&examples_dir().join("twisted-ribbon-ring.toml"), &[]).unwrap();
    assert!(case.body.is_twisted_ring());
    assert_eq!(case.body.tau(), 0.5);
    assert!(case.mesh.pi_symmetric);
    assert_eq!(case.search.harmonics, 4);
    match case.search.order {
        ModeOrder::Azimuthal(m) => {
            assert!(m.is_half_integer());
            assert_eq!(m.value(), 17.5);
        }
        other => panic!("expected an azimuthal order, got {other:?}"),
    }
    assert!(case.generator_spec().unwrap().pi_symmetric);
}

#[test]
fn straight_guide_example_converts_beta_to_si() {
    let case = Case::load(&examples_dir().join("straight-strip-guide.toml"), &[]).unwrap();
    assert_eq!(case.body, Body::Straight { twist_rate: 0.0 });
    match case.search.order {
        // 7 rad/um = 7e6 rad/m.
        ModeOrder::Propagation { beta } => assert!(close(beta, 7e6, 1e-12)),
        other => panic!("expected beta, got {other:?}"),
    }
    assert_eq!(case.search.count, 4);
    assert_eq!(case.generator_spec().unwrap().domain, DomainKind::Box);
}

#[test]
fn every_example_file_validates() {
    let mut n = 0;
    for entry in std::fs::read_dir(examples_dir()).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_some_and(|e| e == "toml") {
            let case = Case::load(&path, &[]).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
            case.mesh_source().unwrap();
            n += 1;
        }
    }
    assert!(n >= 4, "expected at least 4 examples, found {n}");
}

#[test]
fn overrides_change_values_before_validation() {
    let case = ring_with(&[
        "section.width=6",
        "search.near_frequency=6.5 GHz",
        "body.half_turns=2",
        "mesh.order=1",
    ])
    .unwrap();
    match case.section.outline {
        SectionOutline::Shape {
            shape: SectionShape::Rectangle { width, .. },
            ..
        } => assert!(close(width, 6e-3, 1e-12)),
        ref other => panic!("{other:?}"),
    }
    assert_eq!(case.search.near_frequency, 6.5e9);
    assert_eq!(case.mesh.order, GeometryOrder::Linear);
    // Even twist: both sectors physical; a pi-symmetric section is meshed
    // symmetrically by default so that each sector is solved at half the size.
    assert!(case.mesh.pi_symmetric);
    assert_eq!(case.search.harmonics, 4);
    // Overrides can add whole tables.
    let case = ring_with(&[
        "materials.other.epsilon=[2.0, 0.1]",
        "section.material=other",
    ])
    .unwrap();
    assert_eq!(
        case.materials["other"].epsilon,
        scalar_tensor(Complex64::new(2.0, 0.1))
    );
    // A misspelt override is caught like a misspelt key.
    assert_refused(
        ring_with(&["section.widht=6"]),
        "section.widht",
        "unknown key",
        "did you mean 'width'",
    );
}

#[test]
fn unknown_keys_suggest_the_closest() {
    assert_refused(
        ring_with(&["serch.m=3"]),
        "serch",
        "unknown key 'serch'",
        "did you mean 'search'",
    );
    assert_refused(
        ring_with(&["materials.k38.epsilom=3"]),
        "materials.k38.epsilom",
        "unknown key",
        "did you mean 'epsilon'",
    );
    assert_refused(
        ring_with(&["body.kind=rign"]),
        "body.kind",
        "unknown value \"rign\"",
        "did you mean \"ring\"",
    );
    assert_refused(
        ring_with(&["surroundings.kind=perfect"]),
        "surroundings.kind",
        "unknown value",
        "open, metal",
    );
}

#[test]
fn missing_required_keys_are_named() {
    let without = |table_line: &str| RING.replace(table_line, "");
    assert_refused(
        Case::from_toml_str(&without("length = \"mm\""), &[]),
        "units.length",
        "missing",
        "length = \"mm\"",
    );
    assert_refused(
        Case::from_toml_str(&without("kind = \"ring\""), &[]),
        "body.kind",
        "missing",
        "revolution",
    );
    assert_refused(
        Case::from_toml_str(&without("radius = 30.0"), &[]),
        "body.radius",
        "missing",
        "distance from the ring axis",
    );
    assert_refused(
        Case::from_toml_str(&without("thickness = 3.0"), &[]),
        "section.thickness",
        "missing",
        "thickness",
    );
    assert_refused(
        Case::from_toml_str(&without("m = 18"), &[]),
        "search.m",
        "missing",
        "azimuthal order",
    );
    assert_refused(
        Case::from_toml_str(&without("near_frequency = \"7 GHz\""), &[]),
        "search.near_frequency",
        "missing",
        "near_wavelength",
    );
    assert_refused(
        Case::from_toml_str(&without("epsilon = [38.0, 0.00038]"), &[]),
        "materials.k38.epsilon",
        "missing",
        "epsilon",
    );
}

#[test]
fn units_missing_or_unknown() {
    assert_refused(
        ring_with(&["units.length=inch"]),
        "units.length",
        "unknown length unit \"inch\"",
        "nm, um, mm, m",
    );
    assert_refused(
        ring_with(&["units.length=MM"]),
        "units.length",
        "unknown length unit",
        "did you mean \"mm\"",
    );
    assert_refused(
        ring_with(&["search.near_frequency=7"]),
        "search.near_frequency",
        "has no unit",
        "\"6.2 GHz\"",
    );
    assert_refused(
        ring_with(&["search.near_frequency=7 ghz"]),
        "search.near_frequency",
        "unknown unit 'ghz'",
        "GHz",
    );
    assert_refused(
        ring_with(&["search.near_frequency=42 mm"]),
        "search.near_frequency",
        "is a length",
        "near_wavelength",
    );
    assert_refused(
        ring_with(&["search.near_wavelength=42 mm"]),
        "search.near_frequency",
        "both",
        "exactly one",
    );
    // Every length unit scales the geometry.
    for (unit, metres) in [("nm", 1e-9), ("um", 1e-6), ("mm", 1e-3), ("m", 1.0)] {
        let text = RING
            .replace("length = \"mm\"", &format!("length = \"{unit}\""))
            .replace("near_frequency = \"7 GHz\"", "near_frequency = \"7 Hz\"");
        let case = Case::from_toml_str(&text, &[]).unwrap();
        assert_eq!(case.length_unit.metres(), metres);
        match case.body {
            Body::Ring { radius, .. } => assert!(close(radius, 30.0 * metres, 1e-12)),
            other => panic!("{other:?}"),
        }
    }
}

#[test]
fn non_physical_values_are_refused() {
    assert_refused(
        ring_with(&["section.width=-8"]),
        "section.width",
        "must be positive",
        "> 0",
    );
    assert_refused(
        ring_with(&["section.width=0"]),
        "section.width",
        "must be positive",
        "> 0",
    );
    assert_refused(
        ring_with(&["section.thickness=nan"]),
        "section.thickness",
        "not a finite number",
        "nan",
    );
    assert_refused(
        ring_with(&["body.radius=inf"]),
        "body.radius",
        "not a finite number",
        "inf",
    );
    assert_refused(
        ring_with(&["section.width=\"big\""]),
        "section.width",
        "wrong type",
        "positive number",
    );
    assert_refused(
        ring_with(&["search.count=0"]),
        "search.count",
        "no modes",
        "at least 1",
    );
    assert_refused(
        ring_with(&["mesh.order=3"]),
        "mesh.order",
        "not available",
        "1 or 2",
    );
    assert_refused(
        ring_with(&["section.corner_radius=2"]),
        "section.corner_radius",
        "exceeds half the smaller side",
        "reduce",
    );
}

#[test]
fn gain_is_refused_with_the_sign_convention() {
    // Under exp(-i omega t) a passive medium has Im(eps) >= 0
    // (Source: Jackson, Classical Electrodynamics, 3rd ed., sec. 7.5; from memory).
    assert_refused(
        ring_with(&["materials.k38.epsilon=[38.0, -0.0004]"]),
        "materials.k38.epsilon",
        "means gain under the exp(-i omega t) convention",
        "[38, 0.0004]",
    );
    assert_refused(
        ring_with(&["surroundings.epsilon=[1.0, -0.1]"]),
        "surroundings.epsilon",
        "gain",
        "positive imaginary part",
    );
    assert_refused(
        ring_with(&["materials.k38.epsilon=[[9,0,0],[0,11,0],[0,0,9]]"]),
        "materials.k38.epsilon",
        "rotation about the z axis",
        "[[a, b, 0], [-b, a, 0], [0, 0, c]]",
    );
    assert_refused(
        ring_with(&["materials.k38.epsilon=[[9,0,0],[0,9,0],[0,0,[11,-0.1]]]"]),
        "materials.k38.epsilon",
        "gain in some direction",
        "positive imaginary parts",
    );
    assert_refused(
        ring_with(&["materials.k38.epsilon=[[1,2,0],[2,4,0],[0,0,1]]"]),
        "materials.k38.epsilon",
        "singular",
        "invertible",
    );
    assert_refused(
        ring_with(&["surroundings.epsilon=[[1,0,0],[0,1,0],[0,0,1]]"]),
        "surroundings.epsilon",
        "must be a scalar here",
        "a number, or [re, im]",
    );
    // A uniaxial crystal with its axis along z, lossy along the axis, is accepted as given.
    let case = ring_with(&["materials.k38.epsilon=[[9,0,0],[0,9,0],[0,0,[11.5,0.002]]]"]).unwrap();
    let eps = case.materials["k38"].epsilon;
    assert_eq!(eps[0][0], Complex64::new(9.0, 0.0));
    assert_eq!(eps[2][2], Complex64::new(11.5, 0.002));
    assert_eq!(eps[0][1], Complex64::new(0.0, 0.0));
    assert!(!case.materials["k38"].is_isotropic());
    assert!((case.materials["k38"].index_modulus() - 11.5f64.hypot(0.002).sqrt()).abs() < 1e-12);
    assert_refused(
        ring_with(&["materials.k38.epsilon=0"]),
        "materials.k38.epsilon",
        "no material",
        "relative",
    );
}

#[test]
fn ring_reaching_its_axis_is_refused() {
    // Section half-diagonal sqrt(4^2 + 1.5^2) = 4.272 mm, + 8 + 6 = 18.27 mm.
    let e = ring_with(&["body.radius=18"]).unwrap_err();
    assert_eq!(e.key, "body.radius");
    assert!(
        e.message
            .starts_with("body.radius = 18 mm but the section reaches 18.27 mm from its centre"),
        "{e}"
    );
    assert!(
        e.fix
            .contains("increase body.radius or reduce surroundings.padding"),
        "{e}"
    );
    // With default layers (half a wavelength each at 7 GHz: 21.4 mm) the fix says so.
    assert_refused(
        ring_with(&["surroundings.padding=nan"]),
        "surroundings.padding",
        "not a finite",
        "nan",
    );
    let text = RING.replace("padding = 8.0\npml_thickness = 6.0\n", "");
    assert_refused(
        Case::from_toml_str(&text, &[]),
        "body.radius",
        "the section reaches",
        "defaults",
    );
    // Metal walls: only the section itself must stay off the axis (its inner
    // edge is 4 mm from the centre when untwisted, 4.272 mm when it turns).
    let metal = |sets: &[(&str, &str)]| {
        let mut o: Vec<(String, String)> = vec![("surroundings.kind".into(), "metal".into())];
        o.extend(sets.iter().map(|(k, v)| (k.to_string(), v.to_string())));
        Case::from_toml_str(&text, &o)
    };
    assert!(metal(&[("body.radius", "4.1")]).is_ok());
    assert_refused(
        metal(&[("body.radius", "3.9")]),
        "body.radius",
        "reaches 4 mm",
        "increase body.radius",
    );
    assert_refused(
        metal(&[("body.radius", "4.1"), ("body.half_turns", "2")]),
        "body.radius",
        "reaches 4.272 mm",
        "shrink the section",
    );
    assert!(metal(&[("body.radius", "4.3"), ("body.half_turns", "2")]).is_ok());
}

#[test]
fn twist_and_order_rules() {
    let triangle = "section.vertices=[[0, 2], [-2, -1], [2, -1]]";
    assert_refused(
        ring_with(&["section.shape=polygon", "section.width=1"]),
        "section.width",
        "no meaning for shape = \"polygon\"",
        "vertices",
    );
    let poly = |extra: &str| {
        let text = RING.replace(
            "shape = \"rectangle\"\nwidth = 8.0\nthickness = 3.0\n",
            "shape = \"polygon\"\n",
        );
        let mut sets = vec![triangle.to_string()];
        if !extra.is_empty() {
            sets.push(extra.to_string());
        }
        let overrides: Vec<(String, String)> = sets
            .iter()
            .map(|s| twistmode_io::case::parse_set_argument(s).unwrap())
            .collect();
        Case::from_toml_str(&text, &overrides)
    };
    assert!(poly("").is_ok());
    assert_refused(
        poly("body.half_turns=1"),
        "body.half_turns",
        "symmetric under rotation by pi",
        "even body.half_turns",
    );
    assert!(poly("body.half_turns=2").is_ok_and(|c| !c.mesh.pi_symmetric));
    assert_refused(
        ring_with(&[
            "body.half_turns=1",
            "search.m=2.5",
            "mesh.pi_symmetric=false",
        ]),
        "mesh.pi_symmetric",
        "physical sector",
        "remove mesh.pi_symmetric",
    );
    // The mirror-symmetric mesh is opt-in, for twisted rings with both mirrors.
    let twisted = ring_with(&["body.half_turns=1", "search.m=2.5"]).unwrap();
    assert!(twisted.mesh.pi_symmetric && !twisted.mesh.mirror_symmetric);
    assert!(ring_with(&[
        "body.half_turns=1",
        "search.m=2.5",
        "mesh.mirror_symmetric=true"
    ])
    .is_ok_and(|c| c.mesh.mirror_symmetric));
    assert_refused(
        ring_with(&["mesh.mirror_symmetric=true"]),
        "mesh.mirror_symmetric",
        "serves twisted rings",
        "remove mesh.mirror_symmetric",
    );
    let text = RING.replace(
        "shape = \"rectangle\"\nwidth = 8.0\nthickness = 3.0\n",
        "shape = \"polygon\"\n",
    );
    let sets: Vec<(String, String)> = [triangle, "body.half_turns=2", "mesh.mirror_symmetric=true"]
        .iter()
        .map(|s| twistmode_io::case::parse_set_argument(s).unwrap())
        .collect();
    assert_refused(
        Case::from_toml_str(&text, &sets),
        "mesh.mirror_symmetric",
        "symmetric under v -> -v and u -> -u",
        "remove mesh.mirror_symmetric",
    );
    // Either handedness: a negative count is the mirror image.
    assert!(poly("body.half_turns=-2").is_ok());
    assert_refused(
        poly("body.half_turns=-1"),
        "body.half_turns",
        "symmetric under rotation by pi",
        "even body.half_turns",
    );
    let auto = ring_with(&[
        "body.half_turns=1",
        "search.m=2.5",
        "search.harmonics=\"auto\"",
    ])
    .unwrap();
    assert_eq!(auto.search.max_harmonics, Some(10));
    assert_eq!(auto.search.harmonics, 2);
    assert_refused(
        ring_with(&[
            "body.half_turns=1",
            "search.m=2.5",
            "search.harmonics=\"many\"",
        ]),
        "search.harmonics",
        "neither a whole number nor \"auto\"",
        "\"auto\"",
    );
    assert_refused(
        ring_with(&[
            "body.half_turns=1",
            "search.m=2.5",
            "search.max_harmonics=6",
        ]),
        "search.max_harmonics",
        "limits search.harmonics = \"auto\" only",
        "set search.harmonics = \"auto\"",
    );
    assert_refused(
        ring_with(&["search.harmonics=\"auto\""]),
        "search.harmonics",
        "twisted rings only",
        "remove it",
    );
    assert_refused(
        ring_with(&[
            "body.half_turns=2",
            "materials.k38.epsilon=[[38, 0, 0], [0, 38, 0], [0, 0, 30]]",
        ]),
        "materials.k38.epsilon",
        "the ring twists",
        "isotropic value",
    );
    assert_refused(
        ring_with(&["search.tolerance=1e-6"]),
        "search.tolerance",
        "twisted rings",
        "remove it",
    );
    assert_refused(
        ring_with(&["body.half_turns=1", "search.m=2.5", "search.tolerance=0.5"]),
        "search.tolerance",
        "outside (0, 0.1]",
        "1e-6",
    );
    assert_refused(
        poly("mesh.pi_symmetric=true"),
        "mesh.pi_symmetric",
        "not symmetric",
        "false",
    );
    assert_refused(
        ring_with(&["search.harmonics=3"]),
        "search.harmonics",
        "untwisted ring",
        "nonzero body.half_turns",
    );
    assert_refused(
        ring_with(&["body.half_turns=1", "search.harmonics=0"]),
        "search.harmonics",
        "averages the bend away",
        "at least 1",
    );
    assert_refused(
        ring_with(&["search.beta=3"]),
        "search.beta",
        "applies to straight guides",
        "search.m",
    );
    assert_refused(
        ring_with(&["search.m=2.5"]),
        "search.m",
        "half-integer",
        "whole number",
    );
    assert!(ring_with(&["search.m=2.5", "body.half_turns=3"]).is_ok());
    assert_refused(
        ring_with(&["search.m=2.25", "body.half_turns=1"]),
        "search.m",
        "neither an integer nor a half-integer",
        "whole number",
    );
    assert_refused(
        ring_with(&["body.twist_rate=0.1"]),
        "body.twist_rate",
        "straight guides",
        "half_turns",
    );
    assert_refused(
        ring_with(&["boundary.midplane=electric"]),
        "boundary.midplane",
        "revolution only",
        "remove it",
    );
    assert_refused(
        ring_with(&["section.centre=[1, 0]"]),
        "section.centre",
        "placed by body.radius",
        "remove section.centre",
    );
    assert_refused(
        ring_with(&["section.material=k83"]),
        "section.material",
        "no material named \"k83\"",
        "did you mean \"k38\"",
    );
    assert_refused(
        ring_with(&["surroundings.kind=metal"]),
        "surroundings.padding",
        "no meaning",
        "remove it",
    );
}

#[test]
fn revolution_and_straight_rules() {
    let sphere = r#"
[units]
length = "um"
[body]
kind = "revolution"
[section]
shape = "disc"
radius = 2.0
material = "g"
[materials.g]
epsilon = 2.25
[search]
m = 3
near_wavelength = "1.5 um"
"#;
    let read = |sets: &[&str]| {
        let o: Vec<(String, String)> = sets
            .iter()
            .map(|s| twistmode_io::case::parse_set_argument(s).unwrap())
            .collect();
        Case::from_toml_str(sphere, &o)
    };
    assert!(read(&[]).is_ok());
    let case = read(&["boundary.midplane=magnetic"]).unwrap();
    assert_eq!(case.midplane, Midplane::Magnetic);
    assert!(case.generator_spec().unwrap().upper_half_only);
    assert_refused(
        read(&["section.centre=[1, 0]"]),
        "section.centre",
        "across the axis",
        "r >= 0",
    );
    assert!(read(&["section.centre=[3, 0]"]).is_ok());
    assert_refused(
        read(&["section.centre=[3, 1]", "boundary.midplane=electric"]),
        "boundary.midplane",
        "mirror-symmetric about z = 0",
        "none",
    );
    assert_refused(
        read(&["body.radius=3"]),
        "body.radius",
        "no meaning",
        "section.centre",
    );
    assert_refused(
        read(&["search.harmonics=2"]),
        "search.harmonics",
        "twisted rings only",
        "remove",
    );
    assert_refused(
        read(&["mesh.pi_symmetric=true"]),
        "mesh.pi_symmetric",
        "revolution",
        "remove",
    );
    assert_refused(
        read(&["search.m=1.5"]),
        "search.m",
        "half-integer",
        "whole number",
    );
    // Straight guides: beta, not m.
    let guide = ["body.kind=straight", "search.beta=5"];
    assert_refused(
        read(&guide),
        "search.m",
        "applies to revolution bodies and rings",
        "search.beta",
    );
    let text = sphere
        .replace("m = 3\n", "beta = 5\n")
        .replace("\"revolution\"", "\"straight\"");
    let case = Case::from_toml_str(&text, &[]).unwrap();
    assert_eq!(case.search.order, ModeOrder::Propagation { beta: 5e6 });
    let twisted = Case::from_toml_str(&text, &[("body.twist_rate".into(), "0.5".into())]).unwrap();
    assert_eq!(twisted.body, Body::Straight { twist_rate: 0.5e6 });
    assert_refused(
        Case::from_toml_str(&text.replace("beta = 5\n", ""), &[]),
        "search.beta",
        "missing",
        "propagation constant",
    );
}

#[test]
fn gmsh_sections_come_from_the_file() {
    let text = RING.replace(
        "shape = \"rectangle\"\nwidth = 8.0\nthickness = 3.0\nmaterial = \"k38\"\n",
        "shape = \"gmsh\"\nfile = \"ribbon.msh\"\n",
    );
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("case.toml");
    std::fs::write(&path, &text).unwrap();
    let case = Case::load(&path, &[]).unwrap();
    match case.mesh_source().unwrap() {
        twistmode_io::MeshSource::Gmsh {
            path,
            metres_per_unit,
        } => {
            assert_eq!(path, dir.path().join("ribbon.msh"));
            assert_eq!(metres_per_unit, 1e-3);
        }
        other => panic!("{other:?}"),
    }
    assert_eq!(case.generator_spec().unwrap_err().key, "section.shape");
    assert_refused(
        Case::from_toml_str(&text, &[("section.width".into(), "3".into())]),
        "section.width",
        "no meaning for shape = \"gmsh\"",
        "file",
    );
}

#[test]
fn syntax_errors_give_line_and_column() {
    let text = "[units]\nlength = mm\n";
    let e = Case::from_toml_str(text, &[]).unwrap_err();
    assert!(e.key.starts_with("line 2, column"), "{e}");
    assert!(e.message.contains("not valid TOML"), "{e}");
    let e = Case::load(Path::new("/nonexistent/case.toml"), &[]).unwrap_err();
    assert!(e.message.contains("cannot read"), "{e}");
}

/// A random value of one of the TOML kinds.
fn any_value() -> impl Strategy<Value = String> {
    prop_oneof![
        any::<i64>().prop_map(|i| i.to_string()),
        any::<f64>().prop_map(|x| format!("{x:?}").replace("NaN", "nan")),
        "[a-z ]{0,8}".prop_map(|s| format!("\"{s}\"")),
        Just("true".to_string()),
        Just("[1.0, -2.0]".to_string()),
        Just("[[1, 2], [3, 4], [5]]".to_string()),
        Just("{}".to_string()),
        "[0-9.]{1,6} ?(GHz|um|mm|Hz|x)".prop_map(|s| format!("\"{s}\"")),
    ]
}

/// A random key path among the real ones and some near misses.
fn any_key() -> impl Strategy<Value = String> {
    prop::sample::select(vec![
        "units.length",
        "body.kind",
        "body.radius",
        "body.half_turns",
        "body.twist_rate",
        "section.shape",
        "section.width",
        "section.thickness",
        "section.radius",
        "section.corner_radius",
        "section.centre",
        "section.material",
        "section.semi_axes",
        "section.vertices",
        "section.file",
        "materials.k38.epsilon",
        "materials.k38.mu",
        "surroundings.kind",
        "surroundings.epsilon",
        "surroundings.padding",
        "surroundings.pml_thickness",
        "mesh.order",
        "mesh.resolution",
        "mesh.pi_symmetric",
        "search.m",
        "search.beta",
        "search.near_frequency",
        "search.near_wavelength",
        "search.count",
        "search.harmonics",
        "boundary.midplane",
        "bogus",
        "body.kind.deeper",
    ])
    .prop_map(str::to_string)
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    #[test]
    fn arbitrary_text_never_panics(text in ".{0,200}") {
        let _ = Case::from_toml_str(&text, &[]);
    }

    #[test]
    fn arbitrary_overrides_never_panic(
        sets in prop::collection::vec((any_key(), any_value()), 0..6)
    ) {
        let overrides: Vec<(String, String)> = sets;
        if let Ok(case) = Case::from_toml_str(RING, &overrides) {
            // Whatever validates must give a usable mesh request.
            let spec = case.generator_spec();
            prop_assert!(spec.is_ok(), "{:?}", spec);
            let spec = spec.unwrap();
            prop_assert!(spec.body.max_edge.is_finite() && spec.body.max_edge > 0.0);
        }
    }

    #[test]
    fn arbitrary_key_value_files_never_panic(
        sets in prop::collection::vec((any_key(), any_value()), 0..12)
    ) {
        let mut text = String::new();
        for (k, v) in &sets {
            text.push_str(&format!("{k} = {v}\n"));
        }
        let _ = Case::from_toml_str(&text, &[]);
    }
}

/// The polygon refusals, word for word: key, problem and fix.
#[test]
fn polygon_outlines_are_refused_word_for_word() {
    let text = RING.replace(
        "shape = \"rectangle\"\nwidth = 8.0\nthickness = 3.0\n",
        "shape = \"polygon\"\n",
    );
    let refusal = |vertices: &str| {
        let set = twistmode_io::case::parse_set_argument(&format!("section.vertices={vertices}"))
            .unwrap();
        let e = Case::from_toml_str(&text, &[set]).expect_err("should be refused");
        assert_eq!(e.key, "section.vertices");
        (e.message, e.fix)
    };
    let crossing = |i: usize, j: usize| {
        (
            format!(
                "the polygon's sides {i} and {j} cross or touch (sides counted from 0; \
                 side k joins vertices k and k+1)"
            ),
            "list the vertices in order around the outline, without repeating the first one at the end"
                .to_string(),
        )
    };
    let zero_area = (
        "the polygon has zero area".to_string(),
        "give vertices that enclose a region".to_string(),
    );
    assert_eq!(
        refusal("[[0, 0], [1, 0]]"),
        (
            "a polygon needs at least 3 vertices, got 2".to_string(),
            "list the outline's corners in order".to_string()
        )
    );
    // Collinear vertices, and a symmetric bow tie (its halves cancel).
    assert_eq!(refusal("[[0, 0], [1, 0], [2, 0]]"), zero_area);
    assert_eq!(refusal("[[0, 0], [1, 1], [1, 0], [0, 1]]"), zero_area);
    // A lopsided bow tie: sides 0 and 2 cross.
    assert_eq!(refusal("[[0, 0], [2, 2], [2, 0], [0, 1]]"), crossing(0, 2));
    // The first vertex repeated at the end: sides 2 and 0 meet at the repeat.
    assert_eq!(refusal("[[0, 0], [1, 0], [0, 1], [0, 0]]"), crossing(0, 2));
    // A spike folding back along side 1: vertex 3 lies on side 1.
    assert_eq!(
        refusal("[[0, 0], [2, 0], [2, 2], [2, 1], [0, 2]]"),
        crossing(1, 3)
    );
}
