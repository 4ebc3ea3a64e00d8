//! Twisting a circular section changes nothing physical: the twisted-torus spectrum
//! against the untwisted ring on the same mesh, per sector and window width.
//!
//! `cargo run --release -p twistmode-pipeline --example twisted_torus -- CASE HALF_TURNS M`
use twistmode_eigen::{c64, solve_near, Pencil, SolveOptions};
use twistmode_fem::{HarmonicWindow, Placement, SectionProblem, TwistedRing};
use twistmode_io::case::Case;
use twistmode_pipeline::{build_mesh, set_up};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let args: Vec<String> = std::env::args().collect();
    let half_turns: f64 = args[2].parse()?;
    let m: f64 = args[3].parse()?;
    let case = Case::load(std::path::Path::new(&args[1]), &[])?;
    let (mesh, _) = build_mesh(&case)?;
    let setup = set_up(&case, &mesh)?;
    let k0 = case.search.k0();
    let sigma = c64::new(k0 * k0, 0.0);
    let opts = SolveOptions {
        count: 6,
        tol: 1e-9,
        static_below: 1e-6 * k0 * k0,
        ..Default::default()
    };
    // Untwisted orders m + j/2 on the same mesh.
    let mut flat = setup.clone();
    let Placement::Ring { radius, .. } = setup.placement else {
        panic!()
    };
    flat.placement = Placement::Ring {
        radius,
        half_turns: 0.0,
    };
    let problem = SectionProblem::try_new(&mesh, flat)?;
    let parts2d = problem.assemble_parts()?;
    for j in -2..=2 {
        let order = m + 0.5 * f64::from(j);
        let sys = parts2d.system(&problem, order)?;
        let (k, mm) = sys.symmetric_form();
        let s = solve_near(&Pencil::try_new(k, mm)?, sigma, &opts)?;
        let f: Vec<String> = s
            .pairs
            .iter()
            .map(|p| format!("{:.7}", p.lambda.sqrt().re))
            .collect();
        println!("untwisted m = {order}: k0 {}", f.join(" "));
    }
    let ring = TwistedRing::try_new(&mesh, setup)?;
    let parts = ring.assemble_parts(12)?;
    for k in [2u32, 3, 4, 5, 6] {
        for s in [1.0, -1.0] {
            let window = HarmonicWindow {
                centre: m,
                tau: ring.tau(),
                half_width: k,
            };
            let sys = ring.block_system(&parts, window, Some(s), 0.0)?;
            let sp = solve_near(
                &Pencil::try_new(sys.stiffness.clone(), sys.mass.clone())?,
                sigma,
                &opts,
            )?;
            let f: Vec<String> = sp
                .pairs
                .iter()
                .map(|p| format!("{:.7}", p.lambda.sqrt().re))
                .collect();
            println!("K {k} sector {s:+}: k0 {}", f.join(" "));
        }
    }
    Ok(())
}
