//! Convex hull and signed distance of the `support` stage against shapely (GEOS) on the fixture
//! made by `tests/reference/make_hull_fixture.py`, and against hand-known degenerate cases.

use std::collections::BTreeMap;
use std::path::Path;

use approx::assert_relative_eq;
use gravline::support::{convex_hull, signed_distance, Hull};

/// One random cloud of the fixture with shapely's answers.
#[derive(Default)]
struct Case {
    points: Vec<[f64; 2]>,
    vertices: Vec<[f64; 2]>,
    area_m2: Option<f64>,
    queries: Vec<([f64; 2], f64)>,
}

fn read_fixture() -> BTreeMap<usize, Case> {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/hull_shapely.csv");
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .from_path(&path)
        .expect("fixture tests/fixtures/hull_shapely.csv is readable");
    let number = |s: &str| -> f64 { s.parse().expect("fixture number") };
    let mut cases: BTreeMap<usize, Case> = BTreeMap::new();
    for record in reader.records() {
        let r = record.expect("fixture row");
        let case = cases
            .entry(r[0].parse().expect("fixture case number"))
            .or_default();
        match &r[1] {
            "point" => case.points.push([number(&r[2]), number(&r[3])]),
            "vertex" => case.vertices.push([number(&r[2]), number(&r[3])]),
            "area" => case.area_m2 = Some(number(&r[4])),
            "query" => case
                .queries
                .push(([number(&r[2]), number(&r[3])], number(&r[4]))),
            other => panic!("unknown fixture row kind `{other}`"),
        }
    }
    cases
}

fn sorted(mut v: Vec<[f64; 2]>) -> Vec<[f64; 2]> {
    v.sort_by(|a, b| a[0].total_cmp(&b[0]).then(a[1].total_cmp(&b[1])));
    v
}

#[test]
fn hull_matches_shapely_on_thirty_random_clouds() {
    let cases = read_fixture();
    assert_eq!(cases.len(), 30, "fixture cases");
    let mut worst_relative: f64 = 0.0;
    for (id, case) in &cases {
        let hull = convex_hull(&case.points);
        let Hull::Polygon(vertices) = &hull else {
            panic!("case {id}: expected a polygon, got {hull:?}");
        };
        // shapely 2.2 convex_hull (fixture): the same vertex set, exactly (both keep input points).
        assert_eq!(
            sorted(vertices.clone()),
            sorted(case.vertices.clone()),
            "case {id} vertex set"
        );
        // shapely 2.2 Polygon.area (fixture), 1e-12 relative; counter-clockwise gives a
        // positive shoelace area.
        let area = hull.area_m2().expect("polygon area");
        let expected = case.area_m2.expect("fixture area");
        assert_relative_eq!(area, expected, max_relative = 1e-12);
        worst_relative = worst_relative.max((area - expected).abs() / expected);
    }
    println!("largest relative area difference to shapely over 30 hulls: {worst_relative:e}");
}

#[test]
fn signed_distance_matches_shapely_inside_outside_and_on_the_boundary() {
    let cases = read_fixture();
    let mut inside = 0;
    let mut outside = 0;
    let mut worst_m: f64 = 0.0;
    for (id, case) in &cases {
        let hull = convex_hull(&case.points);
        assert_eq!(case.queries.len(), 10, "case {id} queries");
        for (p, expected) in &case.queries {
            // shapely 2.2: exterior.distance(point), sign from contains (fixture), 1e-9 m.
            let d = signed_distance(&hull, *p).expect("distance to a polygon");
            assert!(
                (d - expected).abs() <= 1e-9,
                "case {id} query {p:?}: {d} vs shapely {expected}"
            );
            worst_m = worst_m.max((d - expected).abs());
            if *expected > 0.0 {
                inside += 1;
            } else if *expected < 0.0 {
                outside += 1;
            }
        }
    }
    assert_eq!((inside, outside), (150, 120), "fixture query mix");
    println!("largest |signed distance - shapely| over 300 queries: {worst_m:e} m");
}

#[test]
fn hull_of_no_point_is_empty() {
    let hull = convex_hull(&[]);
    assert_eq!(hull, Hull::Empty);
    assert_eq!(hull.area_m2(), None);
    assert!(hull.vertices().is_empty());
    assert_eq!(signed_distance(&hull, [0.0, 0.0]), None);
}

#[test]
fn hull_of_one_point_and_of_repeated_points_is_that_point() {
    assert_eq!(convex_hull(&[[0.3, -0.2]]), Hull::Point([0.3, -0.2]));
    let hull = convex_hull(&[[0.3, -0.2]; 5]);
    assert_eq!(hull, Hull::Point([0.3, -0.2]));
    assert_eq!(hull.area_m2(), None);
    assert_eq!(hull.vertices(), vec![[0.3, -0.2]]);
}

#[test]
fn hull_of_two_points_is_a_segment_without_area() {
    let hull = convex_hull(&[[1.0, 1.0], [0.0, 0.0]]);
    assert_eq!(hull, Hull::Segment([0.0, 0.0], [1.0, 1.0]));
    assert_eq!(hull.area_m2(), None);
}

#[test]
fn hull_of_collinear_points_with_duplicates_is_the_segment_of_the_extremes() {
    // points on y = 2x + 1 (exact in binary), shuffled, with repeats
    let points = [
        [0.5, 2.0],
        [-1.0, -1.0],
        [2.0, 5.0],
        [0.5, 2.0],
        [0.0, 1.0],
        [2.0, 5.0],
        [1.25, 3.5],
    ];
    let hull = convex_hull(&points);
    assert_eq!(hull, Hull::Segment([-1.0, -1.0], [2.0, 5.0]));
    // vertical line: sorted by y within equal x
    let hull = convex_hull(&[[1.0, 3.0], [1.0, -2.0], [1.0, 0.5]]);
    assert_eq!(hull, Hull::Segment([1.0, -2.0], [1.0, 3.0]));
}

#[test]
fn hull_of_a_triangle_with_duplicates_and_edge_points_has_three_ccw_vertices() {
    let points = [
        [0.0, 0.0],
        [2.0, 0.0],
        [0.0, 2.0],
        [1.0, 1.0], // on the hypotenuse
        [1.0, 0.0], // on the base
        [2.0, 0.0],
        [0.0, 0.0],
        [0.5, 0.5], // inside
    ];
    let hull = convex_hull(&points);
    assert_eq!(
        hull,
        Hull::Polygon(vec![[0.0, 0.0], [2.0, 0.0], [0.0, 2.0]])
    );
    // area of a right triangle with legs 2 m: 2 m^2 (geometry)
    assert_relative_eq!(hull.area_m2().expect("area"), 2.0, max_relative = 1e-15);
}
