//! Elliptical pockets: clearing rings at the stepover, then the finish contour.
//!
//! What is checked, and against what:
//!
//! * **No islands** (independent computation): the pocket's interior is sampled on a square grid
//!   [`GRID`] = 0.1 mm apart, and its major axis (the medial axis, where islands begin) every
//!   [`AXIS_STEP`] = 0.01 mm; every such point must lie within `r + ε + STEP/2` of the tool-centre
//!   path at the floor of the cut, where `r` is the tool radius, `ε` the job's tolerance (the
//!   fitted and written paths keep within it of the exact curves) and [`STEP`]`/2` = 0.005 mm the
//!   sampling of the path (every path point is within half a step of a sample). Any uncovered
//!   patch holding a disc wider than the grid's diagonal (0.14 mm) holds a grid point, so the
//!   whole interior is covered within `r + ε + STEP/2 + 0.0707` mm (the grid's half-diagonal).
//!   The same check fails on paths with islands: a ring left out, rings a tool diameter apart
//!   where the rings are trimmed, the finish contour alone.
//! * **No gouge** (independent computation: Eberly's point-to-ellipse distance): the clearing,
//!   links, entry and lead-in keep at least `r (1 − 1e-6)` (the planner's gouge margin) less the
//!   output rounding `2√2 · 10⁻⁴` mm (four decimals, arcs: the job's own rounding budget) from
//!   the ellipse, inside it; the finish contour at least `r − ε` (two-sided fit), or
//!   `r (1 − 1e-6)` less the rounding with `scrap_side_only`. Straight moves are checked at their
//!   ends (inside a convex region the distance to its edge is concave, so smallest at an end of a
//!   segment), arcs every [`STEP`]; between arc samples the distance can dip below the samples'
//!   by a second-order amount only, `½ |δ″| (STEP/2)²`, below 1e-4 mm for the curvatures here.
//! * **Ring levels**: a worked example by hand (a circle, where every ring is a circle), the
//!   bounds of the module docs of `conicut::plan::pocket` (gap ≤ stepover, gap ≤ r − h once
//!   rings are trimmed, innermost ring at `b − r + h`, fewest rings), the vertices of trimmed
//!   rings on the exact level set and their chords within `h` inside it (Eberly's distance).
//! * **Refusals**: stepovers that are not positive, above the tool diameter or below 1 % of it
//!   (our sanity limit), naming the feature; pockets on laser, plasma and waterjet profiles.
//!
//! Stepover: 40 % of the tool diameter by default (common practice: 30–50 %, up to the
//! diameter).

#[path = "support/demo_job.rs"]
mod demo_job;
#[path = "support/gcode_read.rs"]
mod gcode_read;
#[path = "support/machine.rs"]
mod machine;
use conicut::chain::Part;
use conicut::fit::{FitOptions, MoveKind, fit_cut};
use conicut::geom::Element;
use conicut::geom::ExactPath;
use conicut::geom::Move;
use conicut::geom::{Ellipse, Point, Vec2};
use conicut::pipeline::{JobError, JobSettings, LeadRequest, run_job};
use conicut::plan::pocket::{self, RING_CHORD_TOLERANCE};
use conicut::plan::{
    CutSide, FeatureKind, LeadKind, Opening, Plan, PlanError, PlanOptions, PlannedCut, plan_cuts,
};
use conicut::settings::job_file::parse_job_file;
use gcode_read::{ReadBack, ReadMove, marked_moves, read_back};
use machine::machine;
use std::collections::HashMap;
use std::f64::consts::{PI, TAU};

/// Spacing of the grid sampling the pocket's interior (mm).
const GRID: f64 = 0.1;
/// Spacing of the points searched along the pocket's major axis (mm).
const AXIS_STEP: f64 = 0.01;
/// Largest distance between consecutive samples along a path (mm).
const STEP: f64 = 0.01;
/// The planner's gouge margin: a path may come this share of the tool radius nearer the edge.
const GOUGE_MARGIN: f64 = 1e-6;
/// Output rounding of the metric mill profile (4 decimals), arcs: the end points and centre are
/// rounded and the centre moved onto the bisector, which keeps a written arc within 2√2 steps of
/// the exact one (the job's budget, `tests/post_arcs.rs`).
const ROUNDING: f64 = 2.0 * std::f64::consts::SQRT_2 * 1e-4;
/// The job's tolerance (mm), the usual value.
const TOLERANCE: f64 = 0.01;

// ---------------------------------------------------------------------------------------------
// Sampling and the coverage check (shared by every test; no code of the crate's fit or post).

/// Points along the straight move `from → to`, at most [`STEP`] apart, `to` included.
fn sample_line(from: Point, to: Point, out: &mut Vec<Point>) {
    let n = (from.distance(to) / STEP).ceil().max(1.0) as usize;
    for k in 1..=n {
        out.push(from.lerp(to, k as f64 / n as f64));
    }
}

/// Points along the arc `from → to` about `center` (counter-clockwise when `ccw`), at most
/// [`STEP`] apart, `to` included; the radius runs linearly from the start's to the end's (a
/// written arc's two radii differ by rounding). A closed arc (`from == to`) is a full turn.
fn sample_arc(from: Point, to: Point, centre: Point, ccw: bool, out: &mut Vec<Point>) {
    let (r0, r1) = (from.distance(centre), to.distance(centre));
    let a0 = (from.y - centre.y).atan2(from.x - centre.x);
    let a1 = (to.y - centre.y).atan2(to.x - centre.x);
    let mut sweep = if ccw {
        (a1 - a0).rem_euclid(TAU)
    } else {
        -(a0 - a1).rem_euclid(TAU)
    };
    if sweep == 0.0 {
        sweep = if ccw { TAU } else { -TAU };
    }
    let n = (sweep.abs() * r0.max(r1) / STEP).ceil().max(1.0) as usize;
    for k in 1..=n {
        let t = k as f64 / n as f64;
        let (s, c) = (a0 + t * sweep).sin_cos();
        let rr = r0 + t * (r1 - r0);
        out.push(Point::new(centre.x + rr * c, centre.y + rr * s));
    }
}

/// Samples of fitted moves from `start`.
fn sample_moves(start: Point, moves: &[Move]) -> Vec<Point> {
    let mut out = vec![start];
    let mut at = start;
    for m in moves {
        match *m {
            Move::Line { to } => sample_line(at, to, &mut out),
            Move::Arc { to, centre, ccw } => sample_arc(at, to, centre, ccw, &mut out),
        }
        at = m.end();
    }
    out
}

/// Samples of traced program moves (XY only).
fn sample_trace(moves: &[&ReadMove]) -> Vec<Point> {
    let mut out = Vec::new();
    for m in moves {
        let from = Point::new(m.from[0], m.from[1]);
        let to = Point::new(m.to[0], m.to[1]);
        out.push(from);
        match m.arc {
            Some((c, ccw)) => sample_arc(from, to, Point::new(c[0], c[1]), ccw, &mut out),
            None => sample_line(from, to, &mut out),
        }
    }
    out
}

/// Samples of an exact path, at most [`STEP`] apart (for hand-built paths, before any fit).
fn sample_exact(path: &ExactPath) -> Vec<Point> {
    match path {
        ExactPath::EllipseParallel { ellipse, inset, .. } => {
            let n = ((ellipse.a() + ellipse.b()) * PI / STEP).ceil() as usize;
            (0..=n)
                .map(|k| ellipse.inward_offset_point(TAU * k as f64 / n as f64, *inset))
                .collect()
        }
        ExactPath::Contour(c) => {
            let mut out = Vec::new();
            for e in c.elements() {
                match e {
                    Element::Line(s) => {
                        out.push(s.start);
                        sample_line(s.start, s.end, &mut out);
                    }
                    Element::Arc(a) => {
                        let (from, to) = (a.start_point(), a.end_point());
                        out.push(from);
                        sample_arc(from, to, a.centre, a.sweep > 0.0, &mut out);
                    }
                }
            }
            out
        }
    }
}

/// The grid points ([`GRID`] apart) inside `e`, and the points of its major axis ([`AXIS_STEP`]
/// apart), that lie farther than `reach` from every sample: the islands a tool of radius `reach`
/// whose centre follows the samples would leave. The major axis is searched more finely because
/// it holds the points farthest from the edge (the medial axis of an ellipse is a stretch of its
/// major axis), where islands between rings and at the centre begin; they can be thinner than the
/// grid there. Each sample marks the grid points of its disc, column by column; the axis points
/// look for a sample in the buckets around them.
fn islands(e: &Ellipse, samples: &[Point], reach: f64) -> Vec<Point> {
    let (hx, hy) = (
        e.support(Vec2::new(1.0, 0.0)),
        e.support(Vec2::new(0.0, 1.0)),
    );
    let c = e.centre();
    let (x0, y0) = (c.x - hx, c.y - hy);
    let nx = (2.0 * hx / GRID).ceil() as usize + 1;
    let ny = (2.0 * hy / GRID).ceil() as usize + 1;
    let mut covered = vec![false; nx * ny];
    for s in samples {
        let i_lo = ((s.x - reach - x0) / GRID).ceil().max(0.0) as usize;
        let i_hi = (((s.x + reach - x0) / GRID).floor()).min(nx as f64 - 1.0);
        if i_hi < 0.0 {
            continue;
        }
        for i in i_lo..=i_hi as usize {
            let dx = x0 + i as f64 * GRID - s.x;
            let half2 = reach * reach - dx * dx;
            if half2 < 0.0 {
                continue;
            }
            let half = half2.sqrt();
            let j_lo = ((s.y - half - y0) / GRID).ceil().max(0.0) as usize;
            let j_hi = ((s.y + half - y0) / GRID).floor().min(ny as f64 - 1.0);
            if j_hi < 0.0 || (j_lo as f64) > j_hi {
                continue;
            }
            covered[i * ny + j_lo..=i * ny + j_hi as usize].fill(true);
        }
    }
    let mut out = Vec::new();
    for i in 0..nx {
        for j in 0..ny {
            let p = Point::new(x0 + i as f64 * GRID, y0 + j as f64 * GRID);
            if !covered[i * ny + j] && e.contains(p) {
                out.push(p);
            }
        }
    }
    let cell = reach.max(GRID);
    let key = |p: &Point| ((p.x / cell).floor() as i64, (p.y / cell).floor() as i64);
    let mut buckets: HashMap<(i64, i64), Vec<Point>> = HashMap::new();
    for s in samples {
        buckets.entry(key(s)).or_default().push(*s);
    }
    let axis = Vec2::from_angle(e.angle());
    let n = (2.0 * e.a() / AXIS_STEP).ceil() as usize;
    for k in 0..=n {
        let p = c + axis * (-e.a() + 2.0 * e.a() * k as f64 / n as f64);
        if !e.contains(p) {
            continue;
        }
        let (i, j) = key(&p);
        let near = (i - 1..=i + 1).any(|i| {
            (j - 1..=j + 1).any(|j| {
                buckets
                    .get(&(i, j))
                    .is_some_and(|v| v.iter().any(|q| q.distance(p) <= reach))
            })
        });
        if !near {
            out.push(p);
        }
    }
    out
}

/// How many grid points of `e`'s interior there are (to show the grid is fine).
fn interior_points(e: &Ellipse) -> usize {
    islands(e, &[], 0.0).len()
}

/// The points of traced moves that the gouge check needs: the ends of straight moves (the
/// distance to the edge of a convex region is a concave function inside it, so along a segment
/// whose ends are inside it is smallest at an end) and samples [`STEP`] apart along arcs.
fn gouge_points(moves: &[&ReadMove]) -> Vec<Point> {
    let mut out = Vec::new();
    for m in moves {
        let from = Point::new(m.from[0], m.from[1]);
        let to = Point::new(m.to[0], m.to[1]);
        out.push(from);
        match m.arc {
            Some((c, ccw)) => sample_arc(from, to, Point::new(c[0], c[1]), ccw, &mut out),
            None => out.push(to),
        }
    }
    out
}

/// The nearest any sample comes to the ellipse curve (mm), negative when one lies outside.
fn nearest_to_edge(e: &Ellipse, samples: &[Point]) -> f64 {
    samples
        .iter()
        .map(|&p| {
            let d = e.distance_to(p).0;
            if e.contains(p) { d } else { -d }
        })
        .fold(f64::INFINITY, f64::min)
}

// ---------------------------------------------------------------------------------------------
// Plans of hand-made ellipses.

/// The plan of one pocket `e` named `name`, tool `d`, rings at most `stepover` apart.
fn plan_of(name: &str, e: Ellipse, d: f64, stepover: f64) -> Result<Plan, PlanError> {
    let o = Opening {
        name: name.into(),
        ellipse: e,
        side: CutSide::Inside,
        pocket: true,
        own: Default::default(),
    };
    let opts = PlanOptions {
        pocket_stepover: stepover,
        ..PlanOptions::plain(d)
    };
    plan_cuts(&Part::default(), &[o], &opts)
}

fn plan_pocket(e: Ellipse, d: f64, stepover: f64) -> Result<PlannedCut, PlanError> {
    let plan = plan_of("test pocket", e, d, stepover)?;
    Ok(plan.cuts.into_iter().next().expect("one cut planned"))
}

fn fit_options() -> FitOptions {
    FitOptions {
        tolerance: TOLERANCE,
        moves: MoveKind::Arcs,
        scrap_side_only: false,
    }
}

/// Plans and fits a pocket, then checks coverage and gouging on the fitted moves, and the
/// planned rings' order, direction and links. Returns the planned cut.
fn check_hand_made(e: Ellipse, d: f64, stepover: f64) -> PlannedCut {
    let r = d / 2.0;
    let cut = plan_pocket(e, d, stepover).expect("pocket planned");
    let fitted = fit_cut(&cut, &fit_options()).expect("pocket fitted");
    // Every planned ring is counter-clockwise (climb milling with M3, NISTIR 6556 App. B.2.1,
    // docs/sources.md P4.1) and starts on the +major-axis side, innermost first, so that
    // every link runs outwards along the major axis.
    let axis = Vec2::from_angle(e.angle());
    let mut last_out = 0.0;
    let mut starts: Vec<Point> = vec![cut.plunge()];
    for ring in cut.clearing() {
        match ring {
            ExactPath::EllipseParallel { clockwise, .. } => assert!(!clockwise),
            ExactPath::Contour(c) => assert!(c.is_ccw()),
        }
        starts.push(ring.start_point());
    }
    starts.push(cut.path().start_point());
    for s in &starts {
        let v = *s - e.centre();
        assert!(
            v.cross(axis).abs() < 1e-9,
            "a ring starts off the major axis"
        );
        let along = v.dot(axis);
        assert!(along >= last_out - 1e-12, "rings out of order");
        last_out = along;
    }
    // The fitted run: clearing from the plunge point, lead-in, contour.
    let mut off_contour = sample_moves(fitted.plunge, &fitted.clearing);
    off_contour.extend(sample_moves(fitted.lead_in_start(), &fitted.lead_in));
    let contour = sample_moves(fitted.start, &fitted.moves);
    let floor: Vec<Point> = off_contour.iter().chain(&contour).copied().collect();
    let left = islands(&e, &floor, r + TOLERANCE + STEP / 2.0);
    assert!(
        left.is_empty(),
        "{} grid points uncovered, e.g. {:?}",
        left.len(),
        left.first()
    );
    // No gouge: the clearing and links keep the tool radius (less the planner's margin) from the
    // edge; the fitted contour keeps it less the tolerance (two-sided band).
    let near = nearest_to_edge(&e, &off_contour);
    assert!(
        near >= r * (1.0 - GOUGE_MARGIN),
        "clearing {near} from the edge"
    );
    let near = nearest_to_edge(&e, &contour);
    assert!(near >= r - TOLERANCE, "contour {near} from the edge");
    cut
}

fn insets(cut: &PlannedCut) -> Vec<f64> {
    cut.clearing()
        .iter()
        .map(|p| match p {
            ExactPath::EllipseParallel { inset, .. } => *inset,
            ExactPath::Contour(c) => {
                // Every vertex of a trimmed ring lies on its level set: read the level back.
                let p = c.start_point().expect("a ring has vertices");
                match &cut.edge() {
                    conicut::geom::Edge::Ellipse(e) => e.distance_to(p).0,
                    conicut::geom::Edge::Contour(_) => f64::NAN,
                }
            }
        })
        .collect()
}

#[test]
fn round_pocket_worked_example_and_coverage() {
    // A circle of radius 20, a 6 mm tool, stepover 2.4 mm (40 %). By hand: the finish contour is
    // the circle of radius 17 (inset 3); the rings must reach inset b − r = 17, a span of
    // 17 − 3 = 14 mm; ⌈14 / 2.4⌉ = 6 rings, 14/6 = 2.333… mm apart, at insets 3 + 2.333 k,
    // k = 6 … 1 (innermost first), i.e. circles of radius 3, 5.333, 7.667, 10, 12.333, 14.667.
    // All are regular (a circle's parallel curves never trim), so they are exact curves.
    let e = Ellipse::new(Point::new(12.0, -7.0), 20.0, 20.0, 0.0).unwrap();
    let cut = check_hand_made(e, 6.0, 2.4);
    let got = insets(&cut);
    let want: Vec<f64> = (1..=6).rev().map(|k| 3.0 + 14.0 * k as f64 / 6.0).collect();
    assert_eq!(got.len(), want.len());
    for (g, w) in got.iter().zip(&want) {
        assert!((g - w).abs() < 1e-12, "{got:?} vs {want:?}");
    }
    assert!(
        cut.clearing()
            .iter()
            .all(|p| matches!(p, ExactPath::EllipseParallel { .. }))
    );
    // Stepover = the diameter (the largest accepted): with every ring regular a gap up to 2r
    // leaves no island (module docs, inward argument): ⌈14 / 6⌉ = 3 rings, 4.667 mm apart, more
    // than the tool radius, and still covered.
    let cut = check_hand_made(e, 6.0, 6.0);
    let got = insets(&cut);
    assert_eq!(got.len(), 3);
    assert!((got[1] - got[2] - 14.0 / 3.0).abs() < 1e-12);
}

#[test]
fn slender_pocket_is_covered_with_trimmed_rings() {
    // a/b = 4.8: b²/a = 2.083 mm, so with a 3 mm tool (rings from inset 1.5 + 1.2 mm on) every
    // ring is trimmed (two corners on the major axis) and drawn as chords.
    let e = Ellipse::new(Point::new(5.0, 3.0), 48.0, 10.0, 0.35).unwrap();
    assert!(interior_points(&e) > 100_000, "the grid is fine enough");
    let (d, r, stepover) = (3.0, 1.5, 1.2);
    let cut = check_hand_made(e, d, stepover);
    let got = insets(&cut);
    let h = RING_CHORD_TOLERANCE.min(0.05 * stepover);
    let gap = got[got.len() - 2] - got[got.len() - 1];
    // The bounds of the proof (plan::pocket module docs): gap ≤ stepover, gap ≤ r − h with
    // trimmed rings, the innermost ring at b − r + h, even gaps, and no ring fewer would do.
    assert!(gap <= stepover + 1e-12 && gap <= r - h + 1e-12, "gap {gap}");
    assert!(
        (got[0] - (e.b() - r + h)).abs() < 1e-9,
        "innermost {}",
        got[0]
    );
    for w in got.windows(2) {
        assert!((w[0] - w[1] - gap).abs() < 1e-9, "uneven gaps {got:?}");
    }
    assert!((got[got.len() - 1] - r - gap).abs() < 1e-9);
    let span = e.b() - r + h - r;
    assert!(span / (got.len() - 1) as f64 > stepover.min(r - h));
    assert!(
        cut.clearing()
            .iter()
            .any(|p| matches!(p, ExactPath::Contour(_)))
    );
    // A stepover of the full diameter is narrowed to r − h here (trimmed rings) and still
    // leaves no island.
    let cut = check_hand_made(e, d, d);
    let got = insets(&cut);
    assert!(got[got.len() - 2] - got[got.len() - 1] <= r - h + 1e-12);
    // … and the plan says so, while the asked-for stepover that needs no narrowing does not.
    let warned = |stepover: f64| {
        let plan = plan_of("slender", e, d, stepover).expect("planned");
        plan.warnings
            .iter()
            .any(|w| w.starts_with("slender: clearing rings") && w.contains("closer than"))
    };
    assert!(warned(d));
    assert!(!warned(1.2));
}

#[test]
fn tilted_pocket_and_narrow_pocket() {
    // A moderate ellipse at an angle, mixed exact and trimmed rings: b²/a = 6.53 mm, 6 mm tool.
    let e = Ellipse::new(Point::new(-40.0, 25.0), 30.0, 14.0, -0.7).unwrap();
    let cut = check_hand_made(e, 6.0, 2.4);
    assert!(
        cut.clearing()
            .iter()
            .any(|p| matches!(p, ExactPath::EllipseParallel { .. }))
    );
    assert!(
        cut.clearing()
            .iter()
            .any(|p| matches!(p, ExactPath::Contour(_)))
    );
    // b = 5 ≤ 2r = 5.2: the finish contour alone reaches the centre (b − r ≤ r), no rings, and
    // it alone leaves no island. b²/a = 3.125 > r = 2.6, so the tool fits.
    let e = Ellipse::new(Point::new(1.0, 1.0), 8.0, 5.0, 0.2).unwrap();
    let cut = check_hand_made(e, 5.2, 2.08);
    assert!(cut.clearing().is_empty());
}

#[test]
fn trimmed_ring_vertices_and_chords_lie_on_and_inside_the_level_set() {
    // Independent computation: the distance of every vertex from the ellipse (Eberly) is the
    // ring's inset; every point of every chord is at least the inset and at most the inset plus
    // the chord tolerance from the ellipse (a chord point q inside K(δ) is δ(q) − δ from L(δ)).
    let e = Ellipse::new(Point::new(0.0, 0.0), 60.0, 12.0, 1.1).unwrap();
    let h = 0.005;
    for &inset in &[1.0, 2.3, 2.4, 2.5, 6.0, 11.0, 11.9] {
        let poly = pocket::level_set_polygon(&e, inset, h);
        for p in &poly {
            assert!(
                (e.distance_to(*p).0 - inset).abs() < 1e-9,
                "vertex off L({inset})"
            );
        }
        for w in poly.windows(2) {
            for k in 0..=20 {
                let q = w[0].lerp(w[1], k as f64 / 20.0);
                let d = e.distance_to(q).0;
                assert!(
                    d >= inset - 1e-9 && d <= inset + h + 1e-9,
                    "chord point {d} vs inset {inset}"
                );
            }
        }
        // Counter-clockwise from the +major-axis side; the corners of a trimmed ring on the
        // major axis (b²/a = 2.4 here).
        let axis = Vec2::from_angle(e.angle());
        assert!((poly[0] - e.centre()).cross(axis).abs() < 1e-9);
        assert!((poly[0] - e.centre()).dot(axis) > 0.0);
        let area: f64 = poly
            .windows(2)
            .map(|w| w[0].to_vec().cross(w[1].to_vec()))
            .sum();
        assert!(area > 0.0);
    }
}

#[test]
fn the_coverage_check_finds_islands() {
    // The check must be able to fail: run it on hand-built bad paths.
    let e = Ellipse::new(Point::new(5.0, 3.0), 48.0, 10.0, 0.35).unwrap();
    let (d, r) = (3.0, 1.5);
    let cut = plan_pocket(e, d, 1.2).unwrap();
    let reach = r + TOLERANCE + STEP / 2.0;
    let finish = sample_exact(cut.path());
    // The exact planned rings and the finish contour: no island.
    let mut all = finish.clone();
    for ring in cut.clearing() {
        all.extend(sample_exact(ring));
    }
    assert!(islands(&e, &all, reach).is_empty());
    // The finish contour alone: most of the inside is left.
    assert!(islands(&e, &finish, reach).len() > 10_000);
    // One ring left out (the third from the inside): a band of islands.
    let mut some = finish.clone();
    for (k, ring) in cut.clearing().iter().enumerate() {
        if k != 2 {
            some.extend(sample_exact(ring));
        }
    }
    assert!(!islands(&e, &some, reach).is_empty());
    // Rings a full tool diameter apart (gap 2r) on levels that are trimmed: the corners of the
    // inner ring run along the major axis faster than the level grows, and islands are left
    // near the major axis (why the planner keeps gaps to r − h once rings are trimmed).
    let mut wide = finish.clone();
    let mut level = r + 2.0 * r;
    while level < e.b() - r {
        wide.extend(sample_exact(&ExactPath::Contour(contour_of(
            &pocket::level_set_polygon(&e, level, 0.001),
        ))));
        level += 2.0 * r;
    }
    wide.extend(sample_exact(&ExactPath::Contour(contour_of(
        &pocket::level_set_polygon(&e, e.b() - r, 0.001),
    ))));
    let left = islands(&e, &wide, reach);
    assert!(!left.is_empty(), "gap 2r on trimmed rings left no island");
    // … and they lie near the major axis.
    let axis = Vec2::from_angle(e.angle());
    assert!(
        left.iter().all(|p| (*p - e.centre()).cross(axis).abs() < r),
        "islands away from the major axis"
    );
}

fn contour_of(points: &[Point]) -> conicut::geom::Contour {
    conicut::geom::Contour::new(
        points
            .windows(2)
            .map(|w| Element::Line(conicut::geom::Segment::new(w[0], w[1])))
            .collect(),
        String::new(),
        Vec::new(),
    )
    .unwrap()
}

#[test]
fn bad_stepovers_are_refused_naming_the_feature() {
    let e = Ellipse::new(Point::new(0.0, 0.0), 30.0, 15.0, 0.0).unwrap();
    for s in [0.0, -1.0, f64::NAN, f64::INFINITY, 6.01, 0.059] {
        let err = plan_pocket(e, 6.0, s).unwrap_err();
        assert!(matches!(err, PlanError::BadStepover { .. }), "{s}: {err:?}");
        let text = err.to_string();
        assert!(
            text.contains("test pocket") && text.contains("--stepover"),
            "{text}"
        );
    }
    // The ends of the range are accepted: 1 % of the diameter and the diameter.
    assert!(plan_pocket(e, 6.0, 6.0).is_ok());
    assert!(plan_pocket(e, 6.0, 0.06).is_ok());
}

// ---------------------------------------------------------------------------------------------
// The whole job on the demo drawing.

fn pocket_job_settings(tool_diameter: f64, scrap_side_only: bool) -> JobSettings {
    let path = concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/demo-parts/truss-bracket-pocket-job.toml"
    );
    let text = std::fs::read_to_string(path).expect("the pocket job file");
    let job = parse_job_file(&text, "truss-bracket-pocket-job.toml").expect("job file parses");
    JobSettings {
        tolerance: TOLERANCE,
        depth: Some(3.0),
        stepdown: Some(1.5),
        leads: LeadRequest {
            kind: Some(LeadKind::Straight),
            ..LeadRequest::default()
        },
        scrap_side_only,
        job: Some(job),
        ..demo_job::demo_settings(tool_diameter)
    }
}

/// The moves of feature `name` in the trace, by index.
fn feature_indices(trace: &ReadBack, name: &str) -> std::ops::Range<usize> {
    let k = trace
        .features
        .iter()
        .position(|(n, _)| n == name)
        .expect("feature in the program");
    let end = trace.features.get(k + 1).map_or(trace.moves.len(), |f| f.1);
    trace.features[k].1..end
}

#[test]
fn demo_pockets_leave_no_islands_and_do_not_gouge() {
    demo_pockets(false);
}

#[test]
fn demo_pockets_cut_scrap_side_only_never_touch_the_edge() {
    demo_pockets(true);
}

/// The demo drawing with the pocket job file on the metric mill, 6 mm tool, the job 3 mm deep in
/// passes of 1.5 mm and the pockets at their own depths, helical entry: both pockets covered at
/// the floor and clear of their edges.
fn demo_pockets(scrap_side_only: bool) {
    let d = 6.0;
    let r = d / 2.0;
    let mill = machine("metric-mill");
    let s = pocket_job_settings(d, scrap_side_only);
    let out = run_job(&conicut::demo::demo_dxf_bytes(), &mill, &s).expect("the job runs");
    let trace = read_back(&out.program);
    let mut pockets = 0;
    for f in &out.report.features {
        if f.kind != FeatureKind::Pocket {
            continue;
        }
        pockets += 1;
        let sum = f
            .ellipse
            .as_ref()
            .expect("the pocket's ellipse in the report");
        let e = Ellipse::new(
            Point::new(sum.centre_mm[0], sum.centre_mm[1]),
            sum.semi_major_mm,
            sum.semi_minor_mm,
            sum.angle_deg.to_radians(),
        )
        .expect("an ellipse");
        // The job file gives each pocket its own depth (1.5 mm and 1 mm into the 3 mm plate).
        let depth = match f.name.as_str() {
            "pocket 2" => 1.5,
            "round pocket 3" => 1.0,
            other => panic!("an unexpected pocket {other}"),
        };
        check_demo_pocket(&trace, &f.name, &e, r, depth, scrap_side_only);
    }
    assert_eq!(pockets, 2, "the job file makes two pockets");
}

fn check_demo_pocket(
    trace: &ReadBack,
    name: &str,
    e: &Ellipse,
    r: f64,
    depth: f64,
    scrap_side_only: bool,
) {
    let range = feature_indices(trace, name);
    let moves: Vec<&ReadMove> = range
        .clone()
        .map(|i| &trace.moves[i])
        .filter(|m| !m.rapid)
        .collect();
    let floor = moves.iter().map(|m| m.to[2]).fold(f64::INFINITY, f64::min);
    assert!((floor + depth).abs() < 1e-9, "floor {floor}");
    // The clearing comes before the contour.
    let clearing = marked_moves(trace, name, "clearing");
    let mut contour = marked_moves(trace, name, "contour");
    assert!(!clearing.is_empty() && !contour.is_empty());
    // Each pass clears before it finishes: the first and the last clearing move come before the
    // first and the last contour move.
    assert!(clearing.iter().min() < contour.iter().min());
    assert!(clearing.iter().max() < contour.iter().max());
    // The overcut runs along the finish contour again: it keeps the contour's bounds.
    contour.extend(marked_moves(trace, name, "overcut"));
    // Coverage at the floor.
    let at_floor: Vec<&ReadMove> = moves
        .iter()
        .copied()
        .filter(|m| m.from[2] == floor && m.to[2] == floor)
        .collect();
    let left = islands(e, &sample_trace(&at_floor), r + TOLERANCE + STEP / 2.0);
    assert!(
        left.is_empty(),
        "{name}: {} grid points uncovered, e.g. {:?}",
        left.len(),
        left.first()
    );
    // No gouge: every feed move in the material (below the top, z < 0).
    let in_material = |i: &usize| {
        let m = &trace.moves[*i];
        !m.rapid && (m.from[2] < 0.0 || m.to[2] < 0.0)
    };
    let off: Vec<&ReadMove> = range
        .clone()
        .filter(|i| !contour.contains(i))
        .filter(in_material)
        .map(|i| &trace.moves[i])
        .collect();
    let on: Vec<&ReadMove> = contour
        .iter()
        .filter(|i| in_material(i))
        .map(|&i| &trace.moves[i])
        .collect();
    let strict = r * (1.0 - GOUGE_MARGIN) - ROUNDING;
    let near = nearest_to_edge(e, &gouge_points(&off));
    assert!(near >= strict, "{name}: clearing {near} mm from the edge");
    let near = nearest_to_edge(e, &gouge_points(&on));
    let bound = if scrap_side_only {
        strict
    } else {
        r - TOLERANCE
    };
    assert!(near >= bound, "{name}: contour {near} mm from the edge");
}

#[test]
fn cut_through_profiles_refuse_pockets() {
    for kind in ["laser", "plasma", "waterjet"] {
        let m = machine(kind);
        let kerf = m
            .profile
            .kerf_width()
            .expect("a cut-through profile has a kerf");
        let s = pocket_job_settings(kerf, false);
        let err = run_job(&conicut::demo::demo_dxf_bytes(), &m, &s).unwrap_err();
        match &err {
            JobError::PocketCutsThrough {
                feature, machine, ..
            } => {
                assert_eq!(feature, "pocket 2");
                assert_eq!(machine, kind);
            }
            other => panic!("{kind}: {other:?}"),
        }
        let text = err.to_string();
        assert!(
            text.contains("pocket 2") && text.contains("cut = \"hole\""),
            "{text}"
        );
    }
}
