//! Leads, overcut, lead-out and pierce points (issue 4), on the demo part through
//! `conicut::job::run_job`, for every bundled profile and every lead shape.
//!
//! The programs are read back with an outside RS274 reader (the `gcode` crate) and a small
//! interpreter of our own in this file (modal position, G20/G21, centre-format arcs, the cut's
//! section comments); nothing is taken from the planner. The finished edges are built here from
//! the drawing's definition (`conicut::demo`: the 240 × 140 mm plate with 10 mm corner radii and
//! the four Ø9 mm bolt holes) and from the solved ellipses the report states.
//!
//! Sources of the rules checked:
//! * lead and pierce in the scrap, pierce point at least one kerf plus the crater from the
//!   finished contour, short lead-outs on holes: docs/sources.md P4.3 (common practice);
//! * arc leads tangent to the contour, lead arcs wider than the tool on mills: NISTIR 6556
//!   App. B.3.1;
//! * the distance of a point from a rounded rectangle: the rounded rectangle is the set of
//!   points within the corner radius of the inner rectangle, so its signed distance is the inner
//!   rectangle's less the corner radius (plane geometry);
//! * the distance of a point from an ellipse: `Ellipse::distance_to` (Eberly's method, checked
//!   against dense sampling in `src/geom/ellipse.rs`).

#[path = "support/demo_job.rs"]
mod demo_job;
use conicut::chain::{ChainOptions, build_part};
use conicut::check::scrap::{ScrapRules, check_scrap};
use conicut::check::trace;
use conicut::demo::{
    BOLT_HOLE_CENTRES, BOLT_HOLE_RADIUS, CORNER_RADIUS, PLATE_HEIGHT, PLATE_WIDTH, demo_dxf_bytes,
};
use conicut::geom::{Ellipse, Point, Vec2};
use conicut::job::{JobError, JobOutput, JobSettings, LeadRequest, run_job};
use conicut::plan::{CutSide, Direction, LeadKind, Opening, PlanError, PlanOptions, plan_cuts};
use conicut::post::MachineProfile;
use conicut::read::{ReadOptions, read_dxf};
use conicut::report::Report;
use conicut::settings::BUNDLED_PROFILES;
use demo_job::profile;
use std::f64::consts::TAU;

/// The gcode crate reads values as `f32`: about 1e-5 mm at the demo's coordinates; we allow
/// 1e-4 mm for it.
const READ_SLACK: f64 = 1e-4;

/// The largest angle (degrees) between the end tangent of an arc lead and the contour's first
/// tangent, as read back. The lead arc is written exactly, tangent to the exact path; the
/// contour's first move is an arc of the fitted spline, within the 0.01 mm tolerance of the exact
/// path, whose tangent at the start may turn by a few tenths of a degree from the exact one;
/// rounding adds ~1e-4 mm over arcs a few mm long. Measured on these runs: at most 0.35° (lead-in
/// and lead-out). A bound of 1.5° still tells a tangent arc from a perpendicular line (90°).
const TANGENT_BOUND_DEG: f64 = 1.5;

/// The same bound for lines-only output (G1 only), where the lead arc and the contour are both
/// written as chords within ±ε of the exact curves: a chord whose sagitta is at most 2ε on an arc
/// of radius ρ turns by about √(16 ε / ρ), and at the joint roughly half of each chord's turn
/// shows: 5.7° for the 4 mm lead arc and 1.3° for the openings' paths (radius of curvature above
/// 75 mm at the ends of the minor axis) at ε = 0.01 mm. Measured on these runs: at most 7.5°.
/// 10° still tells a tangent arc from a perpendicular line.
const LINES_TANGENT_BOUND_DEG: f64 = 10.0;

fn settings(p: &MachineProfile, leads: LeadRequest) -> JobSettings {
    JobSettings {
        leads,
        ..demo_job::demo_settings(p.kerf_width().unwrap_or(6.0))
    }
}

fn kind_only(kind: LeadKind) -> LeadRequest {
    LeadRequest {
        kind: Some(kind),
        ..LeadRequest::default()
    }
}

// ---------------------------------------------------------------------------------------------
// Reading the program back with the gcode crate.

/// One move read back (mm).
#[derive(Debug, Clone, Copy)]
struct Mv {
    from: [f64; 3],
    to: [f64; 3],
    /// Centre and counter-clockwise for G2/G3.
    arc: Option<(Point, bool)>,
    rapid: bool,
}

impl Mv {
    fn start_xy(&self) -> Point {
        Point::new(self.from[0], self.from[1])
    }
    fn end_xy(&self) -> Point {
        Point::new(self.to[0], self.to[1])
    }
    /// The signed sweep of an arc (radians; counter-clockwise positive).
    fn sweep(&self) -> f64 {
        let Some((c, ccw)) = self.arc else { return 0.0 };
        let a0 = (self.start_xy() - c).angle();
        let a1 = (self.end_xy() - c).angle();
        if ccw {
            (a1 - a0).rem_euclid(TAU)
        } else {
            -(a0 - a1).rem_euclid(TAU)
        }
    }
    /// The XY point and height at share `t` of the move.
    fn at(&self, t: f64) -> (Point, f64) {
        let z = self.from[2] + t * (self.to[2] - self.from[2]);
        let p = match self.arc {
            None => self.start_xy().lerp(self.end_xy(), t),
            Some((c, _)) => {
                let r0 = self.start_xy().distance(c);
                let r1 = self.end_xy().distance(c);
                let a = (self.start_xy() - c).angle() + t * self.sweep();
                c + Vec2::from_angle(a) * (r0 + t * (r1 - r0))
            }
        };
        (p, z)
    }
    fn length(&self) -> f64 {
        match self.arc {
            None => self.start_xy().distance(self.end_xy()),
            Some((c, _)) => self.start_xy().distance(c) * self.sweep().abs(),
        }
    }
    /// Unit tangent (XY) at the start or end.
    fn tangent(&self, end: bool) -> Vec2 {
        match self.arc {
            None => (self.end_xy() - self.start_xy())
                .normalized()
                .expect("a move with length"),
            Some((c, ccw)) => {
                let p = if end { self.end_xy() } else { self.start_xy() };
                let radial = (p - c).normalized().expect("a point off the centre").perp();
                if ccw { radial } else { -radial }
            }
        }
    }
    /// Points every 0.02 mm or closer, both ends included.
    fn samples(&self) -> Vec<(Point, f64)> {
        let n = ((self.length() / 0.02).ceil() as usize).clamp(1, 100_000);
        (0..=n).map(|k| self.at(k as f64 / n as f64)).collect()
    }
}

/// A cut as read back: its name and its sections in order (`entry` for the moves before the
/// first section comment and after a `pass` comment).
#[derive(Debug)]
struct ReadCut {
    name: String,
    sections: Vec<(String, Vec<Mv>)>,
}

impl ReadCut {
    fn section(&self, name: &str) -> Vec<Mv> {
        self.sections
            .iter()
            .filter(|(n, _)| n == name)
            .flat_map(|(_, m)| m.iter().copied())
            .collect()
    }
    /// The first run of a section (the first pass), for sections repeated by depth passes.
    fn first_run(&self, name: &str) -> Vec<Mv> {
        self.sections
            .iter()
            .find(|(n, _)| n == name)
            .map(|(_, m)| m.clone())
            .unwrap_or_default()
    }
}

fn literal(v: &gcode::Value) -> Option<f64> {
    match v {
        gcode::Value::Literal(x) => Some(*x as f64),
        _ => None,
    }
}

/// Reads a program with the gcode crate and follows its moves (absolute XYZ, centre-format arcs
/// with I, J from the start, G20/G21).
fn read_cuts(program: &str) -> Vec<ReadCut> {
    let parsed = gcode::parse(program).expect("the gcode crate parses the program");
    let mut cuts: Vec<ReadCut> = Vec::new();
    let mut section = String::from("entry");
    let mut scale = 1.0;
    let mut pos = [0.0f64; 3];
    for block in &parsed.blocks {
        for c in &block.comments {
            let text = c.value.trim_start_matches('(').trim_end_matches(')').trim();
            if let Some((_, name)) = text.strip_prefix("cut ").and_then(|r| r.split_once(": ")) {
                cuts.push(ReadCut {
                    name: name.to_string(),
                    sections: Vec::new(),
                });
                section = "entry".into();
            } else if text.starts_with("pass ") {
                section = "entry".into();
            } else if ["clearing", "lead-in", "contour", "overcut", "lead-out"].contains(&text) {
                section = text.to_string();
            }
        }
        for code in &block.codes {
            let gcode::Code::General(g) = code else {
                continue;
            };
            let major = g.number.major();
            match major {
                20 => scale = 25.4,
                21 => scale = 1.0,
                0..=3 => {
                    let arg = |l: char| {
                        g.args
                            .iter()
                            .find(|a| a.letter == l)
                            .and_then(|a| literal(&a.value))
                    };
                    let mut to = pos;
                    for (k, l) in ['X', 'Y', 'Z'].into_iter().enumerate() {
                        if let Some(v) = arg(l) {
                            to[k] = v * scale;
                        }
                    }
                    if to == pos && major < 2 {
                        continue;
                    }
                    let arc = (major >= 2).then(|| {
                        let i = arg('I').expect("arcs carry I") * scale;
                        let j = arg('J').expect("arcs carry J") * scale;
                        (Point::new(pos[0] + i, pos[1] + j), major == 3)
                    });
                    let m = Mv {
                        from: pos,
                        to,
                        arc,
                        rapid: major == 0,
                    };
                    pos = to;
                    if let Some(cut) = cuts.last_mut() {
                        match cut.sections.last_mut() {
                            Some((n, moves)) if *n == section => moves.push(m),
                            _ => cut.sections.push((section.clone(), vec![m])),
                        }
                    }
                }
                _ => {}
            }
        }
    }
    cuts
}

// ---------------------------------------------------------------------------------------------
// The finished edges, from the drawing and the report.

#[derive(Debug, Clone)]
enum Shape {
    /// The plate: 240 × 140 mm, corners rounded with 10 mm radii, from the origin.
    Plate,
    Circle(Point, f64),
    Ellipse(Ellipse),
}

#[derive(Debug, Clone)]
struct Finished {
    name: String,
    shape: Shape,
}

impl Finished {
    /// Signed distance: negative inside the closed edge.
    fn signed(&self, p: Point) -> f64 {
        match &self.shape {
            Shape::Plate => {
                let (hx, hy) = (
                    PLATE_WIDTH / 2.0 - CORNER_RADIUS,
                    PLATE_HEIGHT / 2.0 - CORNER_RADIUS,
                );
                let qx = (p.x - PLATE_WIDTH / 2.0).abs() - hx;
                let qy = (p.y - PLATE_HEIGHT / 2.0).abs() - hy;
                qx.max(0.0).hypot(qy.max(0.0)) + qx.max(qy).min(0.0) - CORNER_RADIUS
            }
            Shape::Circle(c, r) => p.distance(*c) - r,
            Shape::Ellipse(e) => {
                let d = e.distance_to(p).0;
                if e.contains(p) { -d } else { d }
            }
        }
    }
    /// Whether `p` is surely more than `d` from the edge, by a cheap bound: an ellipse lies
    /// within its semi-major axis of its centre, a circle within its radius.
    fn surely_farther(&self, p: Point, d: f64) -> bool {
        match &self.shape {
            Shape::Plate => false,
            Shape::Circle(c, r) => p.distance(*c) > r + d,
            Shape::Ellipse(e) => p.distance(e.center()) > e.a() + d,
        }
    }

    /// The scrap is inside holes and openings, outside the plate.
    fn in_scrap(&self, p: Point) -> bool {
        match self.shape {
            Shape::Plate => self.signed(p) > 0.0,
            _ => self.signed(p) < 0.0,
        }
    }
}

/// Every finished edge of the demo part: the plate and bolt holes from the drawing's definition,
/// the openings from the report's solved ellipses.
fn finished_edges(report: &Report) -> Vec<Finished> {
    let mut out = vec![Finished {
        name: "outline".into(),
        shape: Shape::Plate,
    }];
    for (k, &(x, y)) in BOLT_HOLE_CENTRES.iter().enumerate() {
        out.push(Finished {
            name: format!("bolt hole {k}"),
            shape: Shape::Circle(Point::new(x, y), BOLT_HOLE_RADIUS),
        });
    }
    for f in &report.features {
        if let Some(e) = &f.ellipse {
            out.push(Finished {
                name: f.name.clone(),
                shape: Shape::Ellipse(
                    Ellipse::new(
                        Point::new(e.center_mm[0], e.center_mm[1]),
                        e.semi_major_mm,
                        e.semi_minor_mm,
                        e.angle_deg.to_radians(),
                    )
                    .expect("a valid ellipse"),
                ),
            });
        }
    }
    out
}

/// The finished edge a cut makes: by name for the outline and the openings, and for a bolt hole
/// the circle its contour runs in (nearest centre to the contour's first point).
fn own_edge(cut: &ReadCut, edges: &[Finished]) -> usize {
    // A roughing cut makes the same edge as its finishing cut.
    let name = cut.name.strip_suffix(" roughing").unwrap_or(&cut.name);
    if let Some(k) = edges.iter().position(|e| e.name == name) {
        return k;
    }
    let p = cut.section("contour")[0].start_xy();
    edges
        .iter()
        .enumerate()
        .filter(|(_, e)| matches!(e.shape, Shape::Circle(..)))
        .min_by(|a, b| {
            let da = a.1.signed(p).abs();
            let db = b.1.signed(p).abs();
            da.total_cmp(&db)
        })
        .map(|(k, _)| k)
        .expect("a bolt hole")
}

/// Moves shorter than this (mm) are left out when taking the direction at a joint: lines-only
/// output closes a lead written as chords with a short chord onto the fitted contour's start,
/// which lies within the tolerance of the exact start.
const SHORT_MOVE: f64 = 0.1;

/// The direction at the end of a run: the end tangent of its last move at least
/// [`SHORT_MOVE`] long.
fn end_tangent(moves: &[Mv]) -> Option<Vec2> {
    moves
        .iter()
        .rev()
        .find(|m| m.length() >= SHORT_MOVE)
        .map(|m| m.tangent(true))
}

/// The direction at the start of a run: the start tangent of its first move at least
/// [`SHORT_MOVE`] long.
fn start_tangent(moves: &[Mv]) -> Option<Vec2> {
    moves
        .iter()
        .find(|m| m.length() >= SHORT_MOVE)
        .map(|m| m.tangent(false))
}

fn angle_deg(a: Vec2, b: Vec2) -> f64 {
    a.cross(b).atan2(a.dot(b)).abs().to_degrees()
}

// ---------------------------------------------------------------------------------------------
// The checks.

/// What one run is checked against.
struct Expect<'a> {
    profile: &'a MachineProfile,
    kind: LeadKind,
    lines_only: bool,
}

/// Runs the demo and checks every cut's leads; returns the output for further checks.
fn run_and_check(stem: &str, request: LeadRequest, lines_only: bool) -> JobOutput {
    run_and_check_with(stem, request, |s| s.lines_only = lines_only)
}

/// [`run_and_check`] with settings changed by `adjust`.
fn run_and_check_with(
    stem: &str,
    request: LeadRequest,
    adjust: impl Fn(&mut JobSettings),
) -> JobOutput {
    let p = profile(stem);
    let mut s = settings(&p, request);
    adjust(&mut s);
    let lines_only = s.lines_only;
    let kind = request.kind.unwrap_or(p.lead_options().kind);
    let out = run_job(&demo_dxf_bytes(), &p, &s).unwrap_or_else(|e| panic!("{stem}: {e}"));
    check_leads(
        stem,
        &out,
        &Expect {
            profile: &p,
            kind,
            lines_only,
        },
        request,
    );
    out
}

fn check_leads(stem: &str, out: &JobOutput, x: &Expect, request: LeadRequest) {
    let report = &out.report;
    let r = report.tool_diameter_mm / 2.0;
    let tol = report.tolerance_mm;
    let edges = finished_edges(report);
    let cuts = read_cuts(&out.program);
    assert_eq!(cuts.len(), report.features.len(), "{stem}: every cut");
    assert!(cuts.len() >= 9, "{stem}: nine features at least");
    let mill = x.profile.spindle().is_some();
    let clearance = x.profile.pierce_clearance();
    let defaults = x.profile.lead_options();
    let overcut = request.overcut.unwrap_or(defaults.overcut);
    let lead_out_asked =
        request.lead_out.unwrap_or(defaults.lead_out) && x.kind != LeadKind::Straight;
    let bound = if x.lines_only {
        LINES_TANGENT_BOUND_DEG
    } else {
        TANGENT_BOUND_DEG
    };
    for cut in &cuts {
        let ctx = format!(
            "{stem}, {:?}{}, {}",
            x.kind,
            if x.lines_only { ", lines only" } else { "" },
            cut.name
        );
        let own = own_edge(cut, &edges);
        let warning = |what: &str| {
            report
                .warnings
                .iter()
                .any(|w| w.starts_with(&format!("{}: ", cut.name)) && w.contains(what))
        };
        // Every feed move off the contour: in this cut's scrap, a tool radius (less the
        // tolerance) from every finished edge. Mills skip points above the stock (Z > 0).
        let mut first_feed = None;
        for (name, moves) in &cut.sections {
            if name == "contour" {
                continue;
            }
            for m in moves.iter().filter(|m| !m.rapid) {
                first_feed.get_or_insert(m.start_xy());
                for (p, z) in m.samples() {
                    if mill && z > 0.0 {
                        continue;
                    }
                    assert!(
                        edges[own].in_scrap(p),
                        "{ctx}: {name} point {p:?} is not in the scrap"
                    );
                    for e in &edges {
                        if e.surely_farther(p, r) {
                            continue;
                        }
                        let d = e.signed(p).abs();
                        assert!(
                            d >= r - tol - READ_SLACK,
                            "{ctx}: {name} point {p:?} is {d} mm from {}",
                            e.name
                        );
                    }
                }
            }
        }
        // The pierce point of cut-through kinds: one kerf plus the crater from every edge.
        if let Some(c) = clearance {
            let p = first_feed.expect("a pierce");
            for e in &edges {
                let d = e.signed(p).abs();
                assert!(
                    d >= c - 1e-3,
                    "{ctx}: pierce {p:?} is {d} mm from {}, clearance {c}",
                    e.name
                );
            }
        }
        let lead_in = cut.first_run("lead-in");
        let contour = cut.first_run("contour");
        assert!(!contour.is_empty(), "{ctx}: a contour");
        let fell_back = warning("entered by a straight move from");
        if x.kind == LeadKind::Straight || fell_back {
            // A straight move onto the path (or none when the plunge is on it).
            assert!(lead_in.len() <= 1, "{ctx}: {lead_in:?}");
            assert!(lead_in.iter().all(|m| m.arc.is_none()));
            if fell_back && let Shape::Circle(c, _) = edges[own].shape {
                // Small holes: from the centre (§4.3), by the lead-in or by a zig-zag ramp
                // along it (which runs before the lead-in comment).
                let from = lead_in
                    .first()
                    .map(Mv::start_xy)
                    .or_else(|| {
                        cut.first_run("entry")
                            .iter()
                            .find(|m| !m.rapid)
                            .map(Mv::start_xy)
                    })
                    .expect("an entry");
                assert!(from.distance(c) < 1e-3, "{ctx}");
            }
        } else {
            // A zig-zag ramp entry runs along the first lead move and ends where it ends, so the
            // lead-in section may lack it.
            let entry = cut.first_run("entry");
            let last = lead_in
                .last()
                .or(entry.last())
                .unwrap_or_else(|| panic!("{ctx}: a lead-in: {:?}", cut.sections));
            let into = end_tangent(&lead_in).unwrap_or(last.tangent(true));
            let along = start_tangent(&contour).expect("a contour move");
            let angle = angle_deg(into, along);
            match x.kind {
                LeadKind::Line => assert!(
                    (angle - 90.0).abs() <= bound,
                    "{ctx}: a line lead meets the path at {angle}°"
                ),
                _ => {
                    assert!(
                        angle <= bound,
                        "{ctx}: the lead arc meets the path at {angle}°"
                    );
                    // Written as an arc, or as chords in lines-only output.
                    assert!(last.arc.is_some() != x.lines_only, "{ctx}");
                }
            }
            // Mills: every lead arc wider than the tool (NISTIR 6556 App. B.3.1).
            if mill {
                for m in &lead_in {
                    if let Some((c, _)) = m.arc {
                        assert!(m.start_xy().distance(c) > r, "{ctx}: arc radius");
                    }
                }
            }
        }
        // The overcut re-cuts the stated length along the contour.
        let over = cut.first_run("overcut");
        if overcut > 0.0 {
            let length: f64 = over.iter().map(Mv::length).sum();
            // Rounding of the written ends: √2/2 of the last decimal at each end (0.001 mm on
            // the 3-decimal plasma profile), plus the reader's slack.
            assert!(
                (length - overcut).abs() <= 2e-3,
                "{ctx}: overcut {length} for {overcut}"
            );
            // The contour's first stretch, a little longer than the overcut.
            let mut walked = 0.0;
            let on_contour: Vec<Point> = contour
                .iter()
                .take_while(|m| {
                    let before = walked;
                    walked += m.length();
                    before <= overcut + 1.0
                })
                .flat_map(|m| m.samples())
                .map(|(p, _)| p)
                .collect();
            for m in &over {
                for (p, _) in m.samples() {
                    let d = on_contour
                        .iter()
                        .map(|q| q.distance(p))
                        .fold(f64::INFINITY, f64::min);
                    // Samples 0.02 mm apart: within 0.01 mm of a sample, plus rounding.
                    assert!(
                        d <= 0.011 + 1e-3,
                        "{ctx}: overcut point {p:?} {d} off the contour"
                    );
                }
            }
        } else {
            assert!(over.is_empty(), "{ctx}");
        }
        // The lead-out leaves into the scrap (all its points were checked above): it ends
        // deeper in the scrap than the path, and an arc lead-out leaves along the path.
        let out_moves = cut.first_run("lead-out");
        let no_lead_out = warning("lead-out: the cut ends on the path");
        if lead_out_asked && !no_lead_out {
            let end = out_moves.last().expect("a lead-out").end_xy();
            let depth = edges[own].signed(end).abs();
            assert!(
                depth >= r + 2.0 * tol,
                "{ctx}: lead-out ends {depth} from the edge"
            );
            if matches!(x.kind, LeadKind::Arc | LeadKind::LineArc) {
                let before = if over.is_empty() { &contour } else { &over };
                let angle = angle_deg(
                    end_tangent(before).expect("a move"),
                    start_tangent(&out_moves).expect("a lead-out move"),
                );
                assert!(angle <= bound, "{ctx}: lead-out turns {angle}°");
            }
        } else {
            assert!(out_moves.is_empty(), "{ctx}: no lead-out");
        }
    }
}

const KINDS: [LeadKind; 4] = [
    LeadKind::Straight,
    LeadKind::Line,
    LeadKind::Arc,
    LeadKind::LineArc,
];

#[test]
fn leads_on_the_metric_mill() {
    for kind in KINDS {
        run_and_check("metric-mill", kind_only(kind), false);
    }
}

#[test]
fn leads_on_the_metric_mill_in_lines_only() {
    for kind in [LeadKind::Arc, LeadKind::LineArc] {
        run_and_check("metric-mill", kind_only(kind), true);
    }
}

#[test]
fn leads_with_pockets_and_a_finishing_pass() {
    // Two bays as pockets (demo-parts/truss-bracket-pocket-job.toml): their lead-in starts at
    // the last clearing ring; and every cut split into a roughing cut 0.3 mm off the edge and a
    // finishing cut (common practice: 0.1–0.5 mm radial, docs/sources.md P4.3).
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR"));
    let text = std::fs::read_to_string(root.join("demo-parts/truss-bracket-pocket-job.toml"))
        .expect("the pocket job file");
    let job = conicut::settings::job_file::parse_job_file(&text, "truss-bracket-pocket-job.toml")
        .expect("the job file parses");
    for kind in [LeadKind::Arc, LeadKind::LineArc] {
        let out = run_and_check_with("metric-mill", kind_only(kind), |s| {
            s.job = Some(job.clone());
            s.finish_allowance = Some(0.3);
        });
        let cuts = read_cuts(&out.program);
        assert_eq!(
            cuts.len(),
            18,
            "a roughing and a finishing cut for each feature"
        );
        let pocket = cuts.iter().find(|c| c.name == "pocket 2 roughing").unwrap();
        assert!(!pocket.first_run("clearing").is_empty());
        // The lead-in starts where the clearing ends, and ends in an arc.
        let clearing_end = pocket.first_run("clearing").last().unwrap().end_xy();
        let lead = pocket.first_run("lead-in");
        assert!(lead[0].start_xy().distance(clearing_end) < 1e-9);
        assert!(lead.last().unwrap().arc.is_some());
    }
}

#[test]
fn leads_on_the_metric_mill_conventional() {
    // Conventional milling runs every cut the other way (NISTIR 6556 App. B.2.1): the leads
    // still lie in the scrap and join the path along its tangent.
    for kind in [LeadKind::Arc, LeadKind::Line, LeadKind::LineArc] {
        let out = run_and_check_with("metric-mill", kind_only(kind), |s| {
            s.direction = Direction::Conventional;
        });
        // Independent of the planner: a counter-clockwise outline (G3 on its contour).
        let cuts = read_cuts(&out.program);
        let outline = cuts.iter().find(|c| c.name == "outline").unwrap();
        assert!(
            outline
                .first_run("contour")
                .iter()
                .all(|m| m.arc.is_none_or(|(_, ccw)| ccw))
        );
    }
}

#[test]
fn leads_on_the_inch_router() {
    for kind in KINDS {
        run_and_check("inch-router", kind_only(kind), false);
    }
}

#[test]
fn leads_on_the_laser() {
    for kind in KINDS {
        run_and_check("laser", kind_only(kind), false);
    }
}

#[test]
fn leads_on_the_plasma_table() {
    for kind in KINDS {
        run_and_check("plasma", kind_only(kind), false);
    }
}

#[test]
fn leads_on_the_waterjet() {
    for kind in KINDS {
        run_and_check("waterjet", kind_only(kind), false);
    }
}

#[test]
fn profile_defaults_give_arc_leads_on_mills_and_line_arc_on_thermal_tables() {
    // common practice, docs/sources.md P4.3: arc leads on mills (radius above the 3 mm
    // tool radius, NISTIR 6556 App. B.3.1), line + arc on laser, plasma and waterjet.
    for (stem, kind) in [
        ("metric-mill", LeadKind::Arc),
        ("inch-router", LeadKind::Arc),
        ("laser", LeadKind::LineArc),
        ("plasma", LeadKind::LineArc),
        ("waterjet", LeadKind::LineArc),
    ] {
        let p = profile(stem);
        let leads = p.lead_options();
        assert_eq!(leads.kind, kind, "{stem}");
        assert!(leads.lead_out && leads.overcut > 0.0, "{stem}");
        if p.spindle().is_some() {
            assert!(leads.radius > 3.0, "{stem}: above the demo tool's radius");
            assert_eq!(p.pierce_clearance(), None);
        } else {
            // At least one kerf from the edge (§4.3).
            let kerf = p.kerf_width().unwrap();
            assert!(p.pierce_clearance().unwrap() >= kerf, "{stem}");
        }
        run_and_check(stem, LeadRequest::default(), false);
    }
    // The inch router's values are in inches: 0.16 in = 4.064 mm.
    assert!((profile("inch-router").lead_options().radius - 4.064).abs() < 1e-12);
}

#[test]
fn small_holes_fall_back_to_a_straight_entry_from_the_centre_with_a_warning() {
    // Ø9 bolt holes and a 6 mm end mill: the tool centre runs on a 1.5 mm circle, and no arc
    // wider than the tool (NISTIR 6556 App. B.3.1) fits inside it.
    let out = run_and_check("metric-mill", kind_only(LeadKind::Arc), false);
    for k in 1..=4 {
        let name = format!("hole {k}");
        let w = out
            .report
            .warnings
            .iter()
            .find(|w| w.starts_with(&format!("{name}: ")))
            .unwrap_or_else(|| panic!("a warning for {name}: {:?}", out.report.warnings));
        assert!(w.contains("no room for the arc lead"), "{w}");
        assert!(w.contains("straight move from"), "{w}");
    }
    // The openings have room: no warnings for them.
    assert!(
        !out.report.warnings.iter().any(|w| w.starts_with("bay ")),
        "{:?}",
        out.report.warnings
    );
    // Plasma: the 5 mm line + 2.5 mm arc does not fit in a Ø9 hole either. The lead shrinks
    // until it fits, then its straight part grows back towards the centre until the pierce
    // point is 3.5 mm (the profile's clearance) from the edge: "a lead-in from near the centre,
    // an arc radius under the hole radius" (docs/sources.md P4.3, common practice).
    let out = run_and_check("plasma", LeadRequest::default(), false);
    for k in 1..=4 {
        let name = format!("hole {k}");
        let w = out
            .report
            .warnings
            .iter()
            .find(|w| w.starts_with(&format!("{name}: ")))
            .unwrap_or_else(|| panic!("a warning for {name}: {:?}", out.report.warnings));
        assert!(w.contains("shrunk") && w.contains("lengthened"), "{w}");
    }
    for cut in read_cuts(&out.program)
        .iter()
        .filter(|c| c.name.starts_with("hole"))
    {
        let lead = cut.first_run("lead-in");
        let (centre, _) = lead.last().and_then(|m| m.arc).expect("an arc lead");
        let radius = lead.last().unwrap().end_xy().distance(centre);
        assert!(
            radius < BOLT_HOLE_RADIUS,
            "{}: arc radius {radius}",
            cut.name
        );
        // The pierce point (checked against every edge by run_and_check) lies within 1 mm of
        // the centre: 4.5 mm hole radius less the 3.5 mm clearance.
        let pierce = cut.first_run("entry").last().unwrap().end_xy();
        let nearest = BOLT_HOLE_CENTRES
            .iter()
            .map(|&(x, y)| pierce.distance(Point::new(x, y)))
            .fold(f64::INFINITY, f64::min);
        assert!(
            nearest <= 1.0 + 1e-3,
            "{}: pierce {nearest} from the centre",
            cut.name
        );
    }
}

#[test]
fn overcut_and_lead_sizes_from_the_request_override_the_profile() {
    let request = LeadRequest {
        kind: Some(LeadKind::LineArc),
        length: Some(3.0),
        radius: Some(3.5),
        overcut: Some(1.25),
        lead_out: Some(true),
    };
    let out = run_and_check("laser", request, false);
    let cuts = read_cuts(&out.program);
    let outline = cuts.iter().find(|c| c.name == "outline").unwrap();
    // The outline has room: the line part is the asked 3 mm, the arc the asked 3.5 mm radius.
    let lead = outline.first_run("lead-in");
    assert!((lead[0].length() - 3.0).abs() < 1e-3, "{lead:?}");
    let (c, _) = lead.last().unwrap().arc.unwrap();
    assert!((lead.last().unwrap().start_xy().distance(c) - 3.5).abs() < 1e-3);
    // No lead-out when none is asked for.
    let request = LeadRequest {
        lead_out: Some(false),
        ..LeadRequest::default()
    };
    let out = run_and_check("waterjet", request, false);
    assert!(
        read_cuts(&out.program)
            .iter()
            .all(|c| c.first_run("lead-out").is_empty())
    );
}

#[test]
fn job_file_lead_keys_apply_and_the_command_line_overrides_them() {
    // The demo's job file with lead keys added at its top: a 3 mm straight lead along the
    // normal, no overcut, no lead-out, on the laser (whose profile asks for line-arc leads).
    let text = include_str!("../demo-parts/truss-bracket-job.toml").replacen(
        "units = \"mm\"",
        "units = \"mm\"\nlead = \"line\"\nlead_length = 3.0\novercut = 0\nlead_out = false",
        1,
    );
    let job = conicut::settings::job_file::parse_job_file(&text, "job.toml")
        .expect("the job file parses");
    let p = profile("laser");
    let with_job = |leads: LeadRequest| JobSettings {
        job: Some(job.clone()),
        ..settings(&p, leads)
    };
    let out = run_job(
        &conicut::demo::demo_dxf_bytes(),
        &p,
        &with_job(LeadRequest::default()),
    )
    .expect("the job runs");
    let cuts = read_cuts(&out.program);
    let outline = cuts.iter().find(|c| c.name == "outline").unwrap();
    let lead = outline.first_run("lead-in");
    assert_eq!(lead.len(), 1, "{lead:?}");
    assert!(lead[0].arc.is_none() && (lead[0].length() - 3.0).abs() < 1e-3);
    assert!(cuts.iter().all(|c| c.first_run("lead-out").is_empty()));
    assert!(cuts.iter().all(|c| c.first_run("overcut").is_empty()));
    // An arc lead asked for on the command line wins over the file's line.
    let out = run_job(
        &conicut::demo::demo_dxf_bytes(),
        &p,
        &with_job(kind_only(LeadKind::Arc)),
    )
    .expect("the job runs");
    let cuts = read_cuts(&out.program);
    let outline = cuts.iter().find(|c| c.name == "outline").unwrap();
    assert!(outline.first_run("lead-in").iter().any(|m| m.arc.is_some()));
}

#[test]
fn bad_lead_settings_are_refused() {
    let p = profile("metric-mill");
    for request in [
        LeadRequest {
            length: Some(-1.0),
            ..LeadRequest::default()
        },
        LeadRequest {
            overcut: Some(f64::NAN),
            ..LeadRequest::default()
        },
        LeadRequest {
            kind: Some(LeadKind::Line),
            length: Some(0.0),
            ..LeadRequest::default()
        },
    ] {
        let err = run_job(&demo_dxf_bytes(), &p, &settings(&p, request)).unwrap_err();
        assert!(
            matches!(
                err,
                JobError::Plan {
                    error: PlanError::BadLead { .. },
                    ..
                }
            ),
            "{err}"
        );
        assert!(err.to_string().contains("truss-bracket.dxf"), "{err}");
    }
}

#[test]
fn a_pierce_clearance_no_hole_can_give_is_refused_clearly() {
    // No point of a Ø9 mm hole is 5 mm from its edge.
    let (file, text) = BUNDLED_PROFILES
        .iter()
        .find(|(f, _)| f.ends_with("plasma.toml"))
        .unwrap();
    let text = text.replace("pierce_clearance = 3.5", "pierce_clearance = 5.0");
    let p = MachineProfile::from_toml(&text, file).unwrap();
    let err = run_job(&demo_dxf_bytes(), &p, &settings(&p, LeadRequest::default())).unwrap_err();
    let message = err.to_string();
    assert!(message.contains("hole"), "{message}");
    assert!(message.contains("pierce_clearance"), "{message}");
}

#[test]
fn profile_lead_keys_are_checked() {
    let (file, mill) = BUNDLED_PROFILES[0];
    // A pierce clearance belongs to the kinds that pierce.
    let text = format!("pierce_clearance = 1.0\n{mill}");
    let err = MachineProfile::from_toml(&text, file).unwrap_err();
    assert_eq!(err.key.as_deref(), Some("pierce_clearance"), "{err}");
    assert_eq!(err.line, Some(1));
    // An unknown shape, a negative radius, and an arc lead without a radius.
    let text = mill.replace("lead = \"arc\"", "lead = \"spiral\"");
    let err = MachineProfile::from_toml(&text, file).unwrap_err();
    assert_eq!(err.key.as_deref(), Some("lead"), "{err}");
    assert!(err.to_string().contains("line-arc"), "{err}");
    let text = mill.replace("lead_radius = 4.0", "lead_radius = -4.0");
    let err = MachineProfile::from_toml(&text, file).unwrap_err();
    assert_eq!(err.key.as_deref(), Some("lead_radius"), "{err}");
    let text = mill.replace("lead_radius = 4.0", "lead_radius = 0.0");
    let err = MachineProfile::from_toml(&text, file).unwrap_err();
    assert_eq!(err.key.as_deref(), Some("lead_radius"), "{err}");
    // Left out, the lead keys give the straight entry of earlier versions.
    let text: String = mill
        .lines()
        .filter(|l| {
            !["lead", "lead_radius", "lead_length", "overcut", "lead_out"]
                .iter()
                .any(|k| l.starts_with(&format!("{k} ")))
        })
        .collect::<Vec<_>>()
        .join("\n");
    let p = MachineProfile::from_toml(&text, file).unwrap();
    let leads = p.lead_options();
    assert_eq!(leads.kind, LeadKind::Straight);
    assert!(!leads.lead_out && leads.overcut == 0.0);
}

#[test]
fn the_scrap_check_refuses_a_program_whose_lead_enters_the_part() {
    let p = profile("metric-mill");
    let out = run_job(
        &demo_dxf_bytes(),
        &p,
        &settings(&p, kind_only(LeadKind::Arc)),
    )
    .unwrap();
    // The finished edges for the check, from the drawing and the report (not the job's plan):
    // the part as chained from the drawing and the openings as the report states them.
    let bytes = demo_dxf_bytes();
    let drawing = read_dxf(
        &bytes,
        &ReadOptions {
            file_name: "truss-bracket.dxf",
            units: None,
        },
    )
    .unwrap();
    let part = build_part(&drawing, &ChainOptions::default()).unwrap();
    let openings: Vec<Opening> = out
        .report
        .features
        .iter()
        .filter_map(|f| {
            let e = f.ellipse.as_ref()?;
            Some(Opening {
                name: f.name.clone(),
                ellipse: Ellipse::new(
                    Point::new(e.center_mm[0], e.center_mm[1]),
                    e.semi_major_mm,
                    e.semi_minor_mm,
                    e.angle_deg.to_radians(),
                )
                .ok()?,
                side: CutSide::Inside,
                pocket: false,
            })
        })
        .collect();
    let edges = plan_cuts(&part, &openings, &PlanOptions::plain(6.0))
        .unwrap()
        .cuts;
    let rules = ScrapRules {
        tool_radius: 3.0,
        tolerance: 0.01,
        rounding: 0.0001,
        pierce_clearance: None,
        skip_above_stock: true,
    };
    assert_eq!(
        check_scrap(&trace(&out.program).unwrap(), &edges, &rules),
        Ok(())
    );

    // Tamper: after bay 1's "(lead-in)" comment, a detour to a point 1 mm outside its ellipse
    // (in the part) and back.
    let bay = &openings.iter().find(|o| o.name == "bay 1").unwrap().ellipse;
    let bad = bay.center() + Vec2::from_angle(bay.angle()) * (bay.a() + 1.0);
    let mut lines: Vec<String> = out.program.lines().map(str::to_string).collect();
    let at = lines
        .iter()
        .position(|l| l == "(cut 2 of 9: bay 1)")
        .unwrap();
    let lead = at + lines[at..].iter().position(|l| l == "(lead-in)").unwrap();
    let plunge = bay_plunge(&lines[at..lead]);
    lines.insert(lead + 1, format!("G1 X{:.4} Y{:.4}", bad.x, bad.y));
    lines.insert(lead + 2, format!("G1 X{:.4} Y{:.4}", plunge.x, plunge.y));
    let tampered = lines.join("\n");
    let v = check_scrap(&trace(&tampered).unwrap(), &edges, &rules).unwrap_err();
    assert_eq!(v.feature, "bay 1");
    assert_eq!(v.part, "lead-in");
    assert_eq!(v.line, lead + 2, "the detour's line (1-based)");
    assert!(
        v.problem.contains("part side") || v.problem.contains("finished edge of \"bay 1\""),
        "{}",
        v.problem
    );
}

/// The plunge point of a cut: the XY of its rapid move.
fn bay_plunge(lines: &[String]) -> Point {
    let rapid = lines
        .iter()
        .find(|l| l.starts_with("G0 X"))
        .expect("a rapid to the plunge point");
    let word = |c: char| -> f64 {
        rapid
            .split_whitespace()
            .find_map(|w| w.strip_prefix(c))
            .and_then(|v| v.parse().ok())
            .expect("a coordinate")
    };
    Point::new(word('X'), word('Y'))
}
