//! Small complex 3x3 tensors (row-major `[[c64; 3]; 3]`) and their algebra.
use num_complex::Complex64 as c64;

/// A complex 3x3 matrix, row-major: `t[row][col]`.
pub type Tensor3 = [[c64; 3]; 3];

/// The zero tensor.
pub const ZERO3: Tensor3 = [[c64::new(0.0, 0.0); 3]; 3];

/// `s * I`.
pub fn scalar3(s: c64) -> Tensor3 {
    let mut t = ZERO3;
    for (i, row) in t.iter_mut().enumerate() {
        row[i] = s;
    }
    t
}

/// Diagonal tensor.
pub fn diag3(d: [c64; 3]) -> Tensor3 {
    let mut t = ZERO3;
    for i in 0..3 {
        t[i][i] = d[i];
    }
    t
}

/// Matrix product `a b`.
pub fn mul3(a: &Tensor3, b: &Tensor3) -> Tensor3 {
    let mut c = ZERO3;
    for i in 0..3 {
        for j in 0..3 {
            c[i][j] = a[i][0] * b[0][j] + a[i][1] * b[1][j] + a[i][2] * b[2][j];
        }
    }
    c
}

/// Plain (non-conjugating) transpose.
pub fn transpose3(a: &Tensor3) -> Tensor3 {
    let mut t = ZERO3;
    for i in 0..3 {
        for j in 0..3 {
            t[i][j] = a[j][i];
        }
    }
    t
}

/// Determinant.
pub fn det3(a: &Tensor3) -> c64 {
    a[0][0] * (a[1][1] * a[2][2] - a[1][2] * a[2][1])
        - a[0][1] * (a[1][0] * a[2][2] - a[1][2] * a[2][0])
        + a[0][2] * (a[1][0] * a[2][1] - a[1][1] * a[2][0])
}

/// Inverse by the adjugate; `None` when the determinant vanishes
/// (relative to the largest entry cubed).
pub fn inverse3(a: &Tensor3) -> Option<Tensor3> {
    let d = det3(a);
    let scale = a.iter().flatten().map(|x| x.norm()).fold(0.0, f64::max);
    if !(d.norm() > 1e-300 && d.norm() > 1e-14 * scale.powi(3)) {
        return None;
    }
    let mut inv = ZERO3;
    for i in 0..3 {
        for j in 0..3 {
            // Cofactor of a[j][i].
            let (r0, r1) = ((j + 1) % 3, (j + 2) % 3);
            let (c0, c1) = ((i + 1) % 3, (i + 2) % 3);
            inv[i][j] = (a[r0][c0] * a[r1][c1] - a[r0][c1] * a[r1][c0]) / d;
        }
    }
    Some(inv)
}

/// Scales every entry.
pub fn scale3(a: &Tensor3, s: c64) -> Tensor3 {
    let mut t = *a;
    t.iter_mut().flatten().for_each(|x| *x *= s);
    t
}

/// Matrix-vector product `a x`.
#[inline]
pub fn apply3(a: &Tensor3, x: &[c64; 3]) -> [c64; 3] {
    [
        a[0][0] * x[0] + a[0][1] * x[1] + a[0][2] * x[2],
        a[1][0] * x[0] + a[1][1] * x[1] + a[1][2] * x[2],
        a[2][0] * x[0] + a[2][1] * x[1] + a[2][2] * x[2],
    ]
}

/// Largest entry-wise distance between two tensors.
pub fn max_abs_diff3(a: &Tensor3, b: &Tensor3) -> f64 {
    let mut m: f64 = 0.0;
    for i in 0..3 {
        for j in 0..3 {
            m = m.max((a[i][j] - b[i][j]).norm());
        }
    }
    m
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn inverse_times_matrix_is_identity() {
        let a: Tensor3 = [
            [c64::new(2.0, 0.1), c64::new(0.3, 0.0), c64::new(-1.0, 0.2)],
            [c64::new(0.0, 1.0), c64::new(1.5, 0.0), c64::new(0.4, 0.0)],
            [c64::new(0.7, 0.0), c64::new(-0.2, 0.3), c64::new(3.0, 0.0)],
        ];
        let inv = inverse3(&a).unwrap();
        let id = mul3(&a, &inv);
        assert!(max_abs_diff3(&id, &scalar3(c64::new(1.0, 0.0))) < 1e-14);
        assert!(inverse3(&ZERO3).is_none());
    }
}
