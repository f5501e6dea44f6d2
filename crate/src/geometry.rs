//! Foil sections and polygon helpers.
//!
//! Sections are closed polygons in chord units with the leading edge at (0, 0) and the trailing
//! edge at (1, 0). Node 0 and node N are both the trailing edge; nodes run clockwise: along the
//! lower surface to the leading edge, then back along the upper surface (see [`crate::conventions`]).

use crate::detmath::DetMath;
use std::f64::consts::PI;

/// Nodes of a symmetric 4-digit section of maximum thickness `thickness` (fraction of chord) with a
/// closed trailing edge, `panels` cosine-clustered panels (`panels + 1` nodes, first = last = TE).
///
/// Half-thickness (Abbott & von Doenhoff 1959, section 6.4, with the closed-TE last coefficient
/// -0.1036 in common use): `5 t (0.2969 sqrt x - 0.1260 x - 0.3516 x^2 + 0.2843 x^3 - 0.1036 x^4)`.
pub fn symmetric_section(thickness: f64, panels: usize) -> Vec<[f64; 2]> {
    assert!(
        panels >= 4 && panels.is_multiple_of(2),
        "panels must be even and at least 4"
    );
    let half = panels / 2;
    let yt = |x: f64| {
        5.0 * thickness
            * (0.2969 * x.sqrt() - 0.1260 * x - 0.3516 * x * x + 0.2843 * x.powi(3)
                - 0.1036 * x.powi(4))
    };
    let mut nodes = Vec::with_capacity(panels + 1);
    for i in 0..=half {
        let x = 0.5 * (1.0 + (PI * i as f64 / half as f64).dcos());
        nodes.push([x, -yt(x)]);
    }
    for i in 1..=half {
        let x = 0.5 * (1.0 - (PI * i as f64 / half as f64).dcos());
        nodes.push([x, yt(x)]);
    }
    // Exact closure: the TE is one point.
    nodes[0] = [1.0, 0.0];
    nodes[panels] = [1.0, 0.0];
    nodes[half] = [0.0, 0.0];
    nodes
}

/// Twice the signed area of a closed polygon (negative for clockwise order).
pub fn signed_area2(nodes: &[[f64; 2]]) -> f64 {
    let mut s = 0.0;
    for w in nodes.windows(2) {
        s += w[0][0] * w[1][1] - w[1][0] * w[0][1];
    }
    s
}

/// True when `p` lies inside the closed polygon `nodes` (first node repeated last), by ray crossing.
pub fn inside_polygon(nodes: &[[f64; 2]], p: [f64; 2]) -> bool {
    let mut inside = false;
    for w in nodes.windows(2) {
        let (a, b) = (w[0], w[1]);
        if (a[1] > p[1]) != (b[1] > p[1]) {
            let x = a[0] + (p[1] - a[1]) / (b[1] - a[1]) * (b[0] - a[0]);
            if p[0] < x {
                inside = !inside;
            }
        }
    }
    inside
}

/// Nearest point to `p` on the segment from `a` to `b`.
fn nearest_on_segment(a: [f64; 2], b: [f64; 2], p: [f64; 2]) -> [f64; 2] {
    let d = [b[0] - a[0], b[1] - a[1]];
    let len2 = d[0] * d[0] + d[1] * d[1];
    let s = if len2 > 0.0 {
        (((p[0] - a[0]) * d[0] + (p[1] - a[1]) * d[1]) / len2).clamp(0.0, 1.0)
    } else {
        0.0
    };
    [a[0] + s * d[0], a[1] + s * d[1]]
}

/// Distance from `p` to the segment from `a` to `b`.
pub fn segment_distance(a: [f64; 2], b: [f64; 2], p: [f64; 2]) -> f64 {
    let q = nearest_on_segment(a, b, p);
    ((p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2)).sqrt()
}

/// Nearest point on the polygon's edges to `p`, the edge index, and the distance.
pub fn nearest_on_polygon(nodes: &[[f64; 2]], p: [f64; 2]) -> ([f64; 2], usize, f64) {
    let mut best = (nodes[0], 0, f64::INFINITY);
    for (k, w) in nodes.windows(2).enumerate() {
        let q = nearest_on_segment(w[0], w[1], p);
        let dist = ((p[0] - q[0]).powi(2) + (p[1] - q[1]).powi(2)).sqrt();
        if dist < best.2 {
            best = (q, k, dist);
        }
    }
    best
}

/// Smallest distance between two closed polygons (0 when they intersect).
pub fn polygon_distance(p: &[[f64; 2]], q: &[[f64; 2]]) -> f64 {
    if p.iter().any(|&x| inside_polygon(q, x)) || q.iter().any(|&x| inside_polygon(p, x)) {
        return 0.0;
    }
    let mut best = f64::INFINITY;
    for &x in p {
        best = best.min(nearest_on_polygon(q, x).2);
    }
    for &x in q {
        best = best.min(nearest_on_polygon(p, x).2);
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn section_is_clockwise_closed_and_has_the_right_thickness() {
        let n = symmetric_section(0.12, 200);
        assert_eq!(n.len(), 201);
        assert_eq!(n[0], n[200]);
        assert!(signed_area2(&n) < 0.0);
        // The 4-digit thickness formula peaks at x = 0.3 with 2 * yt = t to about 0.1 %
        // (Abbott & von Doenhoff 1959: maximum thickness at 30 % chord).
        let tmax = n.iter().map(|p| p[1]).fold(f64::MIN, f64::max) * 2.0;
        assert!((tmax - 0.12).abs() < 2e-4, "{tmax}");
    }

    #[test]
    fn polygon_helpers() {
        let sq = [[0.0, 0.0], [0.0, 1.0], [1.0, 1.0], [1.0, 0.0], [0.0, 0.0]];
        assert!(inside_polygon(&sq, [0.5, 0.5]));
        assert!(!inside_polygon(&sq, [1.5, 0.5]));
        let (q, _, d) = nearest_on_polygon(&sq, [1.5, 0.5]);
        assert!((d - 0.5).abs() < 1e-12 && (q[0] - 1.0).abs() < 1e-12);
        let sq2: Vec<[f64; 2]> = sq.iter().map(|p| [p[0] + 3.0, p[1]]).collect();
        assert!((polygon_distance(&sq, &sq2) - 2.0).abs() < 1e-12);
    }
}
