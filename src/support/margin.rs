//! Stage 5, margins: how far a floor point (the CoM's floor projection or the XCoM) lies inside
//! the base of support (BoS) [`Hull`], overall and along a direction, and the temporal margin.
//!
//! Inputs: a [`Hull`] and points in the floor plane (`[f64; 2]`, metres); for the temporal
//! margin, positions along one axis (m) and ω0 (1/s). Outputs: margins in metres, positive
//! inside the BoS, and times in seconds.
//!
//! Method: the margin of stability (MoS) of Hof, Gazendam & Sinke (2005), "The condition for
//! dynamic stability", J Biomech 38:1-8, doi 10.1016/j.jbiomech.2004.03.025: the minimum
//! distance from the XCoM to the BoS boundary ([`signed_distance`]); docs/reference/methods.md 2 gives the sign
//! convention (positive inside) and the 1D components. The directional margins clip the line
//! through the point against the hull's edges (Cyrus & Beck 1978, "Generalized two- and
//! three-dimensional clipping", Computers & Graphics 3:23-28).
//!
//! How gravline forms the MoS components from [`directional_margin`], with e_prog the unit
//! direction of progression and e_ml the unit mediolateral axis (e_prog turned by 90°):
//! - AP MoS = (anterior edge − XCoM)·e_prog (docs/reference/methods.md 2) = `ahead_m` along e_prog.
//!   The backward MoS at initial contact, (XCoM − posterior edge)·e_prog (Hak et al. 2013), is
//!   `behind_m` along e_prog.
//! - ML MoS = the signed distance to the nearer lateral edge along the ML axis =
//!   [`DirectionalMargin::nearer_m`] along e_ml, i.e. `min(ahead_m, behind_m)`.
//!   The per-step stance-side ML MoS of docs/reference/methods.md 2, (lateral edge − XCoM)·n with n the outward
//!   (lateral) unit vector of the stance foot, is `ahead_m` along n; it differs from the nearer
//!   edge in single stance, where the XCoM usually lies medial to the stance foot (then
//!   `behind_m` along n is negative while `ahead_m` is the lateral margin).
//!
//! The temporal margin τ ([`time_to_boundary_s`]) follows the inverted-pendulum model of
//! docs/reference/methods.md 2: with the CoP held at p, ξ(t) − p = (ξ0 − p)·e^(ω0 t), so the edge u is reached
//! at τ = (1/ω0)·ln((u − p)/(ξ0 − p)).

use super::hull::{cross, Hull};

/// Margins of a point along a direction: see [`directional_margin`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DirectionalMargin {
    /// Distance from the point to the hull's far boundary along +d, in metres; negative when
    /// the point is already beyond that edge.
    pub ahead_m: f64,
    /// Distance from the point back to the hull's rear boundary along −d, in metres; negative
    /// when the point lies behind that edge.
    pub behind_m: f64,
    /// `true` when the line through the point along d meets the hull; `false` when the margins
    /// come from the fallback (the hull's extent projected on d).
    pub line_meets_hull: bool,
}

impl DirectionalMargin {
    /// The margin to the nearer of the two edges, `min(ahead_m, behind_m)`, in metres.
    pub fn nearer_m(&self) -> f64 {
        self.ahead_m.min(self.behind_m)
    }
}

fn sub(a: [f64; 2], b: [f64; 2]) -> [f64; 2] {
    [a[0] - b[0], a[1] - b[1]]
}

fn dot(a: [f64; 2], b: [f64; 2]) -> f64 {
    a[0] * b[0] + a[1] * b[1]
}

fn perp_dot(a: [f64; 2], b: [f64; 2]) -> f64 {
    a[0] * b[1] - a[1] * b[0]
}

/// Distance from p to the segment a-b, in the points' unit.
fn distance_to_segment(p: [f64; 2], a: [f64; 2], b: [f64; 2]) -> f64 {
    let ab = sub(b, a);
    let ap = sub(p, a);
    let len2 = dot(ab, ab);
    let t = if len2 > 0.0 {
        (dot(ap, ab) / len2).clamp(0.0, 1.0)
    } else {
        0.0
    };
    let q = [a[0] + t * ab[0], a[1] + t * ab[1]];
    let d = sub(p, q);
    d[0].hypot(d[1])
}

/// Signed distance from p to the hull boundary in metres: positive inside a
/// [`Hull::Polygon`], 0 on its boundary, negative outside; for a [`Hull::Point`] or
/// [`Hull::Segment`] (no interior) the negative distance to it. `None` for [`Hull::Empty`] or a
/// non-finite p.
///
/// ```
/// use gravline::support::{convex_hull, signed_distance};
/// let square = convex_hull(&[[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]]);
/// assert_eq!(signed_distance(&square, [0.5, 0.5]), Some(0.5));
/// assert_eq!(signed_distance(&square, [2.0, 0.5]), Some(-1.0));
/// ```
pub fn signed_distance(hull: &Hull, p: [f64; 2]) -> Option<f64> {
    if !(p[0].is_finite() && p[1].is_finite()) {
        return None;
    }
    match hull {
        Hull::Empty => None,
        Hull::Point(q) => {
            let d = sub(p, *q);
            Some(-d[0].hypot(d[1]))
        }
        Hull::Segment(a, b) => Some(-distance_to_segment(p, *a, *b)),
        Hull::Polygon(v) => {
            let n = v.len();
            let mut distance = f64::INFINITY;
            let mut inside = true;
            for i in 0..n {
                let a = v[i];
                let b = v[(i + 1) % n];
                distance = distance.min(distance_to_segment(p, a, b));
                // Counter-clockwise ring: the interior is to the left of every edge.
                if cross(a, b, p) < 0.0 {
                    inside = false;
                }
            }
            Some(if inside { distance } else { -distance })
        }
    }
}

/// Margins of p along the direction d (normalised here; it need not be a unit vector).
///
/// Let the line p + t·d̂ meet the hull over [t_min, t_max]: the result is `ahead_m = t_max`,
/// `behind_m = −t_min` (both positive when p is inside the hull; a negative value means p is
/// beyond that edge), with `line_meets_hull = true`.
///
/// When the line misses the hull (p beside it), the margins fall back to the hull's extent
/// projected on d̂ relative to p: `ahead_m = max (v − p)·d̂`, `behind_m = −min (v − p)·d̂` over the
/// vertices v, with `line_meets_hull = false`. The sign then still says on which side of the
/// hull's extent along d̂ the point lies. A [`Hull::Point`] always takes this form (the line
/// meets it only when it passes exactly through it, where both agree).
///
/// `None` for [`Hull::Empty`], a non-finite p, or a zero or non-finite d.
///
/// ```
/// use gravline::support::{convex_hull, directional_margin};
/// let square = convex_hull(&[[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]]);
/// let m = directional_margin(&square, [0.25, 0.5], [1.0, 0.0]).unwrap();
/// assert_eq!((m.ahead_m, m.behind_m), (0.75, 0.25));
/// ```
pub fn directional_margin(hull: &Hull, p: [f64; 2], d: [f64; 2]) -> Option<DirectionalMargin> {
    if !(p[0].is_finite() && p[1].is_finite()) {
        return None;
    }
    let norm = d[0].hypot(d[1]);
    if !(norm.is_finite() && norm > 0.0) {
        return None;
    }
    let d = [d[0] / norm, d[1] / norm];
    let interval = match hull {
        Hull::Empty => return None,
        Hull::Point(_) => None,
        Hull::Segment(a, b) => segment_interval(p, d, *a, *b),
        Hull::Polygon(v) => polygon_interval(p, d, v),
    };
    let margin = match interval {
        Some((t_min, t_max)) => DirectionalMargin {
            ahead_m: t_max,
            behind_m: -t_min,
            line_meets_hull: true,
        },
        None => {
            let (lo, hi) = hull
                .vertices()
                .iter()
                .map(|v| dot(sub(*v, p), d))
                .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), s| {
                    (lo.min(s), hi.max(s))
                });
            DirectionalMargin {
                ahead_m: hi,
                behind_m: -lo,
                line_meets_hull: false,
            }
        }
    };
    Some(margin)
}

/// Parameters [t_min, t_max] where p + t·d meets the segment a-b, if it does.
fn segment_interval(p: [f64; 2], d: [f64; 2], a: [f64; 2], b: [f64; 2]) -> Option<(f64, f64)> {
    let e = sub(b, a);
    let ap = sub(a, p);
    let den = perp_dot(d, e);
    if den == 0.0 {
        // Parallel: on the line only when collinear, and then the projections are exact.
        if perp_dot(ap, d) == 0.0 {
            let (sa, sb) = (dot(ap, d), dot(sub(b, p), d));
            return Some((sa.min(sb), sa.max(sb)));
        }
        return None;
    }
    let t = perp_dot(ap, e) / den;
    let u = perp_dot(ap, d) / den;
    (0.0..=1.0).contains(&u).then_some((t, t))
}

/// Cyrus-Beck clipping of the line p + t·d against a counter-clockwise convex polygon.
fn polygon_interval(p: [f64; 2], d: [f64; 2], v: &[[f64; 2]]) -> Option<(f64, f64)> {
    let n = v.len();
    let mut t_min = f64::NEG_INFINITY;
    let mut t_max = f64::INFINITY;
    for i in 0..n {
        let a = v[i];
        let b = v[(i + 1) % n];
        let e = sub(b, a);
        // Inward normal of a counter-clockwise edge: e turned left.
        let normal = [-e[1], e[0]];
        let num = dot(normal, sub(p, a));
        let den = dot(normal, d);
        if den == 0.0 {
            if num < 0.0 {
                return None;
            }
        } else {
            let t = -num / den;
            if den > 0.0 {
                t_min = t_min.max(t);
            } else {
                t_max = t_max.min(t);
            }
        }
    }
    (t_min <= t_max).then_some((t_min, t_max))
}

/// Temporal margin τ in seconds (docs/reference/methods.md 2, after Hof et al. 2005): the time the XCoM needs
/// to reach the BoS edge at `edge_m` when the CoP stays at `cop_m`, all positions along one axis
/// in metres, `omega0_per_s` = √(g/l) in 1/s:
/// τ = (1/ω0)·ln((u − p)/(ξ0 − p)).
///
/// Negative when the XCoM is already beyond the edge (the time since it crossed, on the same
/// model). `None` when the XCoM never reaches the edge: it sits on the CoP (ξ0 = p), or moves
/// away from the edge (ξ0 − p and u − p of opposite signs, or u = p); also for non-finite
/// inputs or ω0 <= 0.
///
/// ```
/// // docs/reference/methods.md 2, check value (D): l = 0.95 m, p = 0, ξ0 = 0.05 m, u = 0.10 m -> τ = 0.216 s.
/// let omega0 = (9.81_f64 / 0.95).sqrt();
/// let tau = gravline::support::time_to_boundary_s(0.05, 0.0, 0.10, omega0).unwrap();
/// assert!((tau - 0.216).abs() < 5e-4);
/// ```
pub fn time_to_boundary_s(xcom_m: f64, cop_m: f64, edge_m: f64, omega0_per_s: f64) -> Option<f64> {
    if !(xcom_m.is_finite() && cop_m.is_finite() && edge_m.is_finite()) {
        return None;
    }
    if !(omega0_per_s.is_finite() && omega0_per_s > 0.0) {
        return None;
    }
    let ratio = (edge_m - cop_m) / (xcom_m - cop_m);
    (ratio.is_finite() && ratio > 0.0).then(|| ratio.ln() / omega0_per_s)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::support::convex_hull;

    #[test]
    fn line_along_an_edge_of_the_square_meets_it_over_the_edge() {
        let square = convex_hull(&[[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]]);
        let m = directional_margin(&square, [0.25, 0.0], [1.0, 0.0]).unwrap();
        assert_eq!(
            (m.ahead_m, m.behind_m, m.line_meets_hull),
            (0.75, 0.25, true)
        );
    }

    #[test]
    fn segment_crossed_by_the_line_gives_one_parameter() {
        let seg = convex_hull(&[[1.0, -1.0], [1.0, 1.0]]);
        let m = directional_margin(&seg, [0.0, 0.0], [2.0, 0.0]).unwrap();
        assert_eq!(
            (m.ahead_m, m.behind_m, m.line_meets_hull),
            (1.0, -1.0, true)
        );
    }
}
