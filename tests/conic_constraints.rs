//! General conics, their duals, Apollonius' conjugate semi-diameters, and conics through `p` points
//! tangent to `t` lines (`p + t = 5`), checked against docs/sources.md (§4, §5)
//! and its raw outputs `math-scripts/out_dual.txt` and `math-scripts/out_conics.txt`, which were
//! computed independently (numpy / sympy / mpmath; the scripts are named beside each check).

#[path = "support/conic_lines.rs"]
mod conic_lines;
use conic_lines::{assert_close, deg, line_abc, p, support_gap, tangent};
use conicut::geom::{Ellipse, Line, Point, Vec2};
use conicut::solve::{Conic, ConicKind, ellipse_from_conjugate_semi_diameters};
use conicut::solve::{ConstraintError, conics_through_and_tangent};
use nalgebra::{Matrix3, Vector3};
use proptest::prelude::*;
use std::f64::consts::{PI, TAU};

// ---------------------------------------------------------------------------------------------
// §4 Apollonius
// ---------------------------------------------------------------------------------------------

#[test]
fn apollonius_skew_pair() {
    // docs/sources.md M4 "skew pair" (steiner_apollonius.py): p = (3,1), q = (1,2) →
    // a = (5+√5)/2, b = (5−√5)/2, angle ½·atan 2 = 31.7174744114610°.
    let (pv, qv) = (Vec2::new(3.0, 1.0), Vec2::new(1.0, 2.0));
    let e = ellipse_from_conjugate_semi_diameters(p(0.0, 0.0), pv, qv).unwrap();
    assert_close(e.a(), (5.0 + 5f64.sqrt()) / 2.0, 1e-14, "a");
    assert_close(e.b(), (5.0 - 5f64.sqrt()) / 2.0, 1e-14, "b");
    assert_close(e.a(), 3.61803398874989, 1e-13, "a (table)");
    assert_close(e.b(), 1.38196601125011, 1e-13, "b (table)");
    assert_close(e.angle().to_degrees(), 31.7174744114610, 1e-11, "angle");
    // Apollonius' theorems [EoM]: |p|² + |q|² = a² + b² = 15, |p × q| = ab = 5.
    assert_close(e.a().powi(2) + e.b().powi(2), 15.0, 1e-13, "a² + b²");
    assert_close(e.a() * e.b(), pv.cross(qv).abs(), 1e-13, "ab");
}

#[test]
fn apollonius_from_a_known_ellipse() {
    // docs/sources.md M4 "from a known ellipse": C = (1,2), a = 5, b = 3, θ = 30°, the pair at
    // eccentric angle 40°.
    let pv = Vec2::new(2.35288832631488, 3.58512230547670);
    let qv = Vec2::new(-3.93241866081056, 0.383272820290467);
    let e = ellipse_from_conjugate_semi_diameters(p(1.0, 2.0), pv, qv).unwrap();
    assert_close(e.a(), 5.0, 1e-12, "a");
    assert_close(e.b(), 3.0, 1e-12, "b");
    assert_close(e.angle().to_degrees(), 30.0, 1e-11, "angle");
    assert_close(
        pv.length_squared() + qv.length_squared(),
        34.0,
        1e-12,
        "|p|²+|q|²",
    );
    assert_close(pv.cross(qv), 15.0, 1e-12, "p × q");
    assert_close(pv.dot(qv), -7.87846202409766, 1e-12, "p · q");
    // The curve c + p cos t + q sin t lies on the ellipse.
    let c = Conic::from_ellipse(&e);
    for i in 0..16 {
        let t = i as f64 * TAU / 16.0;
        let x = e.centre() + pv * t.cos() + qv * t.sin();
        assert!(c.point_residual(x) < 1e-14);
    }
}

#[test]
fn apollonius_refuses_parallel_semi_diameters() {
    let err = ellipse_from_conjugate_semi_diameters(
        p(0.0, 0.0),
        Vec2::new(1.0, 2.0),
        Vec2::new(-2.0, -4.0),
    )
    .unwrap_err();
    assert!(err.to_string().contains("parallel"), "{err}");
    assert!(
        ellipse_from_conjugate_semi_diameters(p(0.0, 0.0), Vec2::ZERO, Vec2::new(1.0, 0.0))
            .is_err()
    );
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(2000))]

    /// Apollonius' theorems [EoM] (docs/sources.md M4) for random conjugate pairs: |p|²+|q|² =
    /// a²+b², |p×q| = ab, and the curve c + p cos t + q sin t lies on the ellipse.
    #[test]
    fn apollonius_invariants(px in -50.0..50.0f64, py in -50.0..50.0f64,
                             turn in 0.2..(PI - 0.2), ratio in 0.05..3.0f64) {
        let pv = Vec2::new(px, py);
        prop_assume!(pv.length() > 0.1);
        let qv = pv.rotated(turn) * ratio;
        let e = ellipse_from_conjugate_semi_diameters(p(3.0, -4.0), pv, qv).unwrap();
        let s = pv.length_squared() + qv.length_squared();
        prop_assert!((e.a().powi(2) + e.b().powi(2) - s).abs() <= 1e-12 * s);
        prop_assert!((e.a() * e.b() - pv.cross(qv).abs()).abs() <= 1e-12 * s);
        let c = Conic::from_ellipse(&e);
        for i in 0..8 {
            let t = i as f64 * TAU / 8.0;
            prop_assert!(c.point_residual(e.centre() + pv * t.cos() + qv * t.sin()) < 1e-12);
        }
    }
}

// ---------------------------------------------------------------------------------------------
// §5 dual conic
// ---------------------------------------------------------------------------------------------

#[test]
fn dual_conic_check_values() {
    // docs/sources.md M5 "Dual conic" table and out_dual.txt (dual_check.py): the ellipse
    // C = (1,2), a = 5, b = 3, θ = 30°, whose reference matrix A has det A = −1/225.
    let e = Ellipse::new(p(1.0, 2.0), 5.0, 3.0, deg(30.0)).unwrap();
    let c = Conic::from_ellipse(&e);
    let m = c.matrix();
    // Our matrix is A scaled to unit norm: m = κ A with det m = κ³ det A.
    let kappa = (m.determinant() / (-1.0 / 225.0)).cbrt();
    assert!(kappa > 0.0, "sign rule: interior negative, det < 0");
    let a_ref = Matrix3::new(
        0.05777778,
        -0.03079201,
        0.00380625,
        -0.03079201,
        0.09333333,
        -0.15587465,
        0.00380625,
        -0.15587465,
        -0.69205695,
    );
    assert!((m / kappa - a_ref).amax() < 5e-9, "{}", m / kappa);
    // adj(A) printed in out_dual.txt; adj(m) = κ² adj(A). Computed here as det·inverse,
    // independently of the crate's cofactor code.
    let adj = m.try_inverse().unwrap() * m.determinant();
    let adj_ref = Matrix3::new(
        -0.08888889,
        -0.02190313,
        0.00444444,
        -0.02190313,
        -0.04,
        0.00888889,
        0.00444444,
        0.00888889,
        0.00444444,
    );
    assert!((adj / kappa.powi(2) - adj_ref).amax() < 5e-9);
    let value = |l: &Line| {
        let v = Vector3::from(l.homogeneous());
        v.dot(&(adj * v)) / kappa.powi(2)
    };
    // Tangent at eccentric angle 40°: 0.09700525 x + 0.99528387 y − 5.88402991 = 0, value ≈ 0.
    let t40 = tangent(&e, deg(40.0));
    let h = Vector3::from(t40.homogeneous());
    let h_ref = Vector3::new(0.09700525, 0.99528387, -5.88402991);
    assert!((h - h_ref).amax().min((h + h_ref).amax()) < 5e-9, "{h}");
    assert!(value(&t40).abs() < 1e-15);
    // Shifted by 0.5 in the constant term: inward (secant) −0.015762, outward (misses) +0.017984.
    // Our line's normal points inward (left of counter-clockwise travel).
    assert_close(value(&t40.shifted(0.5)), -0.015762, 5e-7, "secant");
    assert_close(value(&t40.shifted(-0.5)), 0.017984, 5e-7, "misses");
    // Tangents with unit normal at 70°: n·x = 6.509666736697 and n·x = −2.066855966902.
    let n = Vec2::from_angle(deg(70.0));
    for beta in [6.509666736697, -2.066855966902] {
        let q = Point::ORIGIN + n * beta;
        let l = Line::through(q, q + n.perp()).unwrap();
        assert!(value(&l).abs() < 1e-13, "{}", value(&l));
        assert!(c.tangency_residual(&l) < 1e-13);
    }
    // The crate's dual keeps the sign test (negative secant, positive miss).
    let d = c.dual().unwrap();
    assert!(d.line_value(&t40).abs() < 1e-15);
    assert!(d.line_value(&t40.shifted(0.5)) < 0.0);
    assert!(d.line_value(&t40.shifted(-0.5)) > 0.0);
    assert!(d.dual().unwrap().projective_distance(&c) < 1e-14);
}

// ---------------------------------------------------------------------------------------------
// §5 five points
// ---------------------------------------------------------------------------------------------

#[test]
fn five_point_check() {
    // docs/sources.md M5 "5-point check" (conic_constraints.py): the ellipse C = (2,1), a = 4,
    // b = 2, θ = 20° at eccentric angles 0°, 70°, 150°, 220°, 300°.
    let e = Ellipse::new(p(2.0, 1.0), 4.0, 2.0, deg(20.0)).unwrap();
    let printed = [
        (5.758770483144, 2.368080573303),
        (2.642787609687, 3.233955556881),
        (-1.597210868723, 0.754900089882),
        (-0.439692620786, -1.256056068028),
        (4.471781507024, 0.056444923953),
    ];
    let pts: Vec<Point> = [0.0, 70.0, 150.0, 220.0, 300.0]
        .iter()
        .map(|&t| e.point(deg(t)))
        .collect();
    for (q, r) in pts.iter().zip(printed) {
        assert!(q.distance(p(r.0, r.1)) < 1e-12, "{q:?} vs {r:?}");
    }
    let sols = conics_through_and_tangent(&pts, &[]).unwrap();
    assert_eq!(sols.len(), 1);
    let s = &sols[0];
    assert_eq!(s.kind, ConicKind::Ellipse);
    let f = s.ellipse.unwrap();
    assert!(f.centre().distance(p(2.0, 1.0)) < 1e-12, "{f:?}");
    assert_close(f.a(), 4.0, 1e-12, "a");
    assert_close(f.b(), 2.0, 1e-12, "b");
    assert_close(f.angle(), deg(20.0), 1e-12, "angle");
    assert!(s.point_residual < 1e-14 && s.tangency_residual == 0.0);
    // The printed (12-decimal) points give the same ellipse to the rounding of the print.
    let pts: Vec<Point> = printed.iter().map(|&(x, y)| p(x, y)).collect();
    let f = conics_through_and_tangent(&pts, &[]).unwrap()[0]
        .ellipse
        .unwrap();
    assert!(f.centre().distance(p(2.0, 1.0)) < 1e-11 && (f.a() - 4.0).abs() < 1e-11);
}

// ---------------------------------------------------------------------------------------------
// §5 worked example, three points and two lines
// ---------------------------------------------------------------------------------------------

/// One row of the docs/sources.md M5 worked-example table.
struct Row {
    local_centre: (f64, f64),
    world_centre: (f64, f64),
    a: f64,
    b: f64,
    local_angle: f64,
    world_angle: f64,
    touch_x0: f64,
    touch_y0: f64,
    alpha_beta_m: (f64, f64, f64),
}

const WORKED: [Row; 4] = [
    Row {
        local_centre: (5.1646338784, 4.6148994004),
        world_centre: (21.3627674625, 1.7906998474),
        a: 5.2361809521,
        b: 4.5335580520,
        local_angle: 19.22331532,
        world_angle: 56.09321297,
        touch_x0: 4.2016842467,
        touch_y0: 4.7021958496,
        alpha_beta_m: (-0.212666599177, -0.237999797530, -0.332104222422),
    },
    Row {
        local_centre: (6.7258124386, 5.6433671800),
        world_centre: (21.9946296429, 3.5501812071),
        a: 8.1519506989,
        b: 3.2603444436,
        local_angle: -38.06143938,
        world_angle: -1.19154173,
        touch_x0: 9.6722535804,
        touch_y0: 11.5274731143,
        alpha_beta_m: (-0.0867492806174, -0.103388521784, 0.0716360098175),
    },
    Row {
        local_centre: (11.5537574538, 4.0340521749),
        world_centre: (26.8225746581, 5.1594962122),
        a: 11.6757602965,
        b: 3.6659936921,
        local_angle: -8.73502031,
        world_angle: 28.13487734,
        touch_x0: 5.6305287436,
        touch_y0: 16.1261581706,
        alpha_beta_m: (-0.0620110499611, -0.177603213753, -0.115367436447),
    },
    Row {
        local_centre: (4.5574617935, 9.6508561045),
        world_centre: (17.8554557721, 5.4551619597),
        a: 9.8455760426,
        b: 4.1199652838,
        local_angle: -77.41469981,
        world_angle: -40.54480216,
        touch_x0: 13.3819588760,
        touch_y0: 6.3194151523,
        alpha_beta_m: (-0.158242491733, -0.0747274751977, 0.120444117537),
    },
];

/// Where the ellipse touches the line, from the support function (docs/sources.md M0).
fn touch_point(e: &Ellipse, l: &Line) -> Point {
    let (sxx, sxy, syy) = e.shape_matrix();
    let n = l.normal();
    let n = if n.dot(e.centre().to_vec()) > l.offset() {
        -n
    } else {
        n
    };
    let sn = Vec2::new(sxx * n.x + sxy * n.y, sxy * n.x + syy * n.y);
    e.centre() + sn / n.dot(sn).sqrt()
}

#[test]
fn three_points_two_lines_worked_example_local_frame() {
    // docs/sources.md M5 "Worked example", Method A (conic_constraints.py, out_conics.txt):
    // lines x = 0 and y = 0, points (1,7), (8,1), (9,8); rows in the order of the signs (s₂, s₃).
    let x0 = line_abc(1.0, 0.0, 0.0);
    let y0 = line_abc(0.0, 1.0, 0.0);
    let pts = [p(1.0, 7.0), p(8.0, 1.0), p(9.0, 8.0)];
    let sols = conics_through_and_tangent(&pts, &[x0, y0]).unwrap();
    assert_eq!(sols.len(), 4);
    for (s, row) in sols.iter().zip(WORKED.iter()) {
        assert_eq!(s.kind, ConicKind::Ellipse);
        let e = s.ellipse.unwrap();
        let c = e.centre();
        assert_close(c.x, row.local_centre.0, 1e-9, "local centre x");
        assert_close(c.y, row.local_centre.1, 1e-9, "local centre y");
        assert_close(e.a(), row.a, 1e-9, "a");
        assert_close(e.b(), row.b, 1e-9, "b");
        assert_close(e.angle().to_degrees(), row.local_angle, 1e-8, "local angle");
        let tx = touch_point(&e, &x0);
        let ty = touch_point(&e, &y0);
        assert!(tx.distance(p(0.0, row.touch_x0)) < 1e-9, "{tx:?}");
        assert!(ty.distance(p(row.touch_y0, 0.0)) < 1e-9, "{ty:?}");
        // The conic is (αx + βy + 1)² = m² xy: coefficients ∝ [α², 2αβ − m², β², 2α, 2β, 1].
        let (al, be, m) = row.alpha_beta_m;
        let want = [
            al * al,
            2.0 * al * be - m * m,
            be * be,
            2.0 * al,
            2.0 * be,
            1.0,
        ];
        let k = s.conic.coefficients();
        for (got, w) in k.iter().zip(want) {
            assert_close(got / k[5], w, 1e-11, "coefficient");
        }
        assert!(s.point_residual < 1e-14 && s.tangency_residual < 1e-14);
    }
}

#[test]
fn three_points_two_lines_worked_example_world_frame() {
    // docs/sources.md M5 "Method B": the same problem moved by x' = R x + (20, −5),
    // R = [[4/5, −3/5], [3/5, 4/5]]; lines −0.6x + 0.8y + 16 = 0 and 0.8x + 0.6y − 13 = 0.
    let pts = [
        p(83.0 / 5.0, 6.0 / 5.0),
        p(129.0 / 5.0, 3.0 / 5.0),
        p(112.0 / 5.0, 34.0 / 5.0),
    ];
    let lines = [line_abc(-0.6, 0.8, 16.0), line_abc(0.8, 0.6, -13.0)];
    let sols = conics_through_and_tangent(&pts, &lines).unwrap();
    assert_eq!(sols.len(), 4);
    for (s, row) in sols.iter().zip(WORKED.iter()) {
        let e = s.ellipse.unwrap();
        assert!(
            e.centre()
                .distance(p(row.world_centre.0, row.world_centre.1))
                < 2e-9,
            "{e:?}"
        );
        assert_close(e.a(), row.a, 1e-9, "a");
        assert_close(e.b(), row.b, 1e-9, "b");
        assert_close(e.angle().to_degrees(), row.world_angle, 1e-8, "world angle");
        assert!(s.point_residual < 1e-14 && s.tangency_residual < 1e-14);
    }
}

#[test]
fn three_points_two_lines_sign_cases() {
    // docs/sources.md M5 (checked cases) and §10 surprise S4.
    let lines = [line_abc(1.0, 0.0, 0.0), line_abc(0.0, 1.0, 0.0)];
    // (1,7), (8,−1), (9,8): four complex solutions → refused with the reason.
    let err =
        conics_through_and_tangent(&[p(1.0, 7.0), p(8.0, -1.0), p(9.0, 8.0)], &lines).unwrap_err();
    let msg = err.to_string();
    assert!(
        matches!(err, ConstraintError::NoRealSolution { .. }),
        "{msg}"
    );
    assert!(
        msg.contains("point(s) 1 and 3") && msg.contains("point(s) 2"),
        "{msg}"
    );
    assert!(msg.contains("regions"), "{msg}");
    // (−1,−7), (−8,−1), (−9,−8): four real ellipses.
    let sols =
        conics_through_and_tangent(&[p(-1.0, -7.0), p(-8.0, -1.0), p(-9.0, -8.0)], &lines).unwrap();
    assert_eq!(sols.len(), 4);
    assert!(
        sols.iter()
            .all(|s| s.kind == ConicKind::Ellipse && s.ellipse.is_ok())
    );
    // (1,7), (−8,−1), (9,8): four real hyperbolas, reported but not cuttable.
    let sols =
        conics_through_and_tangent(&[p(1.0, 7.0), p(-8.0, -1.0), p(9.0, 8.0)], &lines).unwrap();
    assert_eq!(sols.len(), 4);
    for s in &sols {
        assert_eq!(s.kind, ConicKind::Hyperbola);
        let why = s.ellipse.unwrap_err();
        assert!(why.to_string().contains("hyperbola"), "{why}");
        assert!(s.point_residual < 1e-13 && s.tangency_residual < 1e-13);
    }
}

// ---------------------------------------------------------------------------------------------
// §5 generic configuration, every split
// ---------------------------------------------------------------------------------------------

/// `(centre x, centre y, a, b, angle°)` of one ellipse.
type Row5 = (f64, f64, f64, f64, f64);

/// The ellipses for each split (number of points), from out_conics.txt (conic_constraints.py,
/// "Counts for p points + t lines").
const GENERIC: [(usize, &[Row5]); 6] = [
    (
        5,
        &[(5.86150998, 5.64269351, 5.51595993, 3.88530280, -41.535693)],
    ),
    (
        4,
        &[
            (10.58768151, 4.09102142, 10.33202708, 3.60751050, -11.494555),
            (3.46558392, 14.34429149, 14.69609059, 4.56453751, -76.772969),
        ],
    ),
    (
        3,
        &[
            (5.16463388, 4.61489940, 5.23618095, 4.53355805, 19.223315),
            (4.55746179, 9.65085610, 9.84557604, 4.11996528, -77.414700),
            (6.72581244, 5.64336718, 8.15195070, 3.26034444, -38.061439),
            (11.55375745, 4.03405217, 11.67576030, 3.66599369, -8.735020),
        ],
    ),
    (
        2,
        &[
            (4.32098908, 8.40740635, 8.74317010, 3.59338347, -72.478234),
            (5.88272866, 5.27260427, 6.30991254, 4.75308910, 33.361581),
            (7.48719943, 6.25754410, 8.76906499, 4.28001315, -36.615122),
            (8.96366740, 3.68056831, 9.26405841, 2.84097483, -15.389052),
        ],
    ),
    (
        1,
        &[
            (8.70681547, 5.25863691, 9.64389974, 3.23374326, -27.156245),
            (4.64424836, 6.07115033, 6.71319820, 3.65525363, 59.415746),
        ],
    ),
    (
        0,
        &[(7.17488789, 5.56502242, 7.69981958, 4.81261564, -27.704195)],
    ),
];

#[test]
fn generic_configuration_counts_and_values() {
    // docs/sources.md M5 "Counts": points (1,7), (8,1), (9,8), (3,3), (6,10); lines y = 0, x = 0,
    // x + y = 20, x − 3y + 30 = 0, 2x − y − 26 = 0; the first p points and first t lines give
    // 1, 2, 4, 4, 2, 1 real ellipses (out_conics.txt).
    let pts = [
        p(1.0, 7.0),
        p(8.0, 1.0),
        p(9.0, 8.0),
        p(3.0, 3.0),
        p(6.0, 10.0),
    ];
    let lines = [
        line_abc(0.0, 1.0, 0.0),
        line_abc(1.0, 0.0, 0.0),
        line_abc(1.0, 1.0, -20.0),
        line_abc(1.0, -3.0, 30.0),
        line_abc(2.0, -1.0, -26.0),
    ];
    for (np, want) in GENERIC {
        let sols = conics_through_and_tangent(&pts[..np], &lines[..5 - np]).unwrap();
        assert_eq!(sols.len(), want.len(), "p = {np}");
        let mut matched = vec![false; want.len()];
        for s in &sols {
            assert_eq!(s.kind, ConicKind::Ellipse, "p = {np}");
            assert!(
                s.point_residual < 1e-13 && s.tangency_residual < 1e-13,
                "{s:?}"
            );
            let e = s.ellipse.unwrap();
            for l in &lines[..5 - np] {
                assert!(
                    support_gap(&e, l) < 1e-11,
                    "p = {np}: {}",
                    support_gap(&e, l)
                );
            }
            let i = want
                .iter()
                .position(|&(cx, cy, a, b, ang)| {
                    e.centre().distance(p(cx, cy)) < 2e-8
                        && (e.a() - a).abs() < 1e-8
                        && (e.b() - b).abs() < 1e-8
                        && (e.angle().to_degrees() - ang).abs() < 1e-6
                })
                .unwrap_or_else(|| panic!("p = {np}: {e:?} is not in out_conics.txt"));
            assert!(!matched[i], "p = {np}: two solutions match one row");
            matched[i] = true;
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Refusals
// ---------------------------------------------------------------------------------------------

#[test]
fn refusals_carry_their_reasons() {
    refuses_collinear_points();
    refuses_points_on_lines_and_repeats();
    refuses_parallel_and_concurrent_lines();
    takes_two_parallel_lines_for_three_points_two_lines();
}

/// Three collinear points, for 5+0 and 4+1.
fn refuses_collinear_points() {
    let pts = [
        p(0.0, 0.0),
        p(1.0, 1.0),
        p(2.0, 2.0),
        p(3.0, -1.0),
        p(-2.0, 5.0),
    ];
    let err = conics_through_and_tangent(&pts, &[]).unwrap_err();
    assert_eq!(err, ConstraintError::CollinearPoints { points: [1, 2, 3] });
    assert!(err.to_string().contains("one straight line"), "{err}");
    // 4+1 with three collinear points.
    let err = conics_through_and_tangent(&pts[..4], &[line_abc(0.0, 1.0, 10.0)]).unwrap_err();
    assert!(
        matches!(err, ConstraintError::CollinearPoints { .. }),
        "{err}"
    );
}

/// A point on a line to be touched, the same line twice, the same point twice.
fn refuses_points_on_lines_and_repeats() {
    // A point on a line that must be touched.
    let err = conics_through_and_tangent(
        &[p(1.0, 7.0), p(0.0, 1.0), p(9.0, 8.0)],
        &[line_abc(0.0, 1.0, 0.0), line_abc(1.0, 0.0, 0.0)],
    )
    .unwrap_err();
    assert_eq!(err, ConstraintError::PointOnLine { point: 2, line: 2 });
    assert!(err.to_string().contains("point of contact"), "{err}");
    // The same line twice (opposite orientation).
    let err = conics_through_and_tangent(
        &[p(1.0, 7.0), p(8.0, 1.0), p(9.0, 8.0)],
        &[line_abc(1.0, 1.0, -1.0), line_abc(-2.0, -2.0, 2.0)],
    )
    .unwrap_err();
    assert_eq!(
        err,
        ConstraintError::CoincidentLines {
            first: 1,
            second: 2
        }
    );
    // Coincident points.
    let err =
        conics_through_and_tangent(&[p(1.0, 7.0), p(1.0, 7.0)], &[line_abc(1.0, 0.0, 0.0); 3])
            .unwrap_err();
    assert!(matches!(
        err,
        ConstraintError::CoincidentPoints {
            first: 1,
            second: 2,
            ..
        }
    ));
}

/// Three parallel lines (0+5) and three lines through one point (1+4).
fn refuses_parallel_and_concurrent_lines() {
    // Three parallel lines (0+5): concurrent at infinity.
    let lines = [
        line_abc(0.0, 1.0, 0.0),
        line_abc(1.0, 0.0, 0.0),
        line_abc(0.0, 1.0, -3.0),
        line_abc(1.0, 1.0, -10.0),
        line_abc(0.0, 2.0, 7.0),
    ];
    let err = conics_through_and_tangent(&[], &lines).unwrap_err();
    assert_eq!(err, ConstraintError::ParallelLines { lines: [1, 3, 5] });
    assert!(err.to_string().contains("parallel"), "{err}");
    // Three lines through one point (1+4).
    let lines = [
        line_abc(1.0, -1.0, 0.0),
        line_abc(1.0, 0.0, -4.0),
        line_abc(1.0, 1.0, -8.0),
        line_abc(0.0, 1.0, 0.0),
    ];
    let err = conics_through_and_tangent(&[p(3.0, 1.0)], &lines).unwrap_err();
    match err {
        ConstraintError::ConcurrentLines { lines, x, y } => {
            assert_eq!(lines, [1, 2, 3]);
            assert!((x - 4.0).abs() < 1e-12 && (y - 4.0).abs() < 1e-12);
        }
        other => panic!("{other}"),
    }
}

/// Two parallel lines are not refused for 3+2.
fn takes_two_parallel_lines_for_three_points_two_lines() {
    // Two parallel lines are fine for 3+2 (the frame is projective).
    let sols = conics_through_and_tangent(
        &[p(1.0, 1.0), p(3.0, 2.0), p(5.0, 1.5)],
        &[line_abc(0.0, 1.0, 0.0), line_abc(0.0, 1.0, -3.0)],
    )
    .unwrap();
    assert_eq!(sols.len(), 4);
    assert!(sols.iter().all(|s| s.tangency_residual < 1e-13));
}

#[test]
fn four_points_one_line_without_real_solution() {
    // The line cuts off one corner of a convex quadrilateral: the pairs of Desargues' involution
    // separate, so both solutions are complex.
    let pts = [p(0.0, 0.0), p(6.0, 0.0), p(6.0, 4.0), p(0.0, 4.0)];
    let cut = Line::through(p(4.0, 0.0), p(6.0, 1.0)).unwrap();
    let err = conics_through_and_tangent(&pts, &[cut]).unwrap_err();
    let msg = err.to_string();
    assert!(
        matches!(err, ConstraintError::NoRealSolution { .. }),
        "{msg}"
    );
    assert!(msg.contains("3 of the points on one side and 1"), "{msg}");
    // Moved clear of the quadrilateral it has two (both on one side).
    let clear = Line::through(p(8.0, 0.0), p(10.0, 1.0)).unwrap();
    let sols = conics_through_and_tangent(&pts, &[clear]).unwrap();
    assert_eq!(sols.len(), 2);
    // 2+3: line 3 passes between the two points, lines 1 and 2 do not.
    let lines = [
        line_abc(0.0, 1.0, 0.0),
        line_abc(1.0, 0.0, 0.0),
        line_abc(1.0, 1.0, -8.0),
    ];
    let err = conics_through_and_tangent(&[p(2.0, 3.0), p(7.0, 6.0)], &lines).unwrap_err();
    let msg = err.to_string();
    assert!(msg.contains("line(s) 3 pass between"), "{msg}");
}

#[test]
fn thin_solution_far_from_the_origin_stays_tangent() {
    // Regression (found by the property test below): 2 points and 3 tangents of the ellipse
    // centre (0, 186.9), a = 2, b = 0.3; two of the four solutions are ellipses with b ≈ 1e-4.
    // Read from the point conic their support-function gaps were 4e-5; read from the line conic
    // they are at rounding level. The world conic's adjugate drowns in rounding here, which is
    // why the residuals are measured in the normalised frame.
    let pts = [
        p(2.0, 186.92366712574895),
        p(-0.24617681730908825, 187.22138583851142),
    ];
    let by_normal = |nx: f64, ny: f64, offset: f64| {
        let n = Vec2::new(nx, ny);
        let q = Point::ORIGIN + n * offset;
        Line::through(q, q + n.perp()).unwrap()
    };
    let lines = [
        by_normal(0.1656419868511047, -0.9861859521368261, -184.78565645544157),
        by_normal(
            -0.04979471093848618,
            -0.9987594739288096,
            -187.00752843026635,
        ),
        by_normal(
            -0.21830812079116485,
            -0.9758798924030715,
            -182.9407329377793,
        ),
    ];
    let sols = conics_through_and_tangent(&pts, &lines).unwrap();
    assert_eq!(sols.len(), 4);
    let mut thin = 0;
    for s in &sols {
        assert!(
            s.point_residual < 1e-12 && s.tangency_residual < 1e-12,
            "{s:?}"
        );
        if let Ok(f) = s.ellipse {
            thin += usize::from(f.b() < 1e-3);
            for l in &lines {
                assert!(support_gap(&f, l) < 1e-12, "{}", support_gap(&f, l));
            }
            for &q in &pts {
                assert!(f.distance_to(q).0 < 1e-11, "{}", f.distance_to(q).0);
            }
        }
    }
    assert_eq!(thin, 2, "{sols:?}");
}
