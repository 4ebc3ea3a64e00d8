//! Curves of the section (straight pieces and elliptic arcs), their crossings
//! with the clip lines `x_k = 0`, and their discretisation into segments whose
//! lengths follow a sizing function and the local curvature.

use crate::MeshError;

/// A point `(u, v)` in the working frame, metres.
pub(crate) type P2 = [f64; 2];

/// Largest angle a curved segment may subtend (radians): keeps mid-side nodes
/// close to the chord so that quadratic triangles stay valid.
pub(crate) const MAX_TURN: f64 = std::f64::consts::PI / 6.0;

/// Upper bound on segments per curve piece (guards against absurd sizes).
const MAX_SEGMENTS_PER_PIECE: f64 = 2.0e5;

/// One piece of a closed outline, parametrised by `s` in `[0, 1]`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) enum Piece {
    /// Straight segment from `a` to `b`.
    Line { a: P2, b: P2 },
    /// Elliptic arc `c + (ax cos t, ay sin t)`, `t` running from `t0` to `t1`.
    Arc {
        c: P2,
        ax: f64,
        ay: f64,
        t0: f64,
        t1: f64,
    },
}

impl Piece {
    /// Point at parameter `s`.
    pub(crate) fn point(&self, s: f64) -> P2 {
        match *self {
            Piece::Line { a, b } => [a[0] + s * (b[0] - a[0]), a[1] + s * (b[1] - a[1])],
            Piece::Arc { c, ax, ay, t0, t1 } => {
                let t = t0 + s * (t1 - t0);
                [c[0] + ax * t.cos(), c[1] + ay * t.sin()]
            }
        }
    }

    /// Whether the piece is curved (its mid-side nodes leave the chord).
    pub(crate) fn is_curved(&self) -> bool {
        matches!(self, Piece::Arc { .. })
    }

    /// `|dx/ds|`.
    fn speed(&self, s: f64) -> f64 {
        match *self {
            Piece::Line { a, b } => (b[0] - a[0]).hypot(b[1] - a[1]),
            Piece::Arc { ax, ay, t0, t1, .. } => {
                let t = t0 + s * (t1 - t0);
                (ax * t.sin()).hypot(ay * t.cos()) * (t1 - t0).abs()
            }
        }
    }

    /// Curvature (1/m) at `s`.
    fn curvature(&self, s: f64) -> f64 {
        match *self {
            Piece::Line { .. } => 0.0,
            Piece::Arc { ax, ay, t0, t1, .. } => {
                let t = t0 + s * (t1 - t0);
                let d = (ax * t.sin()).hypot(ay * t.cos());
                ax * ay / (d * d * d)
            }
        }
    }

    /// Parameters strictly inside `(0, 1)` where coordinate `k` vanishes
    /// and the piece crosses or touches the line `x_k = 0`.
    pub(crate) fn crossings(&self, k: usize) -> Vec<f64> {
        const EDGE: f64 = 1e-9;
        let mut out = Vec::new();
        match *self {
            Piece::Line { a, b } => {
                if (a[k] < 0.0 && b[k] > 0.0) || (a[k] > 0.0 && b[k] < 0.0) {
                    let s = a[k] / (a[k] - b[k]);
                    if s > EDGE && s < 1.0 - EDGE {
                        out.push(s);
                    }
                }
            }
            Piece::Arc { c, ax, ay, t0, t1 } => {
                let tau = std::f64::consts::TAU;
                let (q, bases) = if k == 0 {
                    let q = -c[0] / ax;
                    (q, [q.clamp(-1.0, 1.0).acos(), -q.clamp(-1.0, 1.0).acos()])
                } else {
                    let q = -c[1] / ay;
                    let b = q.clamp(-1.0, 1.0).asin();
                    (q, [b, std::f64::consts::PI - b])
                };
                if q.abs() > 1.0 {
                    return out;
                }
                let (lo, hi) = (t0.min(t1), t0.max(t1));
                for base in bases {
                    let mut m = ((lo - base) / tau).floor() - 1.0;
                    while base + m * tau <= hi + tau {
                        let t = base + m * tau;
                        let s = (t - t0) / (t1 - t0);
                        if s > EDGE
                            && s < 1.0 - EDGE
                            && !out.iter().any(|&o: &f64| (o - s).abs() < EDGE)
                        {
                            out.push(s);
                        }
                        m += 1.0;
                    }
                }
                out.sort_by(f64::total_cmp);
            }
        }
        out
    }

    /// Discretises `[s0, s1]` into segments no longer than the local size
    /// (and, on curves, turning at most [`MAX_TURN`] each); returns the
    /// parameters of the nodes, both ends included.
    pub(crate) fn discretise(
        &self,
        s0: f64,
        s1: f64,
        size: &dyn Fn(P2) -> f64,
        max_turn: f64,
    ) -> Result<Vec<f64>, MeshError> {
        const SAMPLES: usize = 200;
        let ds = (s1 - s0) / SAMPLES as f64;
        let density = |s: f64| {
            let mut h = size(self.point(s));
            if self.is_curved() {
                h = h.min(max_turn / self.curvature(s));
            }
            self.speed(s) / h
        };
        let mut cum = Vec::with_capacity(SAMPLES + 1);
        cum.push(0.0);
        let mut prev = density(s0);
        for i in 1..=SAMPLES {
            let d = density(s0 + i as f64 * ds);
            let last = cum[i - 1];
            cum.push(last + 0.5 * (prev + d) * ds);
            prev = d;
        }
        let total = cum[SAMPLES];
        if !total.is_finite() || total > MAX_SEGMENTS_PER_PIECE {
            return Err(MeshError::Geometry {
                field: "max_edge".into(),
                reason: format!(
                    "a boundary curve would need {total:.3e} segments; use a larger max_edge"
                ),
            });
        }
        let n_min = if self.is_curved() { 2 } else { 1 };
        let n = ((total - 1e-9).ceil() as usize).max(n_min);
        let mut out = Vec::with_capacity(n + 1);
        out.push(s0);
        let mut i = 0;
        for j in 1..n {
            let target = total * j as f64 / n as f64;
            while cum[i + 1] < target {
                i += 1;
            }
            let w = (target - cum[i]) / (cum[i + 1] - cum[i]);
            out.push(s0 + (i as f64 + w) * ds);
        }
        out.push(s1);
        Ok(out)
    }
}

/// One boundary or interface segment of the discretised geometry.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Seg {
    /// First end.
    pub a: P2,
    /// Second end.
    pub b: P2,
    /// Mid-side node: on the true curve for curved pieces, the chord midpoint otherwise.
    pub mid: P2,
    /// Whether `mid` lies off the chord (on a curve).
    pub curved: bool,
    /// Index of the clip line this segment lies on, if any.
    pub line: Option<usize>,
}

impl Seg {
    /// A straight segment (mid-side node at the chord midpoint).
    pub(crate) fn straight(a: P2, b: P2, line: Option<usize>) -> Seg {
        Seg {
            a,
            b,
            mid: [0.5 * (a[0] + b[0]), 0.5 * (a[1] + b[1])],
            curved: false,
            line,
        }
    }
}

/// Discretises a closed outline (pieces joined end to end). Nodes where
/// the outline crosses a clip line `x_k = 0` (`k` in `clip_axes`) are
/// inserted and snapped exactly onto the line; nodes within `snap_tol` of
/// a clip line are snapped too.
pub(crate) fn discretise_loop(
    pieces: &[Piece],
    clip_axes: &[usize],
    size: &dyn Fn(P2) -> f64,
    max_turn: f64,
    snap_tol: f64,
) -> Result<Vec<Seg>, MeshError> {
    // (point, mid of the segment that starts here, curved)
    let mut nodes: Vec<(P2, P2, bool)> = Vec::new();
    for piece in pieces {
        let mut breaks = vec![0.0];
        for &k in clip_axes {
            breaks.extend(piece.crossings(k));
        }
        breaks.push(1.0);
        breaks.sort_by(f64::total_cmp);
        breaks.dedup();
        let mut params = Vec::new();
        for w in breaks.windows(2) {
            let sub = piece.discretise(w[0], w[1], size, max_turn)?;
            if params.is_empty() {
                params.extend(sub);
            } else {
                params.extend(sub.into_iter().skip(1));
            }
        }
        let crossing = |s: f64| breaks[1..breaks.len() - 1].contains(&s);
        for w in params.windows(2) {
            let mut p = piece.point(w[0]);
            if crossing(w[0]) {
                for &k in clip_axes {
                    if p[k].abs() <= snap_tol.max(1e-9 * p[1 - k].abs()) {
                        p[k] = 0.0;
                    }
                }
            }
            let mid = if piece.is_curved() {
                piece.point(0.5 * (w[0] + w[1]))
            } else {
                [f64::NAN; 2]
            };
            nodes.push((p, mid, piece.is_curved()));
        }
    }
    for (p, _, _) in nodes.iter_mut() {
        for &k in clip_axes {
            if p[k].abs() <= snap_tol {
                p[k] = 0.0;
            }
        }
    }
    let n = nodes.len();
    let mut segs = Vec::with_capacity(n);
    for i in 0..n {
        let (a, mid, curved) = nodes[i];
        let b = nodes[(i + 1) % n].0;
        if a == b {
            continue;
        }
        let mut s = Seg::straight(a, b, None);
        if curved {
            s.mid = mid;
            s.curved = true;
        }
        segs.push(s);
    }
    Ok(segs)
}

/// Dense samples of an outline, for extents (circumradius, farthest point).
pub(crate) fn sample_outline(pieces: &[Piece], per_piece: usize) -> Vec<P2> {
    let mut out = Vec::new();
    for p in pieces {
        for i in 0..=per_piece {
            out.push(p.point(i as f64 / per_piece as f64));
        }
    }
    out
}

/// Distance from `x` to the segment `a-b`.
pub(crate) fn point_segment_distance(x: P2, a: P2, b: P2) -> f64 {
    let d = [b[0] - a[0], b[1] - a[1]];
    let l2 = d[0] * d[0] + d[1] * d[1];
    let t = if l2 > 0.0 {
        (((x[0] - a[0]) * d[0] + (x[1] - a[1]) * d[1]) / l2).clamp(0.0, 1.0)
    } else {
        0.0
    };
    (x[0] - a[0] - t * d[0]).hypot(x[1] - a[1] - t * d[1])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn circle_crossings_are_found_analytically() {
        // A circle of radius 2 centred at (1, 0) crosses u = 0 at t = +-2pi/3
        // (cos t = -1/2; exact trigonometry).
        let arc = Piece::Arc {
            c: [1.0, 0.0],
            ax: 2.0,
            ay: 2.0,
            t0: 0.0,
            t1: std::f64::consts::TAU,
        };
        let s = arc.crossings(0);
        assert_eq!(s.len(), 2);
        assert!((s[0] - 1.0 / 3.0).abs() < 1e-14);
        assert!((s[1] - 2.0 / 3.0).abs() < 1e-14);
        for si in s {
            assert!(arc.point(si)[0].abs() < 1e-14);
        }
    }

    #[test]
    fn discretisation_respects_size_and_turn() {
        let arc = Piece::Arc {
            c: [0.0, 0.0],
            ax: 1.0,
            ay: 1.0,
            t0: 0.0,
            t1: std::f64::consts::PI,
        };
        // size 10: the turn limit pi/6 governs -> 6 segments over a half circle.
        let s = arc.discretise(0.0, 1.0, &|_| 10.0, MAX_TURN).unwrap();
        assert_eq!(s.len(), 7);
        // size 0.1: ceil(pi / 0.1) = 32 segments.
        let s = arc.discretise(0.0, 1.0, &|_| 0.1, MAX_TURN).unwrap();
        assert_eq!(s.len(), 33);
        let line = Piece::Line {
            a: [0.0, 0.0],
            b: [1.0, 0.0],
        };
        let s = line.discretise(0.0, 1.0, &|_| 0.3, MAX_TURN).unwrap();
        assert_eq!(s.len(), 5);
        assert!((s[1] - 0.25).abs() < 1e-12);
    }
}
