//! Margins of the `support` stage: signed distance and directional margins on a unit square
//! (geometry), and the worked check values of docs/reference/methods.md 2 (Hof, Gazendam & Sinke 2005,
//! J Biomech 38:1-8) reproduced through the public functions.

use approx::assert_abs_diff_eq;
use gravline::support::{
    convex_hull, directional_margin, signed_distance, time_to_boundary_s, Hull,
};

/// Standard gravity as used by docs/reference/methods.md ("g = 9.81 m/s²").
const G_M_S2: f64 = 9.81;

fn unit_square() -> Hull {
    convex_hull(&[[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]])
}

#[test]
fn signed_distance_is_positive_inside_a_unit_square_and_negative_outside() {
    let sq = unit_square();
    // geometry: the center is 0.5 m from every edge
    assert_abs_diff_eq!(
        signed_distance(&sq, [0.5, 0.5]).unwrap(),
        0.5,
        epsilon = 1e-15
    );
    assert_abs_diff_eq!(
        signed_distance(&sq, [0.9, 0.3]).unwrap(),
        0.1,
        epsilon = 1e-15
    );
    // outside beside an edge, and beyond a corner (distance to the corner, sqrt(2))
    assert_abs_diff_eq!(
        signed_distance(&sq, [1.5, 0.5]).unwrap(),
        -0.5,
        epsilon = 1e-15
    );
    assert_abs_diff_eq!(
        signed_distance(&sq, [2.0, 2.0]).unwrap(),
        -std::f64::consts::SQRT_2,
        epsilon = 1e-15
    );
    // on an edge and on a corner
    assert_abs_diff_eq!(
        signed_distance(&sq, [1.0, 0.25]).unwrap(),
        0.0,
        epsilon = 1e-15
    );
    assert_abs_diff_eq!(
        signed_distance(&sq, [0.0, 0.0]).unwrap(),
        0.0,
        epsilon = 1e-15
    );
    assert_eq!(signed_distance(&sq, [f64::NAN, 0.5]), None);
}

#[test]
fn signed_distance_to_a_point_or_segment_hull_is_minus_the_distance() {
    let point = convex_hull(&[[1.0, 1.0]]);
    assert_abs_diff_eq!(
        signed_distance(&point, [4.0, 5.0]).unwrap(),
        -5.0,
        epsilon = 1e-15
    );
    let segment = convex_hull(&[[0.0, 0.0], [2.0, 0.0]]);
    assert_abs_diff_eq!(
        signed_distance(&segment, [1.0, 0.5]).unwrap(),
        -0.5,
        epsilon = 1e-15
    );
    assert_abs_diff_eq!(
        signed_distance(&segment, [3.0, 0.0]).unwrap(),
        -1.0,
        epsilon = 1e-15
    );
    assert_abs_diff_eq!(
        signed_distance(&segment, [1.0, 0.0]).unwrap(),
        0.0,
        epsilon = 1e-15
    );
}

#[test]
fn directional_margins_in_a_unit_square() {
    let sq = unit_square();
    // along +x from (0.25, 0.5): 0.75 m to the right edge, 0.25 m back to the left edge
    let m = directional_margin(&sq, [0.25, 0.5], [1.0, 0.0]).unwrap();
    assert_abs_diff_eq!(m.ahead_m, 0.75, epsilon = 1e-15);
    assert_abs_diff_eq!(m.behind_m, 0.25, epsilon = 1e-15);
    assert!(m.line_meets_hull);
    assert_abs_diff_eq!(m.nearer_m(), 0.25, epsilon = 1e-15);
    // d need not be a unit vector; the reverse direction swaps the two
    let m = directional_margin(&sq, [0.25, 0.5], [-3.0, 0.0]).unwrap();
    assert_abs_diff_eq!(m.ahead_m, 0.25, epsilon = 1e-15);
    assert_abs_diff_eq!(m.behind_m, 0.75, epsilon = 1e-15);
    // along the diagonal from the center: half the diagonal either way
    let m = directional_margin(&sq, [0.5, 0.5], [1.0, 1.0]).unwrap();
    assert_abs_diff_eq!(m.ahead_m, std::f64::consts::FRAC_1_SQRT_2, epsilon = 1e-15);
    assert_abs_diff_eq!(m.behind_m, std::f64::consts::FRAC_1_SQRT_2, epsilon = 1e-15);
    // beyond the right edge, looking along +x: the right edge is 0.5 m behind (negative ahead)
    let m = directional_margin(&sq, [1.5, 0.5], [1.0, 0.0]).unwrap();
    assert_abs_diff_eq!(m.ahead_m, -0.5, epsilon = 1e-15);
    assert_abs_diff_eq!(m.behind_m, 1.5, epsilon = 1e-15);
    assert!(m.line_meets_hull);
    // beside the square (the line misses it): the hull's extent projected on d
    let m = directional_margin(&sq, [0.5, 2.0], [1.0, 0.0]).unwrap();
    assert_abs_diff_eq!(m.ahead_m, 0.5, epsilon = 1e-15);
    assert_abs_diff_eq!(m.behind_m, 0.5, epsilon = 1e-15);
    assert!(!m.line_meets_hull);
    let m = directional_margin(&sq, [3.0, 2.0], [1.0, 0.0]).unwrap();
    assert_abs_diff_eq!(m.ahead_m, -2.0, epsilon = 1e-15);
    assert_abs_diff_eq!(m.behind_m, 3.0, epsilon = 1e-15);
    // degenerate inputs
    assert_eq!(directional_margin(&sq, [0.5, 0.5], [0.0, 0.0]), None);
    assert_eq!(
        directional_margin(&Hull::Empty, [0.5, 0.5], [1.0, 0.0]),
        None
    );
}

#[test]
fn directional_margins_of_point_and_segment_hulls() {
    // a point 2 m ahead: both along the line and beside it, the projection
    let point = convex_hull(&[[2.0, 1.0]]);
    let m = directional_margin(&point, [0.0, 0.0], [1.0, 0.0]).unwrap();
    assert_abs_diff_eq!(m.ahead_m, 2.0, epsilon = 1e-15);
    assert_abs_diff_eq!(m.behind_m, -2.0, epsilon = 1e-15);
    // a segment along the line: the overlap interval
    let segment = convex_hull(&[[1.0, 0.0], [3.0, 0.0]]);
    let m = directional_margin(&segment, [0.0, 0.0], [1.0, 0.0]).unwrap();
    assert_abs_diff_eq!(m.ahead_m, 3.0, epsilon = 1e-15);
    assert_abs_diff_eq!(m.behind_m, -1.0, epsilon = 1e-15);
    assert!(m.line_meets_hull);
}

#[test]
fn omega0_and_xcom_offset_match_methods_md_2_check_values() {
    // docs/reference/methods.md 2, check values (D): l = 0.95 m -> omega0 = 3.2135 1/s, 1/omega0 = 0.3112 s;
    // v = 1.30 m/s -> v/omega0 = 0.4045 m. Stated to 4 decimals, hence 5e-5.
    let omega0 = (G_M_S2 / 0.95_f64).sqrt();
    assert_abs_diff_eq!(omega0, 3.2135, epsilon = 5e-5);
    assert_abs_diff_eq!(1.0 / omega0, 0.3112, epsilon = 5e-5);
    assert_abs_diff_eq!(1.30 / omega0, 0.4045, epsilon = 5e-5);
}

#[test]
fn backward_mos_at_initial_contact_is_plus_75_mm() {
    // docs/reference/methods.md 2, check value (D): CoM 0.33 m behind the leading heel, v = 1.30 m/s,
    // l = 0.95 m -> the XCoM is 0.075 m ahead of the heel: backward MoS = +0.075 m (Hak et al.
    // 2013 definition: XCoM minus the posterior edge of the leading foot, along e_prog).
    // The leading foot: heel edge at x = 0.33 m, 0.25 m long, 0.10 m wide (a foot outline).
    let omega0 = (G_M_S2 / 0.95_f64).sqrt();
    let com = [0.0, 0.0];
    let v = [1.30, 0.0];
    let xcom = [com[0] + v[0] / omega0, com[1] + v[1] / omega0]; // Hof 2005: x + v/omega0
    let leading_foot = convex_hull(&[[0.33, -0.05], [0.58, -0.05], [0.58, 0.05], [0.33, 0.05]]);
    let e_prog = [1.0, 0.0];
    let m = directional_margin(&leading_foot, xcom, e_prog).unwrap();
    // 0.075 as stated to 3 decimals in docs/reference/methods.md, hence 5e-4
    assert_abs_diff_eq!(m.behind_m, 0.075, epsilon = 5e-4);
    // the anterior MoS of the same foot: toe edge 0.58 m minus the XCoM (geometry, D)
    assert_abs_diff_eq!(m.ahead_m, 0.58 - 1.30 / omega0, epsilon = 1e-12);
    // ML along e_ml = e_prog turned left: the XCoM is on the foot's midline, 0.05 m from both
    let ml = directional_margin(&leading_foot, xcom, [0.0, 1.0]).unwrap();
    assert_abs_diff_eq!(ml.nearer_m(), 0.05, epsilon = 1e-12);
}

#[test]
fn temporal_margin_matches_methods_md_2_check_value() {
    // docs/reference/methods.md 2, check value (D): l = 0.95 m, p = 0, xi0 = 0.05 m, u = 0.10 m -> tau = 0.216 s
    // (stated to 3 decimals, hence 5e-4)
    let omega0 = (G_M_S2 / 0.95_f64).sqrt();
    let tau = time_to_boundary_s(0.05, 0.0, 0.10, omega0).unwrap();
    assert_abs_diff_eq!(tau, 0.216, epsilon = 5e-4);
    // the same model forward (inverted pendulum, docs/reference/methods.md 2): xi(tau) - p = (xi0 - p) e^(omega0 tau)
    // reaches the edge; here with the CoP off the origin and the edge on the negative side
    let (xi0, p, u) = (-0.12, -0.02, -0.30);
    let tau = time_to_boundary_s(xi0, p, u, omega0).unwrap();
    assert_abs_diff_eq!(p + (xi0 - p) * (omega0 * tau).exp(), u, epsilon = 1e-12);
    // beyond the edge already: negative, the time since crossing
    assert!(time_to_boundary_s(0.12, 0.0, 0.10, omega0).unwrap() < 0.0);
    // moving away from the edge, or resting on the CoP: never reached
    assert_eq!(time_to_boundary_s(-0.05, 0.0, 0.10, omega0), None);
    assert_eq!(time_to_boundary_s(0.0, 0.0, 0.10, omega0), None);
    assert_eq!(time_to_boundary_s(0.05, 0.0, 0.10, 0.0), None);
}
