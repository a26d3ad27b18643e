//! Fitting speed and move counts. Run with `cargo bench --bench fit`; the counts table is printed
//! to standard error before the timings.
//!
//! * `fit_arcs/<shape>/<tolerance>`: one ellipse path fitted with an arc spline (two-sided band),
//!   including the fitter's own deviation measurement, per ellipse.
//! * `fit_lines/<shape>/<tolerance>`: the same with the band polygon.
//!
//! Shapes: `50x20` (the test ellipse, inset 0), `50x20-tool6` (its inside parallel curve for a
//! 6 mm tool, inset 3), `30x18` (inset 0), `80x25-boss` (outside parallel curve at 3 mm,
//! clockwise). Targets: lines within 3 % (or one move) of `∫√(κ/8W) ds`, arcs within 25 % (or one
//! move) of `∫(|κ′|/(72√3 w))^{1/3} ds` (STANDARDS-AND-PRACTICE §3.2–3.3), `W` the band's width
//! (2ε two-sided, ε one-sided), `w` half of it; estimates from `tests/support/fit_estimates.rs`.
//!
//! Measured counts (moves) against the estimates (in brackets), as printed by this bench; every
//! row meets its target (also asserted in `tests/fit_arcs.rs`). Kink: the largest change of
//! direction between consecutive arcs of the two-sided spline; dev: its measured deviation.
//!
//! | shape | ε (mm) | lines ±ε | lines one-sided | arcs ±ε | arcs one-sided | kink ±ε | dev ±ε |
//! |---|---|---|---|---|---|---|---|
//! | 50x20       | 0.1    | 27 (26.88)   | 38 (38.01)     | 9 (9.61)    | 13 (12.11)   | 1.664° | 0.0884 |
//! | 50x20       | 0.01   | 86 (85.00)   | 121 (120.21)   | 21 (20.71)  | 27 (26.10)   | 0.405° | 0.00833 |
//! | 50x20       | 0.001  | 269 (268.81) | 381 (380.15)   | 45 (44.62)  | 57 (56.22)   | 0.109° | 0.000915 |
//! | 50x20       | 0.0001 | 851 (850.04) | 1203 (1202.13) | 97 (96.14)  | 121 (121.13) | 0.022° | 0.0000945 |
//! | 50x20-tool6 | 0.1    | 26 (25.06)   | 36 (35.44)     | 9 (9.61)    | 13 (12.11)   | 2.349° | 0.0914 |
//! | 50x20-tool6 | 0.01   | 80 (79.25)   | 113 (112.07)   | 21 (20.71)  | 27 (26.10)   | 0.503° | 0.00838 |
//! | 50x20-tool6 | 0.001  | 251 (250.61) | 355 (354.41)   | 45 (44.62)  | 57 (56.22)   | 0.147° | 0.000912 |
//! | 50x20-tool6 | 0.0001 | 793 (792.48) | 1121 (1120.74) | 97 (96.14)  | 121 (121.13) | 0.034° | 0.0000946 |
//! | 30x18       | 0.1    | 24 (23.66)   | 34 (33.46)     | 9 (7.28)    | 9 (9.17)     | 1.196° | 0.0394 |
//! | 30x18       | 0.01   | 75 (74.81)   | 106 (105.79)   | 17 (15.68)  | 21 (19.75)   | 0.311° | 0.00668 |
//! | 30x18       | 0.001  | 237 (236.56) | 335 (334.55)   | 33 (33.78)  | 42 (42.56)   | 0.088° | 0.000983 |
//! | 30x18       | 0.0001 | 749 (748.08) | 1058 (1057.94) | 73 (72.77)  | 93 (91.68)   | 0.017° | 0.0000952 |
//! | 80x25-boss  | 0.1    | 33 (32.80)   | 47 (46.39)     | 13 (11.49)  | 15 (14.48)   | 0.958° | 0.0559 |
//! | 80x25-boss  | 0.01   | 104 (103.73) | 147 (146.70)   | 25 (24.76)  | 32 (31.20)   | 0.377° | 0.00866 |
//! | 80x25-boss  | 0.001  | 329 (328.03) | 464 (463.91)   | 53 (53.35)  | 68 (67.22)   | 0.086° | 0.000963 |
//! | 80x25-boss  | 0.0001 | 1038 (1037.33) | 1468 (1467.00) | 115 (114.94) | 145 (144.82) | 0.009° | 0.0000995 |
//!
//! The arc counts do not depend on the offset: for a parallel curve `|κ_d′|^{1/3} ds_d =
//! |κ′|^{1/3} ds` (`κ_d′ = κ′/(1 − dκ)³` and `ds_d = (1 − dκ) ds`).
//!
//! Timings (release build, a shared 2-core machine with other builds running, criterion median per
//! ellipse, fit plus the fitter's own deviation measurement), ms:
//!
//! | shape | 0.1 | 0.01 | 0.001 | 0.0001 |
//! |---|---|---|---|---|
//! | arcs 50x20       | 22.1 | 33.2 | 62.8 | 141.1 |
//! | arcs 50x20-tool6 | 22.4 | 26.9 | 53.3 | 141.5 |
//! | arcs 30x18       | 18.8 | 23.8 | 38.8 | 93.1 |
//! | arcs 80x25-boss  | 16.6 | 36.4 | 65.4 | 119.4 |
//! | lines 50x20      | 7.5  | 22.1 | 67.0 | 212.5 |

#[path = "../tests/support/fit_estimates.rs"]
mod fit_estimates;

use conicut::fit::{FitOptions, MoveKind, fit_cut};
use conicut::geom::{Ellipse, Point};
use conicut::plan::{FeatureKind, PlannedCut};
use criterion::{BenchmarkId, Criterion, criterion_group, criterion_main};
use std::hint::black_box;
use std::time::Duration;

const TOLERANCES: [f64; 4] = [0.1, 0.01, 0.001, 0.0001];

fn shapes() -> Vec<(&'static str, Ellipse, f64)> {
    vec![
        (
            "50x20",
            Ellipse::new(Point::ORIGIN, 50.0, 20.0, 0.0).unwrap(),
            0.0,
        ),
        (
            "50x20-tool6",
            Ellipse::new(Point::ORIGIN, 50.0, 20.0, 0.0).unwrap(),
            3.0,
        ),
        (
            "30x18",
            Ellipse::new(Point::new(120.0, -40.0), 30.0, 18.0, 0.7).unwrap(),
            0.0,
        ),
        (
            "80x25-boss",
            Ellipse::new(Point::new(-5.0, 300.0), 80.0, 25.0, -1.2).unwrap(),
            -3.0,
        ),
    ]
}

fn cut(e: Ellipse, inset: f64) -> PlannedCut {
    PlannedCut::around_ellipse("bench", FeatureKind::Opening, e, inset)
}

fn options(tolerance: f64, moves: MoveKind, scrap_side_only: bool) -> FitOptions {
    FitOptions {
        tolerance,
        moves,
        scrap_side_only,
    }
}

/// Prints the counts table (moves, estimate, within target?) for every shape and tolerance.
fn print_counts() {
    eprintln!(
        "shape        tol     lines±ε (est)      lines 1-sided (est)  arcs±ε (est)    arcs 1-sided (est)  kink±ε°  dev±ε arcs"
    );
    for (name, e, inset) in shapes() {
        let c = cut(e, inset);
        for tol in TOLERANCES {
            let mut row = format!("{name:<12} {tol:<7}");
            let mut kink = 0.0;
            let mut dev = 0.0;
            for (kind, one_sided) in [
                (MoveKind::Lines, false),
                (MoveKind::Lines, true),
                (MoveKind::Arcs, false),
                (MoveKind::Arcs, true),
            ] {
                let width = if one_sided { tol } else { 2.0 * tol };
                let (est, share) = match kind {
                    MoveKind::Lines => {
                        (fit_estimates::band_lines(e.a(), e.b(), inset, width), 0.03)
                    }
                    MoveKind::Arcs => (
                        fit_estimates::spline_arcs(e.a(), e.b(), inset, width / 2.0),
                        0.25,
                    ),
                };
                match fit_cut(&c, &options(tol, kind, one_sided)) {
                    Ok(f) => {
                        let n = f.moves.len();
                        let ok = n as f64 <= (est * (1.0 + share)).max(est + 1.0);
                        row += &format!(" {n:>5} ({est:>8.2}){} ", if ok { " " } else { "!" });
                        if kind == MoveKind::Arcs && !one_sided {
                            kink = f.largest_kink_deg;
                            dev = f.measured_deviation;
                        }
                    }
                    Err(err) => row += &format!(" error: {err} "),
                }
            }
            eprintln!("{row} {kink:>7.3} {dev:>10.3e}");
        }
    }
}

fn fit_arcs(c: &mut Criterion) {
    print_counts();
    let mut group = c.benchmark_group("fit_arcs");
    group
        .sample_size(10)
        .warm_up_time(Duration::from_millis(500))
        .measurement_time(Duration::from_secs(2));
    for (name, e, inset) in shapes() {
        let planned = cut(e, inset);
        for tol in TOLERANCES {
            let opts = options(tol, MoveKind::Arcs, false);
            group.bench_with_input(BenchmarkId::new(name, tol), &opts, |b, o| {
                b.iter(|| fit_cut(black_box(&planned), black_box(o)).unwrap())
            });
        }
    }
    group.finish();
}

fn fit_lines(c: &mut Criterion) {
    let mut group = c.benchmark_group("fit_lines");
    group
        .sample_size(10)
        .warm_up_time(Duration::from_millis(500))
        .measurement_time(Duration::from_secs(2));
    let (name, e, inset) = shapes()[0];
    let planned = cut(e, inset);
    for tol in TOLERANCES {
        let opts = options(tol, MoveKind::Lines, false);
        group.bench_with_input(BenchmarkId::new(name, tol), &opts, |b, o| {
            b.iter(|| fit_cut(black_box(&planned), black_box(o)).unwrap())
        });
    }
    group.finish();
}

criterion_group!(benches, fit_arcs, fit_lines);
criterion_main!(benches);
