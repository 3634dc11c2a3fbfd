//! Stage 5, base of support: the 2D convex hull of the floor projections of the foot points in
//! contact (docs/DESIGN.md 7).
//!
//! Input: points in the floor plane, `[f64; 2]` in metres. Output: a [`Hull`], which is empty, a
//! point, a segment or a counter-clockwise polygon of positive area, so degenerate bases of
//! support are explicit in the type (a hull of two points has no area).
//!
//! Algorithm: Andrew's monotone chain, A. M. Andrew (1979), "Another efficient algorithm for
//! convex hulls in two dimensions", Information Processing Letters 9(5):216-219. Points are
//! sorted by (x, y), then the lower and upper chains are built with a left-turn test; O(n log n).
//!
//! Why our own and not the `geo` crate: the algorithm is about 80 lines, has no dependency, and
//! gravline needs only this and a signed distance ([`super::margin`]); both are checked against
//! shapely (GEOS) on a committed fixture (`tests/fixtures/hull_shapely.csv`, made by
//! `tests/reference/make_hull_fixture.py`).

/// The convex hull of a set of floor points, in metres.
#[derive(Clone, Debug, PartialEq)]
pub enum Hull {
    /// No finite input point.
    Empty,
    /// All finite input points coincide.
    Point([f64; 2]),
    /// All finite input points lie on one line: the two extreme points, in (x, y) order.
    Segment([f64; 2], [f64; 2]),
    /// At least 3 vertices, counter-clockwise, without repeated or collinear vertices, positive
    /// area. The first vertex is the lowest-x (then lowest-y) point.
    Polygon(Vec<[f64; 2]>),
}

/// z-component of (a - o) x (b - o): positive when o -> a -> b turns left (counter-clockwise).
pub(crate) fn cross(o: [f64; 2], a: [f64; 2], b: [f64; 2]) -> f64 {
    (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0])
}

/// The convex hull of `points` (Andrew 1979).
///
/// Duplicate points and collinear points are handled: a collinear set gives a
/// [`Hull::Segment`], coincident points a [`Hull::Point`], and polygon vertices that lie on an
/// edge are dropped. Points with a non-finite coordinate (NaN, infinite) are skipped, as if
/// absent: they come from markers that were not seen.
///
/// ```
/// use gravline::support::{convex_hull, Hull};
/// let hull = convex_hull(&[[0.0, 0.0], [1.0, 0.0], [0.5, 0.5], [1.0, 1.0], [0.0, 1.0]]);
/// assert_eq!(hull, Hull::Polygon(vec![[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]]));
/// assert_eq!(hull.area_m2(), Some(1.0));
/// ```
pub fn convex_hull(points: &[[f64; 2]]) -> Hull {
    let mut pts: Vec<[f64; 2]> = points
        .iter()
        .copied()
        .filter(|p| p[0].is_finite() && p[1].is_finite())
        .collect();
    pts.sort_by(|a, b| a[0].total_cmp(&b[0]).then(a[1].total_cmp(&b[1])));
    pts.dedup();
    match pts.len() {
        0 => return Hull::Empty,
        1 => return Hull::Point(pts[0]),
        _ => {}
    }

    // Lower chain left to right, then upper chain right to left; a non-left turn (cross <= 0)
    // pops the middle point, which removes collinear vertices too.
    let mut chain: Vec<[f64; 2]> = Vec::with_capacity(2 * pts.len());
    for &p in &pts {
        while chain.len() >= 2 && cross(chain[chain.len() - 2], chain[chain.len() - 1], p) <= 0.0 {
            chain.pop();
        }
        chain.push(p);
    }
    let lower_len = chain.len() + 1;
    for &p in pts.iter().rev().skip(1) {
        while chain.len() >= lower_len
            && cross(chain[chain.len() - 2], chain[chain.len() - 1], p) <= 0.0
        {
            chain.pop();
        }
        chain.push(p);
    }
    // The last point repeats the first.
    chain.pop();

    let first = pts[0];
    let last = pts[pts.len() - 1];
    if chain.len() < 3 || polygon_area(&chain) <= 0.0 {
        // Collinear input: the sorted order puts the two extremes first and last.
        return Hull::Segment(first, last);
    }
    Hull::Polygon(chain)
}

/// Shoelace area of a closed ring, positive when counter-clockwise.
fn polygon_area(ring: &[[f64; 2]]) -> f64 {
    let n = ring.len();
    let twice: f64 = (0..n)
        .map(|i| {
            let a = ring[i];
            let b = ring[(i + 1) % n];
            a[0] * b[1] - b[0] * a[1]
        })
        .sum();
    0.5 * twice
}

impl Hull {
    /// Area in m², `None` unless the hull is a [`Hull::Polygon`].
    pub fn area_m2(&self) -> Option<f64> {
        match self {
            Hull::Polygon(v) => Some(polygon_area(v)),
            _ => None,
        }
    }

    /// The hull's vertices: none, one, the two segment ends, or the polygon counter-clockwise.
    pub fn vertices(&self) -> Vec<[f64; 2]> {
        match self {
            Hull::Empty => Vec::new(),
            Hull::Point(p) => vec![*p],
            Hull::Segment(a, b) => vec![*a, *b],
            Hull::Polygon(v) => v.clone(),
        }
    }

    /// `true` for [`Hull::Empty`].
    pub fn is_empty(&self) -> bool {
        matches!(self, Hull::Empty)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn square_with_interior_and_edge_points_keeps_the_four_corners() {
        let hull = convex_hull(&[
            [1.0, 1.0],
            [0.0, 0.0],
            [0.5, 0.0],
            [0.0, 1.0],
            [1.0, 0.0],
            [0.5, 0.5],
            [1.0, 0.5],
        ]);
        assert_eq!(
            hull,
            Hull::Polygon(vec![[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]])
        );
    }

    #[test]
    fn non_finite_points_are_skipped() {
        let hull = convex_hull(&[[f64::NAN, 0.0], [2.0, 3.0], [f64::INFINITY, 1.0]]);
        assert_eq!(hull, Hull::Point([2.0, 3.0]));
    }
}
