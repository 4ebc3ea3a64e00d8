//! End-to-end tests of the `twistmode` binary in a temporary folder.
use std::path::Path;
use std::process::Command;

fn twistmode(dir: &Path, args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_twistmode"))
        .current_dir(dir)
        .args(args)
        .output()
        .expect("the binary runs")
}

fn is_png(path: &Path) -> bool {
    std::fs::read(path)
        .map(|b| b.starts_with(&[0x89, b'P', b'N', b'G', 0x0D, 0x0A, 0x1A, 0x0A]))
        .unwrap_or(false)
}

/// A closed metal cylinder cavity, radius 10 mm, length 10 mm, as a body of
/// revolution: the section [0, 10] x [-5, 5] mm touches the axis.
const CYLINDER: &str = r#"
[units]
length = "mm"
[body]
kind = "revolution"
[section]
shape = "rectangle"
width = 10.0
thickness = 10.0
centre = [5.0, 0.0]
material = "fill"
[materials.fill]
epsilon = 1.0
[surroundings]
kind = "metal"
[mesh]
order = 2
resolution = 16
[search]
m = 0
near_frequency = "11 GHz"
count = 1
"#;

#[test]
fn solve_json_reproduces_the_tm010_cavity_resonance() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("cyl.toml"), CYLINDER).unwrap();
    let out = twistmode(
        dir.path(),
        &["solve", "cyl.toml", "--json", "--no-plots", "--out", "res"],
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(doc["schema"], "twistmode-modes/1");
    let modes = doc["modes"].as_array().unwrap();
    assert_eq!(modes.len(), 1);
    let mode = &modes[0];
    // Source: Pozar, Microwave Engineering, sec. 6.3: TM010 of a cylinder of
    // radius a resonates at f = c x01 / (2 pi a), x01 = 2.404825557695773 the
    // first zero of J0 (Abramowitz & Stegun table 9.5; value from memory).
    let exact = 299_792_458.0 * 2.404825557695773 / (2.0 * std::f64::consts::PI * 0.01);
    let f = mode["frequency_hz"][0].as_f64().unwrap();
    assert!((f - exact).abs() / exact < 2e-5, "f = {f}, exact {exact}");
    assert!(mode["q"].is_null(), "a lossless cavity has infinite Q");
    assert!(mode["residual"].as_f64().unwrap() < 1e-8);
    assert_eq!(mode["m"].as_f64(), Some(0.0));
    assert!((mode["confinement"].as_f64().unwrap() - 1.0).abs() < 1e-9);
    for name in ["modes.json", "modes.csv", "mesh.msh", "fields.vtu"] {
        assert!(dir.path().join("res").join(name).is_file(), "{name}");
    }
    // The written mesh reads back.
    let mesh = twistmode::mesh::read_gmsh(dir.path().join("res/mesh.msh")).unwrap();
    assert!(mesh.triangles().len() > 10);
}

#[test]
fn overrides_and_bad_keys() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("cyl.toml"), CYLINDER).unwrap();
    // A misspelt key is refused with the key named and a fix.
    let out = twistmode(
        dir.path(),
        &[
            "solve",
            "cyl.toml",
            "--set",
            "section.widht=3",
            "--out",
            "res",
        ],
    );
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("section.widht") && err.contains("width"),
        "{err}"
    );
    // A negative size is refused.
    let out = twistmode(
        dir.path(),
        &[
            "mesh",
            "cyl.toml",
            "--set",
            "section.width=-1",
            "--out",
            "res",
        ],
    );
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("section.width"));
    // --set m=1 finds TE111: f = c / (2 pi) sqrt((x'11 / a)^2 + (pi / d)^2),
    // x'11 = 1.841183781340659 (Pozar sec. 6.3; A&S table 9.5, from memory).
    let out = twistmode(
        dir.path(),
        &[
            "solve",
            "cyl.toml",
            "--set",
            "search.m=1",
            "--set",
            "search.near_frequency=\"14 GHz\"",
            "--json",
            "--no-plots",
            "--out",
            "res",
        ],
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let f = doc["modes"][0]["frequency_hz"][0].as_f64().unwrap();
    let k = ((1.841183781340659f64 / 0.01).powi(2) + (std::f64::consts::PI / 0.01).powi(2)).sqrt();
    let exact = 299_792_458.0 * k / (2.0 * std::f64::consts::PI);
    assert!((f - exact).abs() / exact < 2e-5, "f = {f}, exact {exact}");
}

#[test]
fn mesh_command_on_three_shapes() {
    let dir = tempfile::tempdir().unwrap();
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    for (i, case) in [
        "examples/ceramic-ribbon-ring.toml",
        "examples/glass-sphere.toml",
        "examples/hexagonal-rod-guide.toml",
    ]
    .iter()
    .enumerate()
    {
        let out_dir = format!("m{i}");
        let out = twistmode(
            dir.path(),
            &["mesh", root.join(case).to_str().unwrap(), "--out", &out_dir],
        );
        assert!(
            out.status.success(),
            "{case}: {}",
            String::from_utf8_lossy(&out.stderr)
        );
        let d = dir.path().join(&out_dir);
        assert!(is_png(&d.join("mesh.png")), "{case}");
        let mesh = twistmode::mesh::read_gmsh(d.join("mesh.msh")).unwrap();
        assert!(mesh.quality().min_angle_deg > 15.0, "{case}");
    }
}

#[test]
fn demo_writes_table_json_and_pictures() {
    let dir = tempfile::tempdir().unwrap();
    // A coarser mesh than the built-in one keeps the test short.
    let out = twistmode(
        dir.path(),
        &[
            "demo",
            "--out",
            "d",
            "--set",
            "mesh.resolution=5",
            "--set",
            "search.count=2",
        ],
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("Re f (GHz)"), "{text}");
    let d = dir.path().join("d");
    let doc: serde_json::Value =
        serde_json::from_slice(&std::fs::read(d.join("modes.json")).unwrap()).unwrap();
    let modes = doc["modes"].as_array().unwrap();
    assert!(!modes.is_empty());
    for m in modes {
        // Near the 7 GHz target, confined in the ceramic, converged.
        let f = m["frequency_hz"][0].as_f64().unwrap();
        assert!(f > 5e9 && f < 10e9, "{f}");
        assert!(m["residual"].as_f64().unwrap() < 1e-8);
        assert!(m["confinement"].as_f64().unwrap() > 0.5);
    }
    assert!(is_png(&d.join("mesh.png")));
    assert!(is_png(&d.join("mode_00_E2.png")));
}

#[test]
fn sweep_follows_a_family_and_resumes() {
    let dir = tempfile::tempdir().unwrap();
    let case = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/demo_ribbon_ring.toml");
    let args = [
        "sweep",
        case.to_str().unwrap(),
        "--set",
        "mesh.resolution=4",
        "--set",
        "search.count=1",
        "--vary",
        "search.m",
        "--from",
        "17",
        "--to",
        "19",
        "--out",
        "sw",
    ];
    let out = twistmode(dir.path(), &args);
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let doc: serde_json::Value =
        serde_json::from_slice(&std::fs::read(dir.path().join("sw/families.json")).unwrap())
            .unwrap();
    assert_eq!(doc["solved"], 3);
    let fam = &doc["families"][0];
    let members = fam["members"].as_array().unwrap();
    assert_eq!(members.len(), 3);
    // Resonances of one family rise with m; FSR = f(m+1) - f(m) > 0 and the
    // group index c / (2 pi R FSR) (common practice) exceeds 1.
    let ranges = fam["ranges"].as_array().unwrap();
    assert_eq!(ranges.len(), 2);
    for r in ranges {
        assert!(r["fsr_hz"].as_f64().unwrap() > 0.0);
        assert!(r["group_index"].as_f64().unwrap() > 1.0);
    }
    assert!(is_png(&dir.path().join("sw/families.png")));
    // Run again: every point is loaded, none solved.
    let out = twistmode(dir.path(), &args);
    assert!(out.status.success());
    let doc: serde_json::Value =
        serde_json::from_slice(&std::fs::read(dir.path().join("sw/families.json")).unwrap())
            .unwrap();
    assert_eq!(doc["solved"], 0);
    assert_eq!(doc["resumed"], 3);
}

/// Solving a generated mesh and the same mesh read back from its Gmsh file
/// (PML taken from the file's `pml` region) gives the same resonances: the
/// MSH writer, reader and PML inference lose nothing.
#[test]
fn gmsh_round_trip_solves_the_same() {
    let dir = tempfile::tempdir().unwrap();
    let case = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/glass-sphere.toml");
    let run = |args: &[&str]| {
        let out = twistmode(dir.path(), args);
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
        let doc: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
        doc["modes"]
            .as_array()
            .unwrap()
            .iter()
            .map(|m| (m["k0"][0].as_f64().unwrap(), m["k0"][1].as_f64().unwrap()))
            .collect::<Vec<_>>()
    };
    let generated = run(&[
        "solve",
        case.to_str().unwrap(),
        "--set",
        "mesh.resolution=5",
        "--set",
        "search.count=3",
        "--json",
        "--no-plots",
        "--out",
        "a",
    ]);
    std::fs::write(
        dir.path().join("imported.toml"),
        r#"
[units]
length = "m"
[body]
kind = "revolution"
[section]
shape = "gmsh"
file = "a/mesh.msh"
[materials.clearglass-15]
epsilon = 2.25
[surroundings]
kind = "open"
[search]
m = 10
near_wavelength = "1.55 um"
count = 3
"#,
    )
    .unwrap();
    let imported = run(&[
        "solve",
        "imported.toml",
        "--json",
        "--no-plots",
        "--out",
        "b",
    ]);
    assert_eq!(generated.len(), imported.len());
    for (a, b) in generated.iter().zip(&imported) {
        assert!((a.0 - b.0).abs() < 1e-9 * a.0, "{a:?} vs {b:?}");
        assert!((a.1 - b.1).abs() < 1e-6 * a.0, "{a:?} vs {b:?}");
    }
}
