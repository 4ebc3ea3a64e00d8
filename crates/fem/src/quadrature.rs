//! Quadrature on the reference triangle `{(xi, eta): xi, eta >= 0, xi + eta <= 1}`.
//!
//! Collapsed (Duffy) Gauss-Legendre rules: the unit square `(s, t)` maps onto the
//! triangle by `xi = s`, `eta = t (1 - s)`, Jacobian `1 - s`. A product of
//! `n`-point Gauss-Legendre rules then integrates every polynomial of total
//! degree `2n - 2` exactly. All points are strictly interior, so a point never
//! falls on an edge (in particular never on the axis `r = 0` of a body of
//! revolution, where the equivalent medium is singular).

/// Nodes and weights of the `n`-point Gauss-Legendre rule on `[0, 1]`.
///
/// Newton iteration on the three-term Legendre recurrence, started from the
/// usual cosine estimate of the roots (common practice; Abramowitz & Stegun 25.4.29).
pub fn gauss_legendre_unit(n: usize) -> (Vec<f64>, Vec<f64>) {
    assert!(n >= 1, "a Gauss-Legendre rule needs at least one point");
    let mut nodes = vec![0.0; n];
    let mut weights = vec![0.0; n];
    for i in 0..n.div_ceil(2) {
        let mut x = (std::f64::consts::PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
        let mut derivative = 1.0;
        for _ in 0..100 {
            // P_n(x) and P_n'(x) by the recurrence.
            let (mut p0, mut p1) = (1.0, x);
            for k in 2..=n {
                let p2 = ((2 * k - 1) as f64 * x * p1 - (k - 1) as f64 * p0) / k as f64;
                p0 = p1;
                p1 = p2;
            }
            let pn = if n == 1 { x } else { p1 };
            let pn1 = if n == 1 { 1.0 } else { p0 };
            derivative = n as f64 * (x * pn - pn1) / (x * x - 1.0);
            let dx = pn / derivative;
            x -= dx;
            if dx.abs() < 1e-16 {
                break;
            }
        }
        let w = 2.0 / ((1.0 - x * x) * derivative * derivative);
        // Map [-1, 1] -> [0, 1].
        nodes[i] = 0.5 * (1.0 - x);
        nodes[n - 1 - i] = 0.5 * (1.0 + x);
        weights[i] = 0.5 * w;
        weights[n - 1 - i] = 0.5 * w;
    }
    (nodes, weights)
}

/// A quadrature rule on the reference triangle (weights sum to its area, 1/2).
#[derive(Clone, Debug, PartialEq)]
pub struct TriangleRule {
    /// Points `(xi, eta)`, all strictly inside the triangle.
    pub points: Vec<[f64; 2]>,
    /// Weights, one per point.
    pub weights: Vec<f64>,
    /// Largest total polynomial degree integrated exactly.
    pub degree: usize,
}

impl TriangleRule {
    /// The collapsed Gauss-Legendre rule exact for total degree `degree`
    /// (uses `ceil((degree + 2) / 2)` points per direction).
    pub fn collapsed_gauss(degree: usize) -> TriangleRule {
        let n = (degree + 3) / 2;
        let (x, wx) = gauss_legendre_unit(n);
        let mut points = Vec::with_capacity(n * n);
        let mut weights = Vec::with_capacity(n * n);
        for (s, ws) in x.iter().zip(&wx) {
            for (t, wt) in x.iter().zip(&wx) {
                points.push([*s, t * (1.0 - s)]);
                weights.push(ws * wt * (1.0 - s));
            }
        }
        TriangleRule {
            points,
            weights,
            degree: 2 * n - 2,
        }
    }

    /// The rule and its copy with `xi` and `eta` swapped, each at half weight: invariant
    /// under exchanging the reference vertices 1 and 2. A triangle and its mirror image
    /// numbered with those two vertices exchanged (as the generator numbers them) are then
    /// integrated at mirrored points, so integrals that are equal in exact arithmetic are
    /// equal to rounding (the collapsed rules are not symmetric: on PML integrands the
    /// two differ by about 1e-4 relative). Same degree, twice the points.
    pub fn swap_symmetrised(&self) -> TriangleRule {
        let mut points = self.points.clone();
        let mut weights: Vec<f64> = self.weights.iter().map(|w| 0.5 * w).collect();
        points.extend(self.points.iter().map(|p| [p[1], p[0]]));
        weights.extend(self.weights.iter().map(|w| 0.5 * w));
        TriangleRule {
            points,
            weights,
            degree: self.degree,
        }
    }

    /// Number of points.
    pub fn len(&self) -> usize {
        self.points.len()
    }

    /// True when the rule has no points (never for rules built here).
    pub fn is_empty(&self) -> bool {
        self.points.is_empty()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Exact integral of xi^a eta^b over the reference triangle: a! b! / (a + b + 2)!.
    /// Source: the Dirichlet (beta) integral, common practice.
    fn exact_monomial(a: u32, b: u32) -> f64 {
        let fact = |k: u32| (1..=k).map(f64::from).product::<f64>();
        fact(a) * fact(b) / fact(a + b + 2)
    }

    #[test]
    fn collapsed_rules_integrate_monomials_exactly_up_to_their_degree() {
        for degree in 0..=12usize {
            let rule = TriangleRule::collapsed_gauss(degree);
            assert!(rule.degree >= degree);
            for a in 0..=degree as u32 {
                for b in 0..=(degree as u32 - a) {
                    let q: f64 = rule
                        .points
                        .iter()
                        .zip(&rule.weights)
                        .map(|(p, w)| w * p[0].powi(a as i32) * p[1].powi(b as i32))
                        .sum();
                    let e = exact_monomial(a, b);
                    assert!(
                        (q - e).abs() <= 1e-14 * e.max(1e-3),
                        "degree {degree}: xi^{a} eta^{b}: {q} vs {e}"
                    );
                }
            }
        }
    }

    #[test]
    fn rule_points_are_strictly_interior() {
        let rule = TriangleRule::collapsed_gauss(10);
        for p in &rule.points {
            assert!(p[0] > 0.0 && p[1] > 0.0 && p[0] + p[1] < 1.0);
        }
    }

    #[test]
    fn gauss_legendre_matches_the_two_point_rule() {
        // Source: Abramowitz & Stegun Table 25.4 (from memory): +-1/sqrt(3), weights 1 on [-1, 1].
        let (x, w) = gauss_legendre_unit(2);
        let r = 0.5 / 3f64.sqrt();
        assert!((x[0] - (0.5 - r)).abs() < 1e-15 && (x[1] - (0.5 + r)).abs() < 1e-15);
        assert!((w[0] - 0.5).abs() < 1e-15 && (w[1] - 0.5).abs() < 1e-15);
    }
}
