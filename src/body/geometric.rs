//! The subject's own segments (stage 3, body model): each segment a stack of solids whose
//! cross-sections come from perimeters and widths measured on the subject, its mass the density
//! times the volume, its CoM the volume-weighted centroid; the whole body then the mass-weighted
//! average of the segments, as with the tables.
//!
//! - Cross-sections are "stadia" (a rectangle with two semicircular ends), fitted to a measured
//!   perimeter p and width w: `t = (pi w - p) / (2 pi - 4)` (half the straight part),
//!   `r = (p - 2 w) / (2 pi - 4)` (the end radius); a section rounder than a circle (p > pi w)
//!   becomes a circle of perimeter p, a section flatter than a line (p < 2 w) a rectangle of
//!   zero thickness (a warning). Yeadon MR (1990), The simulation of aerial movement II: a
//!   mathematical inertia model of the human body, J Biomech 23(1):67-74 (stadium solids from
//!   perimeter and width); the clamping rules are from memory.
//! - Between two levels r and t vary linearly with height h, so the area is quadratic in height
//!   and the volume and centroid are closed forms ([`stadium_solid`]); the truncated elliptic
//!   cone (semi-axes varying linearly, Jensen 1978 / Hanavan 1964 style) likewise
//!   ([`elliptic_frustum`]).
//! - Densities: Dempster WT (1955), WADC-TR-55-159, as tabulated by Winter DA (2009),
//!   Biomechanics and Motor Control of Human Movement, 4th ed., Table 4.1, in g/cm^3: hand 1.16,
//!   forearm 1.13, upper arm 1.07, foot 1.10, leg 1.09, thigh 1.05, head and neck 1.11,
//!   trunk 1.03 (Yeadon 1990 used Dempster's densities; from memory).
//! - Each segment lies between the endpoints of the default de Leva (1996) row, the landmarks the
//!   tables use; its measured `length_m` scales the levels (`at` = share of the length from the
//!   origin endpoint), and the centroid's share of the length becomes the CoM fraction along the
//!   endpoint line (the stadium centres lie on that line).
//!
//! Units: metres, kilograms, kg/m^3.

use crate::anthropometry::{SegmentKind, SegmentRow, SegmentTable, TableError};
use crate::config::{GeometryLevel, SegmentGeometry, Subject};
use crate::warning::Warning;
use std::f64::consts::PI;

/// A stadium cross-section: end radius `r` and half-length `t` of the straight part, metres.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Stadium {
    pub r: f64,
    pub t: f64,
}

impl Stadium {
    /// The stadium of a measured perimeter and width (module doc), and whether it had to be
    /// clamped because the perimeter is less than twice the width.
    ///
    /// ```
    /// use gravline::body::geometric::Stadium;
    /// let (s, clamped) = Stadium::from_perimeter_width(0.80, 0.30);
    /// assert!(!clamped && (s.t - 0.062403).abs() < 1e-6 && (s.r - 0.087597).abs() < 1e-6);
    /// ```
    pub fn from_perimeter_width(perimeter_m: f64, width_m: f64) -> (Stadium, bool) {
        let (p, w) = (perimeter_m, width_m);
        if p > PI * w {
            return (
                Stadium {
                    r: p / (2.0 * PI),
                    t: 0.0,
                },
                false,
            );
        }
        if p < 2.0 * w {
            return (Stadium { r: 0.0, t: p / 4.0 }, true);
        }
        let k = 2.0 * PI - 4.0;
        (
            Stadium {
                r: (p - 2.0 * w) / k,
                t: (PI * w - p) / k,
            },
            false,
        )
    }

    /// Area, m^2: `4 r t + pi r^2`.
    pub fn area(&self) -> f64 {
        4.0 * self.r * self.t + PI * self.r * self.r
    }
}

/// Volume (m^3) and centroid height above the first face (m) of the solid between stadium
/// sections `s0` at height 0 and `s1` at height `h`, r and t varying linearly.
pub fn stadium_solid(s0: Stadium, s1: Stadium, h: f64) -> (f64, f64) {
    let (r0, t0) = (s0.r, s0.t);
    let (a, b) = (s1.r - r0, s1.t - t0);
    let v = h
        * (4.0 * (r0 * t0 + (r0 * b + t0 * a) / 2.0 + a * b / 3.0)
            + PI * (r0 * r0 + r0 * a + a * a / 3.0));
    let m1 = h
        * h
        * (4.0 * (r0 * t0 / 2.0 + (r0 * b + t0 * a) / 3.0 + a * b / 4.0)
            + PI * (r0 * r0 / 2.0 + 2.0 * r0 * a / 3.0 + a * a / 4.0));
    (v, if v > 0.0 { m1 / v } else { h / 2.0 })
}

/// Volume (m^3) and centroid height (m) of a truncated elliptic cone with semi-axes (a0, b0) at
/// height 0 and (a1, b1) at height `h`.
pub fn elliptic_frustum(a0: f64, b0: f64, a1: f64, b1: f64, h: f64) -> (f64, f64) {
    let (al, be) = (a1 - a0, b1 - b0);
    let v = PI * h * (a0 * b0 + (a0 * be + b0 * al) / 2.0 + al * be / 3.0);
    let m1 = PI * h * h * (a0 * b0 / 2.0 + (a0 * be + b0 * al) / 3.0 + al * be / 4.0);
    (v, if v > 0.0 { m1 / v } else { h / 2.0 })
}

/// Segment density, kg/m^3 (Dempster 1955 via Winter 2009, Table 4.1).
pub fn density_kg_m3(kind: SegmentKind) -> f64 {
    1000.0
        * match kind {
            SegmentKind::Hand => 1.16,
            SegmentKind::Forearm => 1.13,
            SegmentKind::UpperArm => 1.07,
            SegmentKind::Foot => 1.10,
            SegmentKind::Shank => 1.09,
            SegmentKind::Thigh => 1.05,
            SegmentKind::Head => 1.11,
            _ => 1.03,
        }
}

/// The integrated shape of one segment.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SegmentSolid {
    pub volume_m3: f64,
    pub mass_kg: f64,
    /// Centroid distance from the origin endpoint, metres.
    pub centroid_m: f64,
}

/// Mass and centroid of a segment's stack of stadium solids; an error names the fault.
/// Warnings (clamped sections) go to `warnings`.
pub fn segment_solid(
    name: &str,
    geometry: &SegmentGeometry,
    density_kg_m3: f64,
    warnings: &mut Vec<Warning>,
) -> Result<SegmentSolid, String> {
    let levels: &[GeometryLevel] = &geometry.levels;
    if !(geometry.length_m > 0.0 && geometry.length_m < 3.0) {
        return Err(format!(
            "[geometry] {name}: length_m = {}; give the segment length in metres",
            geometry.length_m
        ));
    }
    if levels.len() < 2 {
        return Err(format!(
            "[geometry] {name}: give at least two levels (at = 0 and at = 1)"
        ));
    }
    for (i, l) in levels.iter().enumerate() {
        if !(0.0..=1.0).contains(&l.at) || (i > 0 && l.at <= levels[i - 1].at) {
            return Err(format!(
                "[geometry] {name}: level {} has at = {}; levels run from 0 to 1 in increasing order",
                i + 1,
                l.at
            ));
        }
        if !(l.perimeter_m >= 0.0 && l.perimeter_m < 3.0 && l.width_m >= 0.0 && l.width_m < 1.5) {
            return Err(format!(
                "[geometry] {name}: level {} perimeter {} m, width {} m; give metres, not centimetres",
                i + 1,
                l.perimeter_m,
                l.width_m
            ));
        }
    }
    if levels[0].at != 0.0 || levels[levels.len() - 1].at != 1.0 {
        return Err(format!(
            "[geometry] {name}: the first level must be at = 0 and the last at = 1 (the segment's endpoints)"
        ));
    }
    let sections: Vec<Stadium> = levels
        .iter()
        .enumerate()
        .map(|(i, l)| {
            let (s, clamped) = Stadium::from_perimeter_width(l.perimeter_m, l.width_m);
            if clamped {
                warnings.push(Warning::Plausibility {
                    message: format!(
                        "[geometry] {name} level {}: perimeter {:.3} m is less than twice the width {:.3} m; taken as a flat section",
                        i + 1,
                        l.perimeter_m,
                        l.width_m
                    ),
                });
            }
            s
        })
        .collect();
    let (mut volume, mut moment) = (0.0, 0.0);
    for k in 1..levels.len() {
        let z0 = levels[k - 1].at * geometry.length_m;
        let h = (levels[k].at - levels[k - 1].at) * geometry.length_m;
        let (v, c) = stadium_solid(sections[k - 1], sections[k], h);
        volume += v;
        moment += v * (z0 + c);
    }
    if volume <= 0.0 {
        return Err(format!("[geometry] {name}: the levels enclose no volume"));
    }
    Ok(SegmentSolid {
        volume_m3: volume,
        mass_kg: density_kg_m3 * volume,
        centroid_m: moment / volume,
    })
}

/// The `geometric` table of a subject: the default de Leva rows' endpoints with the masses and
/// CoM fractions integrated from the subject's `[geometry]` (module doc). Its mass fractions sum
/// to predicted / weighed body mass, which the table's population line reports; outside 0.5 %
/// the usual mass-sum warning says so (the CoM always divides by the predicted mass).
pub fn table(subject: &Subject) -> Result<SegmentTable, TableError> {
    let name = "geometric";
    let err = |message: String| TableError::Table {
        table: name.to_string(),
        message,
    };
    let geometry = subject.geometry.as_ref().ok_or_else(|| {
        err("the subject file has no [geometry]; measure the segments as anthropometry/README.md says, or choose a table".to_string())
    })?;
    for key in geometry.keys() {
        if !SegmentKind::WHOLE_BODY.iter().any(|k| k.name() == key) {
            return Err(err(format!(
                "[geometry] has an unknown segment `{key}`; segments are head, trunk, upper_arm, forearm, hand, thigh, shank, foot (sided ones measured once, used for both sides)"
            )));
        }
    }
    let de_leva = SegmentTable::builtin("de-leva-1996", subject.sex)?;
    let mut warnings = Vec::new();
    let mut rows = Vec::new();
    let mut mass_sum = 0.0;
    for kind in SegmentKind::WHOLE_BODY {
        let g = geometry.get(kind.name()).ok_or_else(|| {
            err(format!(
                "[geometry] has no `{}`; give its length_m and levels (anthropometry/README.md, geometric model)",
                kind.name()
            ))
        })?;
        let solid =
            segment_solid(kind.name(), g, density_kg_m3(kind), &mut warnings).map_err(err)?;
        let row = de_leva
            .default_row(kind)
            .ok_or_else(|| err(format!("no endpoints for `{kind}`")))?;
        let mass_fraction = solid.mass_kg / subject.mass_kg;
        mass_sum += if kind.is_sided() {
            2.0 * mass_fraction
        } else {
            mass_fraction
        };
        rows.push(SegmentRow {
            segment: kind,
            origin: row.origin.clone(),
            other: row.other.clone(),
            mass_fraction,
            com_fraction: solid.centroid_m / g.length_m,
            com_frame: None,
            is_default: true,
            endpoints_code: format!("{} (stadium solids)", row.endpoints_code),
        });
    }
    if (mass_sum - 1.0).abs() > crate::anthropometry::MASS_SUM_TOLERANCE {
        warnings.push(Warning::MassFractionSum {
            table: name.to_string(),
            sum: mass_sum,
        });
    }
    let predicted = mass_sum * subject.mass_kg;
    Ok(SegmentTable {
        name: name.to_string(),
        population: format!(
            "the subject's own segments: predicted body mass {predicted:.2} kg against {:.2} kg weighed ({:+.1} %)",
            subject.mass_kg,
            100.0 * (mass_sum - 1.0)
        ),
        source: "stadium solids after Yeadon 1990, J Biomech 23:67; densities Dempster 1955 via Winter 2009, Table 4.1".to_string(),
        rows,
        mass_sum,
        warnings,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use approx::assert_relative_eq;

    fn circle(r: f64) -> Stadium {
        Stadium { r, t: 0.0 }
    }

    /// Textbook solids (common practice, no source): cylinder V = pi r^2 h, centroid h/2;
    /// cone V = pi r^2 h / 3, centroid h/4 from the base; a stadium prism V = A h, centroid h/2.
    #[test]
    fn textbook_solids_to_1e_9() {
        let (v, c) = stadium_solid(circle(0.05), circle(0.05), 0.30);
        assert_relative_eq!(v, PI * 0.05f64.powi(2) * 0.30, max_relative = 1e-12);
        assert_relative_eq!(c, 0.15, max_relative = 1e-12);
        let (v, c) = stadium_solid(circle(0.05), circle(0.0), 0.30);
        assert_relative_eq!(v, PI * 0.05f64.powi(2) * 0.30 / 3.0, max_relative = 1e-12);
        assert_relative_eq!(c, 0.075, max_relative = 1e-12);
        let s = Stadium { r: 0.08, t: 0.06 };
        let (v, c) = stadium_solid(s, s, 0.20);
        assert_relative_eq!(
            v,
            (4.0 * 0.08 * 0.06 + PI * 0.0064) * 0.20,
            max_relative = 1e-12
        );
        assert_relative_eq!(c, 0.10, max_relative = 1e-12);
        // The same through the elliptic cone: a circular cylinder and cone.
        let (v, c) = elliptic_frustum(0.05, 0.05, 0.0, 0.0, 0.30);
        assert_relative_eq!(v, PI * 0.05f64.powi(2) * 0.30 / 3.0, max_relative = 1e-12);
        assert_relative_eq!(c, 0.075, max_relative = 1e-12);
        // Circular frustum R 0.06, r 0.04, h 0.30: pi h (R^2 + R r + r^2) / 3 and
        // h (R^2 + 2 R r + 3 r^2) / (4 (R^2 + R r + r^2)) from the larger base.
        let (v, c) = elliptic_frustum(0.06, 0.06, 0.04, 0.04, 0.30);
        let (rr, r) = (0.06f64, 0.04f64);
        let sum = rr * rr + rr * r + r * r;
        assert_relative_eq!(v, PI * 0.30 * sum / 3.0, max_relative = 1e-12);
        assert_relative_eq!(
            c,
            0.30 * (rr * rr + 2.0 * rr * r + 3.0 * r * r) / (4.0 * sum),
            max_relative = 1e-12
        );
    }

    /// Check values of the closed forms (derived and checked by 200 000-slice integration in
    /// the project's reference notes on Yeadon's stadium solid): V and centroid to the printed
    /// digits.
    #[test]
    fn stadium_solid_check_values() {
        let cases = [
            ((0.08, 0.06), (0.07, 0.05), 0.20, 0.00684619, 0.0951738),
            ((0.10, 0.08), (0.09, 0.09), 0.15, 0.00909686, 0.0738521),
        ];
        for ((r0, t0), (r1, t1), h, v_ref, c_ref) in cases {
            let (v, c) = stadium_solid(Stadium { r: r0, t: t0 }, Stadium { r: r1, t: t1 }, h);
            assert!((v - v_ref).abs() < 5e-9, "{v}");
            assert!((c - c_ref).abs() < 5e-8, "{c}");
        }
        let (v, c) = elliptic_frustum(0.06, 0.06, 0.04, 0.04, 0.30);
        assert!((v - 0.00238761).abs() < 5e-9 && (c - 0.130263).abs() < 5e-7);
        let (s, _) = Stadium::from_perimeter_width(0.80, 0.30);
        assert!((s.area() - 0.045971).abs() < 5e-7);
        assert!((2.0 * s.t + 2.0 * s.r - 0.30).abs() < 1e-12);
        assert!((4.0 * s.t + 2.0 * PI * s.r - 0.80).abs() < 1e-12);
    }

    /// The closed forms against numerical integration (midpoint rule, 200 000 slices) of the
    /// section area, computed slice by slice from linearly interpolated r and t.
    #[test]
    fn closed_forms_equal_numerical_integration() {
        let n = 200_000;
        let cases = [
            (
                Stadium { r: 0.08, t: 0.06 },
                Stadium { r: 0.07, t: 0.05 },
                0.20,
            ),
            (
                Stadium { r: 0.10, t: 0.08 },
                Stadium { r: 0.09, t: 0.09 },
                0.15,
            ),
            (
                Stadium { r: 0.02, t: 0.0 },
                Stadium { r: 0.06, t: 0.10 },
                0.40,
            ),
        ];
        for (s0, s1, h) in cases {
            let (mut v, mut m) = (0.0, 0.0);
            for i in 0..n {
                let u = (i as f64 + 0.5) / n as f64;
                let s = Stadium {
                    r: s0.r + (s1.r - s0.r) * u,
                    t: s0.t + (s1.t - s0.t) * u,
                };
                let dv = s.area() * h / n as f64;
                v += dv;
                m += dv * u * h;
            }
            let (vc, cc) = stadium_solid(s0, s1, h);
            assert_relative_eq!(vc, v, max_relative = 1e-9);
            assert_relative_eq!(cc, m / v, max_relative = 1e-9);
            // An elliptic cone through the numerical route too.
            let (a0, b0, a1, b1) = (s0.r + s0.t, s0.r, s1.r + s1.t, s1.r);
            let (mut ve, mut me) = (0.0, 0.0);
            for i in 0..n {
                let u = (i as f64 + 0.5) / n as f64;
                let dv = PI * (a0 + (a1 - a0) * u) * (b0 + (b1 - b0) * u) * h / n as f64;
                ve += dv;
                me += dv * u * h;
            }
            let (vc, cc) = elliptic_frustum(a0, b0, a1, b1, h);
            assert_relative_eq!(vc, ve, max_relative = 1e-9);
            assert_relative_eq!(cc, me / ve, max_relative = 1e-9);
        }
    }

    #[test]
    fn sections_rounder_than_a_circle_or_flatter_than_a_line() {
        let (s, clamped) = Stadium::from_perimeter_width(0.40, 0.10);
        assert!(!clamped && s.t == 0.0);
        assert_relative_eq!(2.0 * PI * s.r, 0.40, max_relative = 1e-12);
        let (_, clamped) = Stadium::from_perimeter_width(0.15, 0.10);
        assert!(clamped);
        // A circle of width w: p = pi w gives t = 0, r = w / 2.
        let (s, _) = Stadium::from_perimeter_width(PI * 0.1, 0.1);
        assert_relative_eq!(s.r, 0.05, max_relative = 1e-12);
        assert!(s.t.abs() < 1e-15);
    }
}
