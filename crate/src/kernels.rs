//! Induced-potential and induced-velocity kernels of 2D panels and vortex blobs.
//!
//! All functions are pure. Points and panel end points are `[x, y]` in metres. A panel runs from
//! `a` to `b`; its local frame has x along `b - a` and y to the left of it (the outward normal for
//! the clockwise node order used on foils, see [`crate::conventions`]).

use crate::detmath::DetMath;
use std::f64::consts::PI;

const INV_2PI: f64 = 0.5 / PI;

/// Signed angle subtended at `p` by the segment from `a` to `b`, in (-pi, pi]:
/// the angle turned from `p - a` to `p - b`, counter-clockwise positive.
#[inline]
pub fn subtended_angle(a: [f64; 2], b: [f64; 2], p: [f64; 2]) -> f64 {
    let r1 = [p[0] - a[0], p[1] - a[1]];
    let r2 = [p[0] - b[0], p[1] - b[1]];
    let cross = r1[0] * r2[1] - r1[1] * r2[0];
    let dot = r1[0] * r2[0] + r1[1] * r2[1];
    cross.datan2(dot)
}

/// Potential at `p` of a constant-strength doublet panel of unit strength from `a` to `b`:
/// `(theta_b - theta_a) / (2 pi)`. It jumps by +1 from the right side of the panel to the left
/// side, and its velocity is that of a unit counter-clockwise point vortex at `b` and a unit
/// clockwise one at `a` (Katz & Plotkin 2001, section 10.4).
#[inline]
pub fn doublet_potential(a: [f64; 2], b: [f64; 2], p: [f64; 2]) -> f64 {
    INV_2PI * subtended_angle(a, b, p)
}

/// Potential at `p` of a constant-strength source panel of unit strength (outflow per unit
/// length) from `a` to `b`: `(1 / 2 pi) * integral of ln r ds` (Katz & Plotkin 2001, eq. 10.70,
/// keeping the constant `-2 l` term of the exact integral).
#[inline]
pub fn source_potential(a: [f64; 2], b: [f64; 2], p: [f64; 2]) -> f64 {
    let dx = b[0] - a[0];
    let dy = b[1] - a[1];
    let l = (dx * dx + dy * dy).sqrt();
    let t = [dx / l, dy / l];
    let rx = p[0] - a[0];
    let ry = p[1] - a[1];
    let x = rx * t[0] + ry * t[1];
    let y = -rx * t[1] + ry * t[0];
    let r1sq = x * x + y * y;
    let r2sq = (x - l) * (x - l) + y * y;
    let mut acc = -2.0 * l;
    if r1sq > 0.0 {
        acc += x * r1sq.dln();
    }
    if r2sq > 0.0 {
        acc -= (x - l) * r2sq.dln();
    }
    if y != 0.0 {
        acc += 2.0 * y * subtended_angle(a, b, p);
    }
    0.25 / PI * acc
}

/// Potential of a unit source panel at its own midpoint: `(l / 2 pi) (ln(l / 2) - 1)`.
#[inline]
pub fn source_self_potential(l: f64) -> f64 {
    l * INV_2PI * ((0.5 * l).dln() - 1.0)
}

/// Velocity at `p` induced by a constant-strength source panel of unit strength from `a` to `b`
/// (Katz & Plotkin 2001, eq. 10.72-10.73). Points on the panel line at its end points are singular.
#[inline]
pub fn source_velocity(a: [f64; 2], b: [f64; 2], p: [f64; 2]) -> [f64; 2] {
    let dx = b[0] - a[0];
    let dy = b[1] - a[1];
    let l = (dx * dx + dy * dy).sqrt();
    let t = [dx / l, dy / l];
    let r1sq = (p[0] - a[0]).powi(2) + (p[1] - a[1]).powi(2);
    let r2sq = (p[0] - b[0]).powi(2) + (p[1] - b[1]).powi(2);
    let ul = 0.25 / PI * (r1sq / r2sq).dln();
    let vl = INV_2PI * subtended_angle(a, b, p);
    [ul * t[0] - vl * t[1], ul * t[1] + vl * t[0]]
}

/// Velocity at `p` of a point source of strength `q` (m^2/s) at `c`, regularised with core
/// radius `delta` (m) like the vortex blob.
#[inline]
pub fn point_source_velocity(c: [f64; 2], q: f64, delta_sq: f64, p: [f64; 2]) -> [f64; 2] {
    let dx = p[0] - c[0];
    let dy = p[1] - c[1];
    let f = q * INV_2PI / (dx * dx + dy * dy + delta_sq);
    [f * dx, f * dy]
}

/// Velocity at `p` of a Krasny vortex blob of circulation `gamma` (m^2/s, counter-clockwise
/// positive) at `c` with squared core radius `delta_sq` (m^2):
/// `u = gamma / (2 pi) * (-(y - yc), x - xc) / (r^2 + delta^2)` (Krasny 1986).
#[inline]
pub fn blob_velocity(c: [f64; 2], gamma: f64, delta_sq: f64, p: [f64; 2]) -> [f64; 2] {
    let dx = p[0] - c[0];
    let dy = p[1] - c[1];
    let f = gamma * INV_2PI / (dx * dx + dy * dy + delta_sq);
    [-f * dy, f * dx]
}

/// Stream function at `p` of a Krasny blob of circulation `gamma` at `c` (squared core
/// `delta_sq`; 0 for a point vortex): `psi = -(gamma / 4 pi) ln(r^2 + delta^2)`, whose velocity is
/// [`blob_velocity`]. The volume flux through a segment from `a` to `b` (to the left of the
/// direction of travel) is `psi(a) - psi(b)`.
#[inline]
pub fn blob_stream_function(c: [f64; 2], gamma: f64, delta_sq: f64, p: [f64; 2]) -> f64 {
    let dx = p[0] - c[0];
    let dy = p[1] - c[1];
    -gamma * 0.25 / PI * (dx * dx + dy * dy + delta_sq).dln()
}

#[cfg(test)]
mod tests {
    use super::*;

    // Finite-difference gradient of each potential must equal its velocity kernel: a check of the
    // closed forms against each other (both are Katz & Plotkin 2001, ch. 10).
    #[test]
    fn source_velocity_is_gradient_of_potential() {
        let a = [0.1, -0.2];
        let b = [0.7, 0.15];
        for p in [[0.3, 0.5], [-0.4, -0.3], [1.5, 0.2], [0.4, -0.01]] {
            let h = 1e-6;
            let gx = (source_potential(a, b, [p[0] + h, p[1]])
                - source_potential(a, b, [p[0] - h, p[1]]))
                / (2.0 * h);
            let gy = (source_potential(a, b, [p[0], p[1] + h])
                - source_potential(a, b, [p[0], p[1] - h]))
                / (2.0 * h);
            let v = source_velocity(a, b, p);
            assert!(
                (gx - v[0]).abs() < 1e-7 && (gy - v[1]).abs() < 1e-7,
                "{p:?}: {gx} {gy} vs {v:?}"
            );
        }
    }

    #[test]
    fn doublet_panel_equals_vortex_pair() {
        let a = [0.1, -0.2];
        let b = [0.7, 0.15];
        for p in [[0.3, 0.5], [-0.4, -0.3], [1.5, 0.2]] {
            let h = 1e-6;
            let gx = (doublet_potential(a, b, [p[0] + h, p[1]])
                - doublet_potential(a, b, [p[0] - h, p[1]]))
                / (2.0 * h);
            let gy = (doublet_potential(a, b, [p[0], p[1] + h])
                - doublet_potential(a, b, [p[0], p[1] - h]))
                / (2.0 * h);
            let vb = blob_velocity(b, 1.0, 0.0, p);
            let va = blob_velocity(a, -1.0, 0.0, p);
            assert!((gx - vb[0] - va[0]).abs() < 1e-7 && (gy - vb[1] - va[1]).abs() < 1e-7);
        }
    }

    #[test]
    fn blob_velocity_derives_from_stream_function() {
        let c = [0.2, -0.1];
        for p in [[0.3, 0.5], [-0.4, -0.3], [0.21, -0.09]] {
            let h = 1e-6;
            let u = (blob_stream_function(c, 0.7, 0.01, [p[0], p[1] + h])
                - blob_stream_function(c, 0.7, 0.01, [p[0], p[1] - h]))
                / (2.0 * h);
            let v = -(blob_stream_function(c, 0.7, 0.01, [p[0] + h, p[1]])
                - blob_stream_function(c, 0.7, 0.01, [p[0] - h, p[1]]))
                / (2.0 * h);
            let w = blob_velocity(c, 0.7, 0.01, p);
            assert!((u - w[0]).abs() < 1e-7 && (v - w[1]).abs() < 1e-7);
        }
    }

    #[test]
    fn source_self_potential_matches_limit() {
        let a = [0.0, 0.0];
        let b = [0.3, 0.4];
        let mid = [0.15, 0.2];
        let near = source_potential(a, b, [mid[0] - 1e-9 * 0.8, mid[1] + 1e-9 * 0.6]);
        assert!((near - source_self_potential(0.5)).abs() < 1e-8);
    }
}
