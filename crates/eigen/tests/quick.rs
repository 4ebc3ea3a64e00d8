use twistmode_eigen::*;

#[test]
fn laplacian_quick() {
    let m = 20;
    let p = model::laplacian_2d_dirichlet(m);
    let exact = model::laplacian_2d_dirichlet_eigenvalues(m);
    let sigma = c64::new(exact[10] + 1.0, 0.0);
    let opts = SolveOptions {
        count: 10,
        ..Default::default()
    };
    let s = solve_near(&p, sigma, &opts).unwrap();
    println!("{:?} {:?}", s.status, s.stats);
    for pr in &s.pairs {
        println!("{:.10} {:.2e} {}", pr.lambda, pr.residual, pr.converged);
    }
    let mut e = exact.clone();
    e.sort_by(|a, b| (a - sigma.re).abs().total_cmp(&(b - sigma.re).abs()));
    println!("{:?}", &e[..12]);
}
