//! Shared by the tests of entry, direction and the finishing pass on mills and routers
//! (`tests/entry_passes.rs`, `tests/cut_direction.rs`, `tests/finishing_pass.rs`): the demo's
//! finished edges computed here from its published dimensions, the jobs, reading the program
//! back (with `support/gcode_read.rs`) and the ramp check.

#![allow(dead_code)]

use crate::demo_job;
use crate::gcode_read::{ReadBack, ReadMove, contour_runs, read_back};
use crate::machine::machine;
use conicut::geom::{Contour, Element};
use conicut::geom::{Point, Segment};
use conicut::pipeline::{JobOutput, JobSettings, LeadRequest, run_job};
use conicut::plan::LeadKind;
use std::f64::consts::{SQRT_2, TAU};

/// The tolerance of every job here (mm), the usual value.
pub const TOL: f64 = 0.01;
/// Ramp angle (degrees): the top of the 1–3° range for steel (common practice, §4.3).
pub const RAMP_DEG: f64 = 3.0;
/// Depth of each pass (mm).
pub const STEPDOWN: f64 = 1.5;
/// Output rounding of the metric mill profile (four decimals) for arcs: end points and centre
/// are rounded and the centre moved onto the bisector, within 2√2 steps of the exact arc (the
/// job's own rounding budget, `tests/post_arcs.rs`).
pub const XY_ROUND: f64 = 2.0 * SQRT_2 * 1e-4;
/// Sampling step along written moves (mm). The deviation of a written move from its curve
/// changes over millimetres (a chord's sagitta, an arc spline's error lobe), so a sample within
/// 0.025 mm of its largest value misses it by a negligible share (about 4 (0.025 / L)² for a lobe
/// of length L ≥ 1 mm).
pub const STEP: f64 = 0.05;

// ---------------------------------------------------------------------------------------------
// The demo's edges, computed here.

/// A finished edge of the demo part.
#[derive(Debug, Clone, Copy)]
pub enum Edge {
    /// A bolt hole: centre and radius.
    Circle(Point, f64),
    /// An elliptical opening: centre, semi-axes, angle of the major axis (radians).
    Ellipse(Point, f64, f64, f64),
    /// The plate's outline: a 240 × 140 mm rectangle with 10 mm corner radii.
    Outline,
}

impl Edge {
    /// Distance from `p` to the edge (mm).
    pub fn distance(&self, p: Point) -> f64 {
        match *self {
            Edge::Circle(c, r) => (p.distance(c) - r).abs(),
            Edge::Ellipse(c, a, b, angle) => ellipse_distance(c, a, b, angle, p),
            Edge::Outline => rounded_rectangle_distance(p).abs(),
        }
    }

    /// Whether `p` is on the scrap side: inside a hole or opening, outside the outline.
    pub fn scrap_side(&self, p: Point) -> bool {
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

pub fn local(c: Point, angle: f64, p: Point) -> (f64, f64) {
    let (s, co) = angle.sin_cos();
    let (dx, dy) = (p.x - c.x, p.y - c.y);
    (dx * co + dy * s, -dx * s + dy * co)
}

/// Distance from `p` to the ellipse: a scan of 512 parameter values (for the demo's ellipses at
/// most about 0.5 mm of arc apart, far less than the few millimetres between the points measured
/// and the curve, so the best sample lies next to the true nearest point), then golden-section
/// refinement of the squared distance over the two steps either side (60 steps, to about 1e-14
/// rad).
pub fn ellipse_distance(c: Point, a: f64, b: f64, angle: f64, p: Point) -> f64 {
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
pub fn rounded_rectangle_distance(p: Point) -> f64 {
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
pub fn edge_of(out: &JobOutput, name: &str) -> Edge {
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
            Point::new(e.centre_mm[0], e.centre_mm[1]),
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
pub fn demo_settings(d: f64) -> JobSettings {
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

pub fn run(settings: &JobSettings, stem: &str) -> JobOutput {
    run_job(&conicut::demo::demo_dxf_bytes(), &machine(stem), settings)
        .unwrap_or_else(|e| panic!("the demo job runs: {e}"))
}

/// The pass floors (mm below the top, ascending), computed here: every stepdown, then the depth.
pub fn floors(depth: f64, stepdown: f64) -> Vec<f64> {
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

pub fn xy(p: [f64; 3]) -> Point {
    Point::new(p[0], p[1])
}

pub fn feature_names(trace: &ReadBack) -> Vec<String> {
    trace.features.iter().map(|(n, _)| n.clone()).collect()
}

pub fn feature_range(trace: &ReadBack, name: &str) -> std::ops::Range<usize> {
    let k = trace
        .features
        .iter()
        .position(|(n, _)| n == name)
        .unwrap_or_else(|| panic!("{name} in the program"));
    let end = trace.features.get(k + 1).map_or(trace.moves.len(), |f| f.1);
    trace.features[k].1..end
}

/// The feature's moves cut at every comment: (comment, move indices up to the next comment).
pub fn sections(trace: &ReadBack, name: &str) -> Vec<(String, Vec<usize>)> {
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
pub fn entries<'t>(trace: &'t ReadBack, name: &str) -> Vec<Vec<&'t ReadMove>> {
    let all = sections(trace, name);
    let has_passes = all.iter().any(|(t, _)| t.starts_with("pass "));
    let head = |t: &str| {
        if has_passes {
            t.starts_with("pass ")
        } else {
            t.starts_with("cut ")
        }
    };
    // Each pass (or the cut) with the entry the writer names after it (`entry: …`).
    let mut out = Vec::new();
    for (k, (t, idx)) in all.iter().enumerate() {
        if !head(t) {
            continue;
        }
        let mut moves: Vec<usize> = idx.clone();
        if let Some((next, more)) = all.get(k + 1)
            && next.starts_with("entry: ")
        {
            moves.extend(more);
        }
        out.push(
            moves
                .iter()
                .map(|&i| &trace.moves[i])
                .filter(|m| !m.rapid)
                .collect(),
        );
    }
    out
}

/// The feature's contour runs, one per pass.
pub fn contours<'t>(trace: &'t ReadBack, name: &str) -> Vec<Vec<&'t ReadMove>> {
    contour_runs(trace, name)
        .into_iter()
        .map(|run| run.into_iter().map(|i| &trace.moves[i]).collect())
        .collect()
}

/// The signed sweep of a traced arc (positive counter-clockwise), a full turn for a closed one.
pub fn sweep(m: &ReadMove) -> f64 {
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
pub fn xy_length(m: &ReadMove) -> f64 {
    match m.arc {
        Some((c, _)) => xy(m.from).distance(Point::new(c[0], c[1])) * sweep(m).abs(),
        None => xy(m.from).distance(xy(m.to)),
    }
}

/// Points along traced moves (XY), at most [`STEP`] apart, both ends of every move included.
pub fn samples(moves: &[&ReadMove]) -> Vec<Point> {
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
pub fn signed_area2(points: &[Point]) -> f64 {
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
pub fn z_half_step(stem: &str) -> f64 {
    0.5 * 10f64.powi(-(machine(stem).profile.z_decimals() as i32))
}

/// Checks one pass's entry: every descending move with XY travel descends no steeper than
/// `ramp_deg` along its path (each end's height may be rounded by `zh`), a descending move
/// without XY travel stops at or above `prev_floor` (only back down to what an earlier pass cut),
/// and the entry reaches `floor`. Returns the arcs of the entry.
pub fn check_ramp<'m>(
    ctx: &str,
    entry: &[&'m ReadMove],
    prev_floor: f64,
    floor: f64,
    ramp_deg: f64,
    zh: f64,
) -> Vec<&'m ReadMove> {
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

pub fn square(x0: f64, y0: f64, side: f64, ccw: bool) -> Contour {
    let mut p = [
        Point::new(x0, y0),
        Point::new(x0 + side, y0),
        Point::new(x0 + side, y0 + side),
        Point::new(x0, y0 + side),
    ];
    if !ccw {
        p.reverse();
    }
    Contour::new(
        (0..4)
            .map(|i| Element::Line(Segment::new(p[i], p[(i + 1) % 4])))
            .collect(),
        "0",
        vec![],
    )
    .unwrap()
}

/// Per feature: the plunge point, the contour's start, and the contour's samples (last pass).
pub struct Cut {
    pub plunge: Point,
    pub start: Point,
    pub ccw_arcs: usize,
    pub cw_arcs: usize,
    pub area2: f64,
    pub points: Vec<Point>,
}

pub fn read_cuts(out: &JobOutput) -> Vec<(String, Cut)> {
    let trace = read_back(&out.program);
    feature_names(&trace)
        .into_iter()
        .map(|name| {
            let plunge = xy(entries(&trace, &name)[0][0].from);
            let runs = contours(&trace, &name);
            let last: Vec<&ReadMove> = runs
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
