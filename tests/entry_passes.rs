//! Entry into the material, the finishing pass and the direction of cut on mills and routers.
//!
//! Every program is read back with the crate's independent checker (`conicut::check::trace`,
//! which shares no code with the writer), and its moves are measured here against edges computed
//! in this file from the demo's published dimensions (`conicut::demo`: the 240 × 140 mm plate
//! with 10 mm corner radii, the Ø9 mm bolt holes) and from the ellipses the report states; the
//! point-to-ellipse distance is this file's own (a dense scan of the parameter, then
//! golden-section refinement), not the crate's.
//!
//! What is checked, and against what:
//!
//! * **Helical entry** (common practice, docs/sources.md P4.3: helix diameter at least
//!   half the tool's, ramps of about 1–3° in steel): every helix move is an arc about the plunge
//!   point of radius D/4 (a bore of 1.5 D), descends no steeper than the ramp angle measured along
//!   the arc (radius × sweep, not the chord), keeps the tool centre at least r from the feature's
//!   finished edge and on its scrap side (less the output rounding), ends at the pass's floor and
//!   goes once more round there, and turns the way the cut does. On hand-made cuts the number of
//!   half turns and of zig-zag legs is computed here by hand from the drop, the angle and the
//!   length of the path.
//! * **Zig-zag entry** where a helix has no room (a Ø9 mm hole and a 7 mm tool: 4.5 − 3.5 = 1 mm
//!   of room, less than 7/4 mm): straight legs back and forth along the lead-in, none steeper than
//!   the angle; **straight entry** (`--entry straight`) plunges straight down at the plunge point.
//! * **Direction** (NISTIR 6556 App. B.2.1; docs/sources.md P4.1: with a clockwise spindle,
//!   climb milling keeps the tool on the left of its travel with the material on the right, so
//!   holes run counter-clockwise (G3) and outlines clockwise (G2); conventional milling the
//!   reverse): the sense of every arc
//!   and the signed area of every contour as written, the plunge points and the contour starts
//!   the same both ways, every contour within the tolerance of the distance r from its edge. With
//!   `--scrap-side-only` the written contour never comes nearer the edge than r (less the output
//!   rounding), in both directions.
//! * **Finishing pass** (docs/sources.md P4.3: 0.1–0.5 mm radial): the roughing contour
//!   lies at r + s from the edge (± the tolerance) in every depth pass, the finishing contour at r
//!   once, at the full depth; the header says so; tabs stay on both cuts of the outline.
//! * **Refusals**: an allowance that is not positive; one that would push the roughing path of an
//!   ellipse past b²/a (the radius of curvature at the ends of the major axis, the textbook value)
//!   with the largest allowance that fits named, or a contour's roughing offset past its smallest
//!   arc; any allowance on a laser. A conventional direction on a laser is ignored with a
//!   warning, and the laser cuts holes counter-clockwise all the same (§4.1).

#[path = "support/demo_job.rs"]
mod demo_job;
use conicut::chain::Part;
use conicut::check::{self, Trace, TraceMove};
use conicut::fit::FittedCut;
use conicut::geom::ExactPath;
use conicut::geom::Move;
use conicut::geom::{Contour, Element};
use conicut::geom::{Ellipse, Point, Segment};
use conicut::job::{JobError, JobOutput, JobSettings, LeadRequest, run_job};
use conicut::plan::{
    CutSide, Direction, FeatureKind, LeadKind, Opening, PlanError, PlanOptions, plan_cuts,
};
use conicut::post::{ProgramSettings, write_program};
use demo_job::profile;
use std::f64::consts::{PI, SQRT_2, TAU};

/// The tolerance of every job here (mm), the usual value.
const TOL: f64 = 0.01;
/// Ramp angle (degrees): the top of the 1–3° range for steel (common practice, §4.3).
const RAMP_DEG: f64 = 3.0;
/// Depth of each pass (mm).
const STEPDOWN: f64 = 1.5;
/// Output rounding of the metric mill profile (four decimals) for arcs: end points and centre
/// are rounded and the centre moved onto the bisector, within 2√2 steps of the exact arc (the
/// job's own rounding budget, `tests/post_arcs.rs`).
const XY_ROUND: f64 = 2.0 * SQRT_2 * 1e-4;
/// Sampling step along written moves (mm). The deviation of a written move from its curve
/// changes over millimetres (a chord's sagitta, an arc spline's error lobe), so a sample within
/// 0.025 mm of its largest value misses it by a negligible share (about 4 (0.025 / L)² for a lobe
/// of length L ≥ 1 mm).
const STEP: f64 = 0.05;

// ---------------------------------------------------------------------------------------------
// The demo's edges, computed here.

/// A finished edge of the demo part.
#[derive(Debug, Clone, Copy)]
enum Edge {
    /// A bolt hole: centre and radius.
    Circle(Point, f64),
    /// An elliptical opening: centre, semi-axes, angle of the major axis (radians).
    Ellipse(Point, f64, f64, f64),
    /// The plate's outline: a 240 × 140 mm rectangle with 10 mm corner radii.
    Outline,
}

impl Edge {
    /// Distance from `p` to the edge (mm).
    fn distance(&self, p: Point) -> f64 {
        match *self {
            Edge::Circle(c, r) => (p.distance(c) - r).abs(),
            Edge::Ellipse(c, a, b, angle) => ellipse_distance(c, a, b, angle, p),
            Edge::Outline => rounded_rectangle_distance(p).abs(),
        }
    }

    /// Whether `p` is on the scrap side: inside a hole or opening, outside the outline.
    fn scrap_side(&self, p: Point) -> bool {
        match *self {
            Edge::Circle(c, r) => p.distance(c) < r,
            Edge::Ellipse(c, a, b, angle) => {
                let (x, y) = local(c, angle, p);
                (x / a).powi(2) + (y / b).powi(2) < 1.0
            }
            Edge::Outline => rounded_rectangle_distance(p) > 0.0,
        }
    }
}

fn local(c: Point, angle: f64, p: Point) -> (f64, f64) {
    let (s, co) = angle.sin_cos();
    let (dx, dy) = (p.x - c.x, p.y - c.y);
    (dx * co + dy * s, -dx * s + dy * co)
}

/// Distance from `p` to the ellipse: a scan of 512 parameter values (for the demo's ellipses at
/// most about 0.5 mm of arc apart, far less than the few millimetres between the points measured
/// and the curve, so the best sample lies next to the true nearest point), then golden-section
/// refinement of the squared distance over the two steps either side (60 steps, to about 1e-14
/// rad).
fn ellipse_distance(c: Point, a: f64, b: f64, angle: f64, p: Point) -> f64 {
    let (x, y) = local(c, angle, p);
    let f = |t: f64| (a * t.cos() - x).powi(2) + (b * t.sin() - y).powi(2);
    let n = 512;
    let (mut best_t, mut best) = (0.0, f64::INFINITY);
    for k in 0..n {
        let t = TAU * k as f64 / n as f64;
        let v = f(t);
        if v < best {
            (best_t, best) = (t, v);
        }
    }
    let g = 0.5 * (5f64.sqrt() - 1.0);
    let (mut lo, mut hi) = (best_t - 2.0 * TAU / n as f64, best_t + 2.0 * TAU / n as f64);
    for _ in 0..60 {
        let (m1, m2) = (hi - g * (hi - lo), lo + g * (hi - lo));
        if f(m1) < f(m2) {
            hi = m2;
        } else {
            lo = m1;
        }
    }
    best.min(f(0.5 * (lo + hi))).sqrt()
}

/// Signed distance from the plate's outline (positive outside): the plate is the inner
/// rectangle [10, 230] × [10, 130] grown by the 10 mm corner radius.
fn rounded_rectangle_distance(p: Point) -> f64 {
    let r = conicut::demo::CORNER_RADIUS;
    let (w, h) = (conicut::demo::PLATE_WIDTH, conicut::demo::PLATE_HEIGHT);
    let dx = (r - p.x).max(p.x - (w - r));
    let dy = (r - p.y).max(p.y - (h - r));
    if dx > 0.0 || dy > 0.0 {
        dx.max(0.0).hypot(dy.max(0.0)) - r
    } else {
        dx.max(dy) - r
    }
}

/// The edge of the feature `name` (a roughing cut's is its feature's): the outline, the ellipse
/// the report states, or the demo bolt hole nearest the report's plunge point.
fn edge_of(out: &JobOutput, name: &str) -> Edge {
    let base = name.strip_suffix(" roughing").unwrap_or(name);
    if base == "outline" {
        return Edge::Outline;
    }
    let f = out
        .report
        .features
        .iter()
        .find(|f| f.name == base)
        .unwrap_or_else(|| panic!("{base} in the report"));
    if let Some(e) = &f.ellipse {
        return Edge::Ellipse(
            Point::new(e.center_mm[0], e.center_mm[1]),
            e.semi_major_mm,
            e.semi_minor_mm,
            e.angle_deg.to_radians(),
        );
    }
    let plunge = Point::new(f.plunge_mm[0], f.plunge_mm[1]);
    let centre = conicut::demo::BOLT_HOLE_CENTRES
        .iter()
        .map(|&(x, y)| Point::new(x, y))
        .min_by(|p, q| p.distance(plunge).total_cmp(&q.distance(plunge)))
        .expect("four bolt holes");
    Edge::Circle(centre, conicut::demo::BOLT_HOLE_RADIUS)
}

// ---------------------------------------------------------------------------------------------
// Jobs.

/// The demo with the metric mill: tool `d`, through the plate in passes of [`STEPDOWN`], a
/// helical entry at [`RAMP_DEG`], straight leads (so that plunge points stay where the planner
/// put them: hole centres), climb milling, no finishing pass.
fn demo_settings(d: f64) -> JobSettings {
    JobSettings {
        tolerance: TOL,
        stepdown: Some(STEPDOWN),
        ramp_angle_deg: Some(RAMP_DEG),
        leads: LeadRequest {
            kind: Some(LeadKind::Straight),
            ..LeadRequest::default()
        },
        ..demo_job::demo_settings(d)
    }
}

fn run(settings: &JobSettings, stem: &str) -> JobOutput {
    run_job(&conicut::demo::demo_dxf_bytes(), &profile(stem), settings)
        .unwrap_or_else(|e| panic!("the demo job runs: {e}"))
}

/// The pass floors (mm below the top, ascending), computed here: every stepdown, then the depth.
fn floors(depth: f64, stepdown: f64) -> Vec<f64> {
    let mut out = Vec::new();
    let mut z = stepdown;
    while z < depth - 1e-9 {
        out.push(z);
        z += stepdown;
    }
    out.push(depth);
    out
}

// ---------------------------------------------------------------------------------------------
// Reading the trace.

fn xy(p: [f64; 3]) -> Point {
    Point::new(p[0], p[1])
}

fn feature_names(trace: &Trace) -> Vec<String> {
    trace.features.iter().map(|(n, _)| n.clone()).collect()
}

fn feature_range(trace: &Trace, name: &str) -> std::ops::Range<usize> {
    let k = trace
        .features
        .iter()
        .position(|(n, _)| n == name)
        .unwrap_or_else(|| panic!("{name} in the program"));
    let end = trace.features.get(k + 1).map_or(trace.moves.len(), |f| f.1);
    trace.features[k].1..end
}

/// The feature's moves cut at every comment: (comment, move indices up to the next comment).
fn sections(trace: &Trace, name: &str) -> Vec<(String, Vec<usize>)> {
    let range = feature_range(trace, name);
    let marks: Vec<&(String, usize)> = trace
        .marks
        .iter()
        .filter(|(_, at)| range.contains(at))
        .collect();
    marks
        .iter()
        .enumerate()
        .map(|(k, (text, at))| {
            let end = marks.get(k + 1).map_or(range.end, |m| m.1).min(range.end);
            (text.clone(), (*at..end).collect())
        })
        .collect()
}

/// The entries of a feature, one per pass: the feed moves after each `pass k of n` comment up to
/// the next comment, or after the `cut` comment for a cut made in one pass.
fn entries<'t>(trace: &'t Trace, name: &str) -> Vec<Vec<&'t TraceMove>> {
    let all = sections(trace, name);
    let passes: Vec<_> = all.iter().filter(|(t, _)| t.starts_with("pass ")).collect();
    let chosen: Vec<_> = if passes.is_empty() {
        all.iter().filter(|(t, _)| t.starts_with("cut ")).collect()
    } else {
        passes
    };
    chosen
        .iter()
        .map(|(_, idx)| {
            idx.iter()
                .map(|&i| &trace.moves[i])
                .filter(|m| !m.rapid)
                .collect()
        })
        .collect()
}

/// The feature's contour runs, one per pass.
fn contours<'t>(trace: &'t Trace, name: &str) -> Vec<Vec<&'t TraceMove>> {
    sections(trace, name)
        .into_iter()
        .filter(|(t, _)| t == "contour")
        .map(|(_, idx)| idx.iter().map(|&i| &trace.moves[i]).collect())
        .collect()
}

/// The signed sweep of a traced arc (positive counter-clockwise), a full turn for a closed one.
fn sweep(m: &TraceMove) -> f64 {
    let Some((c, ccw)) = m.arc else { return 0.0 };
    let a0 = (m.from[1] - c[1]).atan2(m.from[0] - c[0]);
    let a1 = (m.to[1] - c[1]).atan2(m.to[0] - c[0]);
    let s = if ccw {
        (a1 - a0).rem_euclid(TAU)
    } else {
        -(a0 - a1).rem_euclid(TAU)
    };
    if s == 0.0 {
        if ccw { TAU } else { -TAU }
    } else {
        s
    }
}

/// XY length of a traced move: radius × sweep for arcs (the path, not the chord).
fn xy_length(m: &TraceMove) -> f64 {
    match m.arc {
        Some((c, _)) => xy(m.from).distance(Point::new(c[0], c[1])) * sweep(m).abs(),
        None => xy(m.from).distance(xy(m.to)),
    }
}

/// Points along traced moves (XY), at most [`STEP`] apart, both ends of every move included.
fn samples(moves: &[&TraceMove]) -> Vec<Point> {
    let mut out = Vec::new();
    for m in moves {
        let from = xy(m.from);
        let n = (xy_length(m) / STEP).ceil().max(1.0) as usize;
        match m.arc {
            Some((c, _)) => {
                let c = Point::new(c[0], c[1]);
                let (r0, r1) = (from.distance(c), xy(m.to).distance(c));
                let a0 = (from.y - c.y).atan2(from.x - c.x);
                let s = sweep(m);
                for k in 0..=n {
                    let t = k as f64 / n as f64;
                    let (sn, cs) = (a0 + t * s).sin_cos();
                    let rr = r0 + t * (r1 - r0);
                    out.push(Point::new(c.x + rr * cs, c.y + rr * sn));
                }
            }
            None => {
                for k in 0..=n {
                    out.push(from.lerp(xy(m.to), k as f64 / n as f64));
                }
            }
        }
    }
    out
}

/// Twice the signed area of the closed polygon through `points` (shoelace; positive
/// counter-clockwise).
fn signed_area2(points: &[Point]) -> f64 {
    let n = points.len();
    (0..n)
        .map(|i| {
            let (p, q) = (points[i], points[(i + 1) % n]);
            p.x * q.y - q.x * p.y
        })
        .sum()
}

/// Half a step of the profile's Z output (mm): a written height is at most this far from the
/// exact one.
fn z_half_step(stem: &str) -> f64 {
    0.5 * 10f64.powi(-(profile(stem).z_decimals() as i32))
}

/// Checks one pass's entry: every descending move with XY travel descends no steeper than
/// `ramp_deg` along its path (each end's height may be rounded by `zh`), a descending move
/// without XY travel stops at or above `prev_floor` (only back down to what an earlier pass cut),
/// and the entry reaches `floor`. Returns the arcs of the entry.
fn check_ramp<'m>(
    ctx: &str,
    entry: &[&'m TraceMove],
    prev_floor: f64,
    floor: f64,
    ramp_deg: f64,
    zh: f64,
) -> Vec<&'m TraceMove> {
    let slope = ramp_deg.to_radians().tan();
    let mut lowest = f64::INFINITY;
    for m in entry {
        let drop = m.from[2] - m.to[2];
        lowest = lowest.min(m.to[2]);
        let len = xy_length(m);
        if drop <= 0.0 {
            continue;
        }
        if len < 1e-9 {
            assert!(
                m.to[2] >= -prev_floor - 1e-9,
                "{ctx}: line {}: a straight plunge to Z{} below the last floor {}",
                m.line,
                m.to[2],
                -prev_floor
            );
        } else {
            assert!(
                drop <= slope * len + 2.0 * zh,
                "{ctx}: line {}: drops {drop} mm over {len} mm, steeper than {ramp_deg}°",
                m.line
            );
        }
    }
    assert!(
        (lowest + floor).abs() <= zh,
        "{ctx}: the entry reaches Z{lowest}, not the floor {}",
        -floor
    );
    entry.iter().copied().filter(|m| m.arc.is_some()).collect()
}

// ---------------------------------------------------------------------------------------------
// Entry.

#[test]
fn helical_entries_are_arcs_of_a_quarter_diameter_no_steeper_than_the_ramp() {
    let d = 6.0;
    let r = d / 2.0;
    let out = run(&demo_settings(d), "metric-mill");
    let trace = check::trace(&out.program).expect("the program reads back");
    let zh = z_half_step("metric-mill");
    let pass_floors = floors(conicut::demo::CUT_DEPTH, STEPDOWN);
    assert!(
        out.program
            .contains("(entry: helix of radius 1.5000 mm about the plunge point")
    );
    let names = feature_names(&trace);
    assert_eq!(names.len(), 9, "{names:?}");
    let mut helices = 0;
    for name in &names {
        let edge = edge_of(&out, name);
        let passes = entries(&trace, name);
        assert_eq!(
            passes.len(),
            pass_floors.len(),
            "{name}: one entry per pass"
        );
        for (k, entry) in passes.iter().enumerate() {
            let ctx = format!("{name}, pass {}", k + 1);
            let prev = if k == 0 { 0.0 } else { pass_floors[k - 1] };
            let arcs = check_ramp(&ctx, entry, prev, pass_floors[k], RAMP_DEG, zh);
            // With a 6 mm tool every feature of the demo leaves room for the helix: the bolt
            // holes exactly (4.5 − 3 = 1.5 mm = D/4).
            assert!(!arcs.is_empty(), "{ctx}: a helix");
            helices += 1;
            let plunge = xy(entry[0].from);
            for m in &arcs {
                let (c, ccw) = m.arc.expect("an arc");
                let c = Point::new(c[0], c[1]);
                assert!(
                    c.distance(plunge) <= 1e-4,
                    "{ctx}: helix about {c:?}, not {plunge:?}"
                );
                for p in [xy(m.from), xy(m.to)] {
                    assert!(
                        (p.distance(c) - d / 4.0).abs() <= XY_ROUND,
                        "{ctx}: helix radius {} is not D/4",
                        p.distance(c)
                    );
                }
                assert!(ccw, "{ctx}: a climb cut's helix runs counter-clockwise");
            }
            // The helix goes right down to the floor, and round once more there.
            let at_floor: f64 = arcs
                .iter()
                .filter(|m| (m.from[2] + pass_floors[k]).abs() <= zh && m.from[2] == m.to[2])
                .map(|m| sweep(m).abs())
                .sum();
            assert!(at_floor >= TAU - 1e-6, "{ctx}: {at_floor} rad at the floor");
            for p in samples(&arcs) {
                assert!(edge.scrap_side(p), "{ctx}: helix point {p:?} off the scrap");
                let dist = edge.distance(p);
                assert!(
                    dist >= r - XY_ROUND,
                    "{ctx}: the helix brings the tool centre {dist} mm from the edge"
                );
            }
        }
    }
    assert_eq!(helices, 9 * pass_floors.len());
}

#[test]
fn zig_zag_where_a_helix_has_no_room_and_straight_plunges_when_asked() {
    // A 7 mm tool in a Ø9 mm hole: 4.5 − 3.5 = 1 mm of room, less than the helix's 1.75 mm.
    let d = 7.0;
    let r = d / 2.0;
    let out = run(&demo_settings(d), "metric-mill");
    let trace = check::trace(&out.program).expect("the program reads back");
    let zh = z_half_step("metric-mill");
    let pass_floors = floors(conicut::demo::CUT_DEPTH, STEPDOWN);
    for name in feature_names(&trace) {
        let edge = edge_of(&out, &name);
        for (k, entry) in entries(&trace, &name).iter().enumerate() {
            let ctx = format!("{name}, pass {}", k + 1);
            let prev = if k == 0 { 0.0 } else { pass_floors[k - 1] };
            let arcs = check_ramp(&ctx, entry, prev, pass_floors[k], RAMP_DEG, zh);
            if !matches!(edge, Edge::Circle(..)) {
                assert!(!arcs.is_empty(), "{ctx}: room for a helix");
                continue;
            }
            assert!(arcs.is_empty(), "{ctx}: no room for a helix");
            // Legs back and forth between the plunge point and the contour's start.
            let legs: Vec<&&TraceMove> = entry.iter().filter(|m| xy_length(m) > 0.0).collect();
            assert!(
                legs.len() >= 3 && legs.len() % 2 == 1,
                "{ctx}: {} legs",
                legs.len()
            );
            let (a, b) = (xy(legs[0].from), xy(legs[0].to));
            assert!(
                (a.distance(b) - (conicut::demo::BOLT_HOLE_RADIUS - r)).abs() <= 1e-3,
                "{ctx}: the legs run from the centre to the contour"
            );
            for (j, leg) in legs.iter().enumerate() {
                let (from, to) = if j % 2 == 0 { (a, b) } else { (b, a) };
                assert!(xy(leg.from).distance(from) <= 1e-3 && xy(leg.to).distance(to) <= 1e-3);
                assert!(leg.to[2] < leg.from[2], "{ctx}: every leg descends");
            }
            for p in samples(&legs.iter().map(|m| **m).collect::<Vec<_>>()) {
                assert!(
                    edge.distance(p) >= r - XY_ROUND,
                    "{ctx}: {p:?} too near the edge"
                );
            }
        }
    }

    // --entry straight: no ramp angle, one straight plunge per pass at the plunge point.
    let straight = JobSettings {
        ramp_angle_deg: None,
        helical_entry: false,
        ..demo_settings(6.0)
    };
    let out = run(&straight, "metric-mill");
    assert!(
        out.program
            .contains("(entry: straight plunge at the plunge feed")
    );
    let trace = check::trace(&out.program).expect("the program reads back");
    for name in feature_names(&trace) {
        for (k, entry) in entries(&trace, &name).iter().enumerate() {
            let down: Vec<_> = entry.iter().filter(|m| m.to[2] < m.from[2]).collect();
            assert_eq!(down.len(), 1, "{name}, pass {}: one plunge", k + 1);
            assert_eq!(xy(down[0].from), xy(down[0].to), "{name}: straight down");
            assert!((down[0].to[2] + pass_floors[k]).abs() <= zh);
        }
    }
}

/// A closed circle of radius `radius` about `c` as two arcs from its rightmost point, the tool
/// centre path of a hole, entered from the centre.
fn circle_cut(name: &str, c: Point, radius: f64, ccw: bool, room: f64) -> FittedCut {
    let start = Point::new(c.x + radius, c.y);
    let mut cut = FittedCut::from_points(
        name,
        FeatureKind::Hole,
        CutSide::Inside,
        c,
        &[start, start],
        TOL,
        0.0,
    );
    cut.moves = vec![
        Move::Arc {
            to: Point::new(c.x - radius, c.y),
            center: c,
            ccw,
        },
        Move::Arc {
            to: start,
            center: c,
            ccw,
        },
    ];
    cut.scrap_left = ccw;
    cut.entry_room = room;
    cut
}

fn program_settings(d: f64, ramp: Option<f64>) -> ProgramSettings {
    ProgramSettings {
        title: "entry test".into(),
        source: "entry.dxf".into(),
        tool_diameter: d,
        depth: 3.0,
        tolerance: TOL,
        cut_feed: None,
        plunge_feed: None,
        spindle_speed: None,
        ramp_angle_deg: ramp,
        stepdown: None,
        helical_entry: true,
        tab_height: 0.0,
    }
}

#[test]
fn written_entries_on_hand_made_cuts() {
    let mill = profile("metric-mill");
    let zh = z_half_step("metric-mill");
    let d = 6.0;
    let c = Point::new(50.0, 40.0);
    // A hole of radius 5: the tool centre runs on radius 2, room 5 − 3 = 2 ≥ D/4 = 1.5.
    for ccw in [true, false] {
        let cut = circle_cut("hole", c, 2.0, ccw, 2.0);
        let program = write_program(&[cut], &mill, &program_settings(d, Some(2.0)))
            .expect("the program is written");
        let word = if ccw { "climb" } else { "conventional" };
        assert!(program.contains(&format!("(direction: {word}, spindle M3")));
        let trace = check::trace(&program).expect("reads back");
        let entry = &entries(&trace, "hole")[0];
        let arcs = check_ramp("hand-made hole", entry, 0.0, 3.0, 2.0, zh);
        // 3 mm at 2° along a path of π·1.5 mm per half turn: ⌈3 / (tan 2° · 1.5π)⌉ = 19 half
        // turns, then one more turn at the floor (two halves, each written as two arcs).
        let descending: f64 = arcs
            .iter()
            .filter(|m| m.to[2] < m.from[2])
            .map(|m| sweep(m).abs())
            .sum();
        let half_turns = (3.0 / (2f64.to_radians().tan() * 1.5 * PI)).ceil();
        assert_eq!(half_turns, 19.0);
        assert!((descending - half_turns * PI).abs() < 1e-6, "{descending}");
        assert!(arcs.iter().all(|m| m.arc.is_some_and(|(_, s)| s == ccw)));
    }

    // Room 1.0 < 1.5: a zig-zag along the lead-in from the centre to the start (2 mm), an odd
    // number of legs: ⌈3 / (tan 3° · 2)⌉ = 29 legs (already odd).
    let cut = circle_cut("small hole", c, 2.0, true, 1.0);
    let program = write_program(&[cut], &mill, &program_settings(d, Some(3.0))).expect("written");
    let trace = check::trace(&program).expect("reads back");
    let entry = &entries(&trace, "small hole")[0];
    assert!(check_ramp("small hole", entry, 0.0, 3.0, 3.0, zh).is_empty());
    let legs = entry.iter().filter(|m| xy_length(m) > 0.0).count();
    assert_eq!(
        legs,
        (3.0 / (3f64.to_radians().tan() * 2.0)).ceil() as usize
    );
    assert_eq!(legs, 29);

    // A cut entered on its own path (plunge point = start, no lead-in to ramp along): the ramp
    // runs back and forth along the contour's first move and ends at the start; no straight
    // plunge.
    let start = Point::new(10.0, 10.0);
    let square = [
        start,
        Point::new(10.0, 30.0),
        Point::new(30.0, 30.0),
        Point::new(30.0, 10.0),
        start,
    ];
    let cut = FittedCut::from_points(
        "outline",
        FeatureKind::Outline,
        CutSide::Outside,
        start,
        &square,
        TOL,
        0.0,
    );
    let program = write_program(&[cut], &mill, &program_settings(d, Some(3.0))).expect("written");
    let trace = check::trace(&program).expect("reads back");
    let entry = &entries(&trace, "outline")[0];
    check_ramp("on-path entry", entry, 0.0, 3.0, 3.0, zh);
    let legs: Vec<_> = entry.iter().filter(|m| xy_length(m) > 0.0).collect();
    // ⌈3 / (tan 3° · 20)⌉ = 3, made even: 4 legs of the 20 mm first side.
    assert_eq!(legs.len(), 4);
    assert!(legs.iter().all(|m| (xy_length(m) - 20.0).abs() < 1e-9));
    assert_eq!(xy(legs[3].to), start, "the ramp ends at the start");
    let contour = &contours(&trace, "outline")[0];
    assert_eq!(xy(contour[0].from), start);
    assert!((contour[0].from[2] + 3.0).abs() <= zh);
}

// ---------------------------------------------------------------------------------------------
// Direction.

/// Per feature: the plunge point, the contour's start, and the contour's samples (last pass).
struct Cut {
    plunge: Point,
    start: Point,
    ccw_arcs: usize,
    cw_arcs: usize,
    area2: f64,
    points: Vec<Point>,
}

fn read_cuts(out: &JobOutput) -> Vec<(String, Cut)> {
    let trace = check::trace(&out.program).expect("the program reads back");
    feature_names(&trace)
        .into_iter()
        .map(|name| {
            let plunge = xy(entries(&trace, &name)[0][0].from);
            let runs = contours(&trace, &name);
            let last: Vec<&TraceMove> = runs
                .last()
                .expect("a contour")
                .iter()
                .copied()
                .filter(|m| !m.rapid && m.from[2] == m.to[2] && xy_length(m) > 0.0)
                .collect();
            let points = samples(&last);
            let cut = Cut {
                plunge,
                start: xy(last[0].from),
                ccw_arcs: last.iter().filter(|m| m.arc.is_some_and(|a| a.1)).count(),
                cw_arcs: last.iter().filter(|m| m.arc.is_some_and(|a| !a.1)).count(),
                area2: signed_area2(&points),
                points,
            };
            (name, cut)
        })
        .collect()
}

#[test]
fn climb_and_conventional_run_opposite_ways_within_the_tolerance() {
    let d = 6.0;
    let r = d / 2.0;
    let climb = run(&demo_settings(d), "metric-mill");
    let conventional = run(
        &JobSettings {
            direction: Direction::Conventional,
            ..demo_settings(d)
        },
        "metric-mill",
    );
    assert!(climb.program.contains("(direction: climb, spindle M3"));
    assert!(
        conventional
            .program
            .contains("(direction: conventional, spindle M3")
    );
    let a = read_cuts(&climb);
    let b = read_cuts(&conventional);
    assert_eq!(a.len(), b.len());
    for ((name, up), (name_b, down)) in a.iter().zip(&b) {
        assert_eq!(name, name_b, "the same order both ways");
        let edge = edge_of(&climb, name);
        // NISTIR 6556 App. B.2.1 / §4.1: climb with M3 = holes counter-clockwise (G3), the outline
        // clockwise (G2); conventional the reverse.
        let hole = !matches!(edge, Edge::Outline);
        assert_eq!(up.area2 > 0.0, hole, "{name}: climb area {}", up.area2);
        assert_eq!(
            down.area2 > 0.0,
            !hole,
            "{name}: conventional area {}",
            down.area2
        );
        if hole {
            assert!(up.ccw_arcs > 0 && up.cw_arcs == 0, "{name}: climb G3 only");
            assert!(
                down.cw_arcs > 0 && down.ccw_arcs == 0,
                "{name}: conventional G2 only"
            );
        } else {
            assert!(
                up.cw_arcs == 4 && up.ccw_arcs == 0,
                "{name}: climb corners G2"
            );
            assert!(
                down.ccw_arcs == 4 && down.cw_arcs == 0,
                "{name}: conventional G3"
            );
        }
        assert!(
            (up.area2 + down.area2).abs() <= 1e-3 * up.area2.abs(),
            "{name}: same loop"
        );
        assert!(
            up.plunge.distance(down.plunge) < 1e-9,
            "{name}: same plunge point"
        );
        assert!(up.start.distance(down.start) < 1e-9, "{name}: same start");
        for (label, cut) in [("climb", up), ("conventional", down)] {
            for &p in &cut.points {
                let dist = edge.distance(p);
                assert!(
                    (dist - r).abs() <= TOL,
                    "{name} ({label}): {p:?} lies {dist} mm from the edge, not {r} ± {TOL}"
                );
            }
        }
    }
    // The helices turn with the cut.
    let trace = check::trace(&conventional.program).expect("reads back");
    let entry = &entries(&trace, "bay 1")[0];
    assert!(entry.iter().any(|m| m.arc.is_some()));
    assert!(entry.iter().all(|m| m.arc.is_none_or(|(_, ccw)| !ccw)));
}

#[test]
fn scrap_side_only_keeps_the_deviation_off_the_part_both_ways() {
    let d = 6.0;
    let r = d / 2.0;
    // Straight moves only, so that every curve is a polygon that uses its one-sided band; the
    // written points are rounded to four decimals, at most √2/2 · 10⁻⁴ mm (the job's budget for
    // lines), here 1e-4 mm.
    let rounding = 1e-4;
    for direction in [Direction::Climb, Direction::Conventional] {
        let out = run(
            &JobSettings {
                direction,
                scrap_side_only: true,
                lines_only: true,
                ..demo_settings(d)
            },
            "metric-mill",
        );
        for (name, cut) in read_cuts(&out) {
            let edge = edge_of(&out, &name);
            assert_eq!(cut.ccw_arcs + cut.cw_arcs, 0, "lines only");
            let mut furthest: f64 = 0.0;
            for &p in &cut.points {
                assert!(
                    edge.scrap_side(p),
                    "{name} ({direction:?}): {p:?} on the part"
                );
                let dist = edge.distance(p);
                assert!(
                    dist >= r - rounding && dist <= r + TOL,
                    "{name} ({direction:?}): {p:?} lies {dist} mm from the edge"
                );
                furthest = furthest.max(dist - r);
            }
            // The curves really use the band (not a check that cannot fail): the polygons of
            // the holes and ellipses reach well into the scrap side.
            if !matches!(edge, Edge::Outline) {
                assert!(furthest > 0.25 * TOL, "{name} ({direction:?}): {furthest}");
            }
        }
    }
}

// ---------------------------------------------------------------------------------------------
// Finishing pass.

#[test]
fn finishing_pass_roughs_at_r_plus_s_in_every_pass_and_finishes_once_at_full_depth() {
    let d = 6.0;
    let r = d / 2.0;
    let s = 0.3;
    let depth = conicut::demo::CUT_DEPTH;
    let pass_floors = floors(depth, STEPDOWN);
    let zh = z_half_step("metric-mill");
    let out = run(
        &JobSettings {
            finish_allowance: Some(s),
            ..demo_settings(d)
        },
        "metric-mill",
    );
    assert!(out.program.contains(
        "(finishing pass: the roughing cuts leave 0.3000 mm of radial stock; 9 finishing cuts then"
    ));
    let trace = check::trace(&out.program).expect("the program reads back");
    let names = feature_names(&trace);
    assert_eq!(names.len(), 18, "{names:?}");
    for pair in names.chunks(2) {
        let (rough, finish) = (&pair[0], &pair[1]);
        assert_eq!(
            rough,
            &format!("{finish} roughing"),
            "roughing just before finishing"
        );
        assert!(
            out.program.contains(&format!("{rough}: ")),
            "{rough} in the header"
        );
        let edge = edge_of(&out, finish);
        let rough_runs = contours(&trace, rough);
        let finish_runs = contours(&trace, finish);
        assert_eq!(rough_runs.len(), pass_floors.len(), "{rough}: every pass");
        assert_eq!(finish_runs.len(), 1, "{finish}: once");
        for (k, run) in rough_runs.iter().enumerate() {
            assert!(
                (run[0].from[2] + pass_floors[k]).abs() <= zh,
                "{rough}, pass {k}"
            );
        }
        assert!(
            (finish_runs[0][0].from[2] + depth).abs() <= zh,
            "{finish}: full depth"
        );
        for (label, runs, want) in [(rough, &rough_runs, r + s), (finish, &finish_runs, r)] {
            for run in runs.iter() {
                let flat: Vec<&TraceMove> = run
                    .iter()
                    .copied()
                    .filter(|m| m.from[2] == m.to[2] && xy_length(m) > 0.0)
                    .collect();
                for p in samples(&flat) {
                    let dist = edge.distance(p);
                    assert!(
                        (dist - want).abs() <= TOL,
                        "{label}: {p:?} lies {dist} mm from the edge, not {want} ± {TOL}"
                    );
                }
            }
        }
        // One entry for the finishing cut, from the top of the stock to the full depth, no
        // steeper than the ramp.
        let finish_entries = entries(&trace, finish);
        assert_eq!(finish_entries.len(), 1);
        check_ramp(finish, &finish_entries[0], 0.0, depth, RAMP_DEG, zh);
    }
    let header_line = |name: &str| {
        out.program
            .lines()
            .find(|l| l.contains(&format!(" {name}: ")))
            .unwrap_or_else(|| panic!("{name} in the header"))
            .to_string()
    };
    assert!(header_line("bay 2 roughing").contains("roughing, leaves 0.3000 mm"));
    assert!(header_line("bay 2").contains("finishing, once at full depth"));
}

#[test]
fn both_cuts_of_the_outline_keep_the_same_tabs() {
    let d = 6.0;
    let s = 0.3;
    let out = run(
        &JobSettings {
            finish_allowance: Some(s),
            tabs: Some(conicut::job::TabRequest {
                count: Some(4),
                ..Default::default()
            }),
            ..demo_settings(d)
        },
        "metric-mill",
    );
    let trace = check::trace(&out.program).expect("the program reads back");
    let depth = conicut::demo::CUT_DEPTH;
    // The middle of every raised stretch of the last contour run (the tool above the floor).
    let tab_middles = |name: &str| -> Vec<Point> {
        let runs = contours(&trace, name);
        let last = runs.last().expect("a contour");
        let mut out = Vec::new();
        let mut group: Vec<&TraceMove> = Vec::new();
        for m in last.iter().copied().chain(std::iter::once(&TraceMove {
            line: 0,
            rapid: false,
            from: [0.0, 0.0, -depth],
            to: [0.0, 0.0, -depth],
            arc: None,
            feed: 0.0,
        })) {
            let raised = m.from[2] > -depth + 1e-6 && m.to[2] > -depth + 1e-6;
            if raised && xy_length(m) > 0.0 {
                group.push(m);
            } else if !raised && !group.is_empty() {
                let pts = samples(&group);
                out.push(pts[pts.len() / 2]);
                group.clear();
            }
        }
        out
    };
    let rough = tab_middles("outline roughing");
    let finish = tab_middles("outline");
    assert_eq!(finish.len(), 4, "{finish:?}");
    assert_eq!(rough.len(), 4, "{rough:?}");
    // Each roughing tab lies beside a finishing tab: s apart across the path (the roughing path
    // runs s further out), plus the sampling step along it.
    for p in &finish {
        let nearest = rough
            .iter()
            .map(|q| q.distance(*p))
            .fold(f64::INFINITY, f64::min);
        assert!(
            nearest <= s + 2.0 * STEP,
            "{p:?}: nearest roughing tab {nearest} mm away"
        );
    }
}

// ---------------------------------------------------------------------------------------------
// Plans: exact reversal, pockets.

fn square(x0: f64, y0: f64, side: f64, ccw: bool) -> Contour {
    let mut p = [
        Point::new(x0, y0),
        Point::new(x0 + side, y0),
        Point::new(x0 + side, y0 + side),
        Point::new(x0, y0 + side),
    ];
    if !ccw {
        p.reverse();
    }
    Contour {
        elements: (0..4)
            .map(|i| Element::Line(Segment::new(p[i], p[(i + 1) % 4])))
            .collect(),
        layer: "0".into(),
        handles: vec![],
    }
}

#[test]
fn conventional_plans_are_the_climb_plans_reversed_exactly() {
    let part = Part {
        outline: Some(square(0.0, 0.0, 100.0, true)),
        ..Part::default()
    };
    let e = Ellipse::new(Point::new(50.0, 50.0), 30.0, 15.0, 0.3).expect("an ellipse");
    let openings = [
        Opening {
            name: "opening".into(),
            ellipse: e,
            side: CutSide::Inside,
            pocket: false,
        },
        Opening {
            name: "pocket".into(),
            ellipse: Ellipse::new(Point::new(20.0, 80.0), 12.0, 8.0, 0.0).expect("an ellipse"),
            side: CutSide::Inside,
            pocket: true,
        },
    ];
    let opts = |direction| PlanOptions {
        direction,
        ..PlanOptions::plain(6.0)
    };
    let climb = plan_cuts(&part, &openings, &opts(Direction::Climb)).expect("plans");
    let conv = plan_cuts(&part, &openings, &opts(Direction::Conventional)).expect("plans");
    assert_eq!(climb.cuts.len(), conv.cuts.len());
    for (a, b) in climb.cuts.iter().zip(&conv.cuts) {
        assert!(a.scrap_left && !b.scrap_left, "{}", a.name);
        assert_eq!(b.path, a.path.reversed(), "{}", a.name);
        assert_eq!(b.path.reversed(), a.path, "{}: reversing twice", a.name);
        assert_eq!(a.plunge, b.plunge, "{}", a.name);
        // The same start (a reversed contour's first point is its last piece's end, computed
        // again from the arc's angle: equal to rounding).
        assert!(
            a.path.start_point().distance(b.path.start_point()) < 1e-12,
            "{}",
            a.name
        );
        assert_eq!(a.clearing.len(), b.clearing.len());
        for (p, q) in a.clearing.iter().zip(&b.clearing) {
            assert_eq!(*q, p.reversed());
        }
        match (&a.path, &b.path) {
            (
                ExactPath::EllipseParallel { clockwise: x, .. },
                ExactPath::EllipseParallel { clockwise: y, .. },
            ) => assert!(
                !x && *y,
                "{}: inside cuts counter-clockwise when climbing",
                a.name
            ),
            (ExactPath::Contour(x), ExactPath::Contour(y)) => {
                assert!(
                    !x.is_ccw() && y.is_ccw(),
                    "the outline: clockwise when climbing"
                );
                assert!((x.signed_area() + y.signed_area()).abs() < 1e-9);
            }
            _ => panic!("{}: the same kind of path both ways", a.name),
        }
    }
}

#[test]
fn a_finishing_pass_keeps_pocket_clearing_on_the_roughing_cut() {
    let e = Ellipse::new(Point::new(0.0, 0.0), 30.0, 20.0, 0.0).expect("an ellipse");
    let openings = [Opening {
        name: "pocket".into(),
        ellipse: e,
        side: CutSide::Inside,
        pocket: true,
    }];
    let (d, s) = (6.0, 0.5);
    let plain = plan_cuts(&Part::default(), &openings, &PlanOptions::plain(d)).expect("plans");
    let plan = plan_cuts(
        &Part::default(),
        &openings,
        &PlanOptions {
            finish_allowance: Some(s),
            ..PlanOptions::plain(d)
        },
    )
    .expect("plans");
    assert_eq!(plan.cuts.len(), 2);
    let (rough, finish) = (&plan.cuts[0], &plan.cuts[1]);
    assert_eq!(rough.name, "pocket roughing");
    assert!(!rough.full_depth_only && finish.full_depth_only);
    assert!(finish.clearing.is_empty());
    assert_eq!(rough.allowance, s);
    assert!(matches!(
        rough.path,
        ExactPath::EllipseParallel { inset, .. } if inset == 3.0 + s
    ));
    assert_eq!(finish.path, plain.cuts[0].path);
    assert!(!plain.cuts[0].clearing.is_empty(), "the pocket has rings");
    // Every ring the roughing cut keeps lies at least r + s from the edge: sampled densely, the
    // distance measured by this file's own ellipse distance.
    for ring in &rough.clearing {
        let pts: Vec<Point> = match ring {
            ExactPath::EllipseParallel { ellipse, inset, .. } => (0..720)
                .map(|k| ellipse.inward_offset_point(TAU * k as f64 / 720.0, *inset))
                .collect(),
            ExactPath::Contour(c) => c.elements.iter().map(Element::start).collect(),
        };
        for p in pts {
            let dist = ellipse_distance(e.center(), e.a(), e.b(), e.angle(), p);
            assert!(dist >= 3.0 + s - 1e-6, "a ring at {dist} mm cuts the stock");
        }
    }
    // Rings inside the roughing contour are all kept.
    let kept = plain.cuts[0]
        .clearing
        .iter()
        .filter(|ring| match ring {
            ExactPath::EllipseParallel { inset, .. } => *inset >= 3.0 + s,
            ExactPath::Contour(_) => true,
        })
        .count();
    assert_eq!(rough.clearing.len(), kept);
}

// ---------------------------------------------------------------------------------------------
// Refusals.

#[test]
fn bad_allowances_are_refused_with_what_to_do() {
    for bad in [0.0, -0.2, f64::NAN] {
        let err = run_job(
            &conicut::demo::demo_dxf_bytes(),
            &profile("metric-mill"),
            &JobSettings {
                finish_allowance: Some(bad),
                ..demo_settings(6.0)
            },
        )
        .expect_err("refused");
        assert!(
            matches!(
                &err,
                JobError::Plan {
                    error: PlanError::BadFinishAllowance(_),
                    ..
                }
            ),
            "{err:?}"
        );
        assert!(err.to_string().contains("positive number of millimetres"));
    }

    // b²/a = 10² / 20 = 5 mm (the radius of curvature at the ends of the major axis, any
    // calculus text); a 6 mm tool leaves 5 − 3 = 2 mm, less the planner's gouge margin of a
    // millionth of the path's distance: at most 1.9999 mm, named in the message.
    let e = Ellipse::new(Point::new(0.0, 0.0), 20.0, 10.0, 0.0).expect("an ellipse");
    let openings = [Opening {
        name: "slot".into(),
        ellipse: e,
        side: CutSide::Inside,
        pocket: false,
    }];
    let with = |s: f64| PlanOptions {
        finish_allowance: Some(s),
        ..PlanOptions::plain(6.0)
    };
    let err = plan_cuts(&Part::default(), &openings, &with(2.5)).expect_err("too big");
    assert!(
        matches!(&err, PlanError::AllowanceTooBig { feature, limit, .. }
            if feature == "slot" && (limit - 5.0).abs() < 1e-12),
        "{err:?}"
    );
    let text = err.to_string();
    assert!(text.contains("at most 1.9999 mm"), "{text}");
    assert!(text.contains("b²/a = 5.0000 mm"), "{text}");
    assert!(plan_cuts(&Part::default(), &openings, &with(2.0)).is_err());
    let plan = plan_cuts(&Part::default(), &openings, &with(1.9999)).expect("fits");
    assert!(matches!(
        plan.cuts[0].path,
        ExactPath::EllipseParallel { inset, .. } if (inset - 4.9999).abs() < 1e-12
    ));

    // On the demo the bolt holes (radius 4.5 mm) are the tightest: a roughing path 3 + 2 = 5 mm
    // in from a 4.5 mm circle does not exist. The error names the hole and what to do.
    let err = run_job(
        &conicut::demo::demo_dxf_bytes(),
        &profile("metric-mill"),
        &JobSettings {
            finish_allowance: Some(2.0),
            ..demo_settings(6.0)
        },
    )
    .expect_err("refused");
    assert!(
        matches!(&err, JobError::Plan { error: PlanError::RoughingDoesNotFit { feature, distance, .. }, .. }
            if feature.starts_with("hole") && *distance == 5.0),
        "{err:?}"
    );
    assert!(err.to_string().contains("use a smaller allowance"), "{err}");
}

#[test]
fn lasers_refuse_a_finishing_pass_and_keep_the_usual_direction() {
    let laser = profile("laser");
    let kerf = laser.kerf_width().expect("a kerf");
    let settings = JobSettings {
        finish_allowance: Some(0.3),
        ..demo_settings(kerf)
    };
    let err = run_job(&conicut::demo::demo_dxf_bytes(), &laser, &settings).expect_err("refused");
    assert!(matches!(err, JobError::FinishCutsThrough { .. }), "{err:?}");
    assert!(err.to_string().contains("mills and routers only"), "{err}");

    let asked = JobSettings {
        direction: Direction::Conventional,
        ..demo_settings(kerf)
    };
    let out = run(&asked, "laser");
    assert!(
        out.report
            .warnings
            .iter()
            .any(|w| w.contains("conventional") && w.contains("ignored")),
        "{:?}",
        out.report.warnings
    );
    assert!(
        out.program
            .contains("(direction: holes counter-clockwise, outline clockwise")
    );
    // §4.1: thermal cuts run holes counter-clockwise and the outline clockwise.
    for (name, cut) in read_cuts(&out) {
        let hole = !matches!(edge_of(&out, &name), Edge::Outline);
        assert_eq!(cut.area2 > 0.0, hole, "{name}");
    }
}
