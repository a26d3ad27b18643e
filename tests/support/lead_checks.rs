//! Shared by the lead tests (`tests/leads.rs`, `tests/lead_settings.rs`): the settings of a run,
//! the program read back by cut and section (with `support/gcode_read.rs`), the finished edges
//! of the demo part built from the drawing's definition and the report, and the checks of every
//! cut's leads, pierce point, overcut and lead-out (sources in `tests/leads.rs`).

#![allow(dead_code)]

use crate::demo_job;
use crate::gcode_read::read_back;
use crate::machine::machine;
use conicut::demo::{
    BOLT_HOLE_CENTRES, BOLT_HOLE_RADIUS, CORNER_RADIUS, PLATE_HEIGHT, PLATE_WIDTH, demo_dxf_bytes,
};
use conicut::geom::{Ellipse, Point, Vec2};
use conicut::pipeline::{JobOutput, JobSettings, LeadRequest, run_job};
use conicut::plan::LeadKind;
use conicut::post::MachineProfile;
use conicut::report::Report;
use conicut::settings::Machine;
use std::f64::consts::TAU;

/// The gcode crate reads values as `f32`: about 1e-5 mm at the demo's coordinates; we allow
/// 1e-4 mm for it.
pub const READ_SLACK: f64 = 1e-4;

/// The largest angle (degrees) between the end tangent of an arc lead and the contour's first
/// tangent, as read back. The lead arc is written exactly, tangent to the exact path; the
/// contour's first move is an arc of the fitted spline, within the 0.01 mm tolerance of the exact
/// path, whose tangent at the start may turn by a few tenths of a degree from the exact one;
/// rounding adds ~1e-4 mm over arcs a few mm long. Measured on these runs: at most 0.35° (lead-in
/// and lead-out). A bound of 1.5° still tells a tangent arc from a perpendicular line (90°).
pub const TANGENT_BOUND_DEG: f64 = 1.5;

/// The same bound for lines-only output (G1 only), where the lead arc and the contour are both
/// written as chords within ±ε of the exact curves: a chord whose sagitta is at most 2ε on an arc
/// of radius ρ turns by about √(16 ε / ρ), and at the joint roughly half of each chord's turn
/// shows: 5.7° for the 4 mm lead arc and 1.3° for the openings' paths (radius of curvature above
/// 75 mm at the ends of the minor axis) at ε = 0.01 mm. Measured on these runs: at most 7.5°.
/// 10° still tells a tangent arc from a perpendicular line.
pub const LINES_TANGENT_BOUND_DEG: f64 = 10.0;

pub fn settings(p: &MachineProfile, leads: LeadRequest) -> JobSettings {
    JobSettings {
        leads,
        ..demo_job::demo_settings(p.kerf_width().unwrap_or(6.0))
    }
}

pub fn kind_only(kind: LeadKind) -> LeadRequest {
    LeadRequest {
        kind: Some(kind),
        ..LeadRequest::default()
    }
}

// ---------------------------------------------------------------------------------------------
// Reading the program back with the gcode crate.

/// One move read back (mm).
#[derive(Debug, Clone, Copy)]
pub struct Mv {
    pub from: [f64; 3],
    pub to: [f64; 3],
    /// Centre and counter-clockwise for G2/G3.
    pub arc: Option<(Point, bool)>,
    pub rapid: bool,
}

impl Mv {
    pub fn start_xy(&self) -> Point {
        Point::new(self.from[0], self.from[1])
    }
    pub fn end_xy(&self) -> Point {
        Point::new(self.to[0], self.to[1])
    }
    /// The signed sweep of an arc (radians; counter-clockwise positive).
    pub fn sweep(&self) -> f64 {
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
    pub fn at(&self, t: f64) -> (Point, f64) {
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
    pub fn length(&self) -> f64 {
        match self.arc {
            None => self.start_xy().distance(self.end_xy()),
            Some((c, _)) => self.start_xy().distance(c) * self.sweep().abs(),
        }
    }
    /// Unit tangent (XY) at the start or end.
    pub fn tangent(&self, end: bool) -> Vec2 {
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
    pub fn samples(&self) -> Vec<(Point, f64)> {
        let n = ((self.length() / 0.02).ceil() as usize).clamp(1, 100_000);
        (0..=n).map(|k| self.at(k as f64 / n as f64)).collect()
    }
}

/// A cut as read back: its name and its sections in order (`entry` for the moves before the
/// first section comment and after a `pass` comment).
#[derive(Debug)]
pub struct ReadCut {
    pub name: String,
    pub sections: Vec<(String, Vec<Mv>)>,
}

impl ReadCut {
    pub fn section(&self, name: &str) -> Vec<Mv> {
        self.sections
            .iter()
            .filter(|(n, _)| n == name)
            .flat_map(|(_, m)| m.iter().copied())
            .collect()
    }
    /// The first run of a section (the first pass), for sections repeated by depth passes.
    pub fn first_run(&self, name: &str) -> Vec<Mv> {
        self.sections
            .iter()
            .find(|(n, _)| n == name)
            .map(|(_, m)| m.clone())
            .unwrap_or_default()
    }
}

/// Reads a program back with the gcode crate (`support/gcode_read.rs`) and groups its moves by
/// cut and section: a cut comment or a `pass …` comment starts `entry`, the section comments
/// `clearing`, `lead-in`, `contour`, `overcut`, `lead-out` their sections; moves that go nowhere
/// are left out.
pub fn read_cuts(program: &str) -> Vec<ReadCut> {
    let read = read_back(program);
    let mut cuts: Vec<ReadCut> = Vec::new();
    let mut section = String::from("entry");
    let mut marks = read.marks.iter().peekable();
    for k in 0..=read.moves.len() {
        while let Some((text, at)) = marks.peek()
            && *at <= k
        {
            let text = text.as_str();
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
            marks.next();
        }
        let Some(read_move) = read.moves.get(k) else {
            break;
        };
        if read_move.to == read_move.from && read_move.arc.is_none() {
            continue;
        }
        let m = Mv {
            from: read_move.from,
            to: read_move.to,
            arc: read_move.arc.map(|(c, ccw)| (Point::new(c[0], c[1]), ccw)),
            rapid: read_move.rapid,
        };
        if let Some(cut) = cuts.last_mut() {
            match cut.sections.last_mut() {
                Some((n, moves)) if *n == section => moves.push(m),
                _ => cut.sections.push((section.clone(), vec![m])),
            }
        }
    }
    cuts
}

// ---------------------------------------------------------------------------------------------
// The finished edges, from the drawing and the report.

#[derive(Debug, Clone)]
pub enum Shape {
    /// The plate: 240 × 140 mm, corners rounded with 10 mm radii, from the origin.
    Plate,
    Circle(Point, f64),
    Ellipse(Ellipse),
}

#[derive(Debug, Clone)]
pub struct Finished {
    pub name: String,
    pub shape: Shape,
}

impl Finished {
    /// Signed distance: negative inside the closed edge.
    pub fn signed(&self, p: Point) -> f64 {
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
    pub fn surely_farther(&self, p: Point, d: f64) -> bool {
        match &self.shape {
            Shape::Plate => false,
            Shape::Circle(c, r) => p.distance(*c) > r + d,
            Shape::Ellipse(e) => p.distance(e.centre()) > e.a() + d,
        }
    }

    /// The scrap is inside holes and openings, outside the plate.
    pub fn in_scrap(&self, p: Point) -> bool {
        match self.shape {
            Shape::Plate => self.signed(p) > 0.0,
            _ => self.signed(p) < 0.0,
        }
    }
}

/// Every finished edge of the demo part: the plate and bolt holes from the drawing's definition,
/// the openings from the report's solved ellipses.
pub fn finished_edges(report: &Report) -> Vec<Finished> {
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
                        Point::new(e.centre_mm[0], e.centre_mm[1]),
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
pub fn own_edge(cut: &ReadCut, edges: &[Finished]) -> usize {
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
pub const SHORT_MOVE: f64 = 0.1;

/// The direction at the end of a run: the end tangent of its last move at least
/// [`SHORT_MOVE`] long.
pub fn end_tangent(moves: &[Mv]) -> Option<Vec2> {
    moves
        .iter()
        .rev()
        .find(|m| m.length() >= SHORT_MOVE)
        .map(|m| m.tangent(true))
}

/// The direction at the start of a run: the start tangent of its first move at least
/// [`SHORT_MOVE`] long.
pub fn start_tangent(moves: &[Mv]) -> Option<Vec2> {
    moves
        .iter()
        .find(|m| m.length() >= SHORT_MOVE)
        .map(|m| m.tangent(false))
}

pub fn angle_deg(a: Vec2, b: Vec2) -> f64 {
    a.cross(b).atan2(a.dot(b)).abs().to_degrees()
}

// ---------------------------------------------------------------------------------------------
// The checks.

/// What one run is checked against.
pub struct Expect<'a> {
    pub machine: &'a Machine,
    pub kind: LeadKind,
    pub lines_only: bool,
}

/// Runs the demo and checks every cut's leads; returns the output for further checks.
pub fn run_and_check(stem: &str, request: LeadRequest, lines_only: bool) -> JobOutput {
    run_and_check_with(stem, request, |s| s.lines_only = lines_only)
}

/// [`run_and_check`] with settings changed by `adjust`.
pub fn run_and_check_with(
    stem: &str,
    request: LeadRequest,
    adjust: impl Fn(&mut JobSettings),
) -> JobOutput {
    let m = machine(stem);
    let mut s = settings(&m.profile, request);
    adjust(&mut s);
    let lines_only = s.lines_only;
    let kind = request.kind.unwrap_or(m.defaults.leads.kind);
    let out = run_job(&demo_dxf_bytes(), &m, &s).unwrap_or_else(|e| panic!("{stem}: {e}"));
    check_leads(
        stem,
        &out,
        &Expect {
            machine: &m,
            kind,
            lines_only,
        },
        request,
    );
    out
}

/// What every cut of one run is checked against, from the report, the profile and the request.
pub struct LeadRun<'a> {
    pub x: &'a Expect<'a>,
    pub edges: Vec<Finished>,
    pub report: &'a Report,
    /// Tool radius and tolerance (mm).
    pub r: f64,
    pub tol: f64,
    pub mill: bool,
    pub overcut: f64,
    pub lead_out_asked: bool,
    /// The tangency bound (degrees) for this output.
    pub bound: f64,
}

/// One cut under check: its context for messages and the finished edge it makes.
pub struct OneCut<'a> {
    pub ctx: String,
    pub cut: &'a ReadCut,
    pub own: usize,
}

impl OneCut<'_> {
    /// Whether the report warns about this cut with a message containing `what`.
    pub fn warned(&self, run: &LeadRun, what: &str) -> bool {
        run.report
            .warnings
            .iter()
            .any(|w| w.starts_with(&format!("{}: ", self.cut.name)) && w.contains(what))
    }
}

pub fn check_leads(stem: &str, out: &JobOutput, x: &Expect, request: LeadRequest) {
    let report = &out.report;
    let cuts = read_cuts(&out.program);
    assert_eq!(cuts.len(), report.features.len(), "{stem}: every cut");
    assert!(cuts.len() >= 9, "{stem}: nine features at least");
    let defaults = x.machine.defaults.leads;
    let run = LeadRun {
        x,
        edges: finished_edges(report),
        report,
        r: report.tool_diameter_mm / 2.0,
        tol: report.tolerance_mm,
        mill: x.machine.profile.spindle().is_some(),
        overcut: request.overcut.unwrap_or(defaults.overcut),
        lead_out_asked: request.lead_out.unwrap_or(defaults.lead_out)
            && x.kind != LeadKind::Straight,
        bound: if x.lines_only {
            LINES_TANGENT_BOUND_DEG
        } else {
            TANGENT_BOUND_DEG
        },
    };
    for cut in &cuts {
        let one = OneCut {
            ctx: format!(
                "{stem}, {:?}{}, {}",
                x.kind,
                if x.lines_only { ", lines only" } else { "" },
                cut.name
            ),
            cut,
            own: own_edge(cut, &run.edges),
        };
        let first_feed = check_moves_off_contour(&run, &one);
        check_pierce(&run, &one, first_feed);
        check_lead_in(&run, &one);
        check_overcut(&run, &one);
        check_lead_out(&run, &one);
    }
}

/// Every feed move off the contour: in this cut's scrap, a tool radius (less the tolerance) from
/// every finished edge. Mills skip points above the stock (Z > 0). Returns the first feed point.
pub fn check_moves_off_contour(run: &LeadRun, one: &OneCut) -> Option<Point> {
    let (ctx, edges, r) = (&one.ctx, &run.edges, run.r);
    let mut first_feed = None;
    for (name, moves) in &one.cut.sections {
        if name == "contour" {
            continue;
        }
        for m in moves.iter().filter(|m| !m.rapid) {
            first_feed.get_or_insert(m.start_xy());
            for (p, z) in m.samples() {
                if run.mill && z > 0.0 {
                    continue;
                }
                assert!(
                    edges[one.own].in_scrap(p),
                    "{ctx}: {name} point {p:?} is not in the scrap"
                );
                for e in edges {
                    if e.surely_farther(p, r) {
                        continue;
                    }
                    let d = e.signed(p).abs();
                    assert!(
                        d >= r - run.tol - READ_SLACK,
                        "{ctx}: {name} point {p:?} is {d} mm from {}",
                        e.name
                    );
                }
            }
        }
    }
    first_feed
}

/// The pierce point of cut-through kinds: one kerf plus the crater from every edge.
pub fn check_pierce(run: &LeadRun, one: &OneCut, first_feed: Option<Point>) {
    let Some(c) = run.x.machine.defaults.pierce_clearance else {
        return;
    };
    let ctx = &one.ctx;
    let p = first_feed.expect("a pierce");
    for e in &run.edges {
        let d = e.signed(p).abs();
        assert!(
            d >= c - 1e-3,
            "{ctx}: pierce {p:?} is {d} mm from {}, clearance {c}",
            e.name
        );
    }
}

/// The lead-in: a straight move (or none) for straight leads and small-hole fallbacks, else
/// meeting the path at a right angle (line) or tangent (arcs), lead arcs wider than the tool on
/// mills (NISTIR 6556 App. B.3.1).
pub fn check_lead_in(run: &LeadRun, one: &OneCut) {
    let (ctx, cut, x, bound) = (&one.ctx, one.cut, run.x, run.bound);
    let lead_in = cut.first_run("lead-in");
    let contour = cut.first_run("contour");
    assert!(!contour.is_empty(), "{ctx}: a contour");
    let fell_back = one.warned(run, "entered by a straight move from");
    if x.kind == LeadKind::Straight || fell_back {
        // A straight move onto the path (or none when the plunge is on it).
        assert!(lead_in.len() <= 1, "{ctx}: {lead_in:?}");
        assert!(lead_in.iter().all(|m| m.arc.is_none()));
        if fell_back && let Shape::Circle(c, _) = run.edges[one.own].shape {
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
        return;
    }
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
    if run.mill {
        for m in &lead_in {
            if let Some((c, _)) = m.arc {
                assert!(m.start_xy().distance(c) > run.r, "{ctx}: arc radius");
            }
        }
    }
}

/// The overcut re-cuts the stated length along the contour.
pub fn check_overcut(run: &LeadRun, one: &OneCut) {
    let (ctx, overcut) = (&one.ctx, run.overcut);
    let over = one.cut.first_run("overcut");
    if overcut <= 0.0 {
        assert!(over.is_empty(), "{ctx}");
        return;
    }
    let contour = one.cut.first_run("contour");
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
}

/// The lead-out leaves into the scrap (all its points were checked with the other moves off the
/// contour): it ends deeper in the scrap than the path, and an arc lead-out leaves along the path.
pub fn check_lead_out(run: &LeadRun, one: &OneCut) {
    let (ctx, r, tol) = (&one.ctx, run.r, run.tol);
    let out_moves = one.cut.first_run("lead-out");
    let no_lead_out = one.warned(run, "lead-out: the cut ends on the path");
    if !run.lead_out_asked || no_lead_out {
        assert!(out_moves.is_empty(), "{ctx}: no lead-out");
        return;
    }
    let end = out_moves.last().expect("a lead-out").end_xy();
    let depth = run.edges[one.own].signed(end).abs();
    assert!(
        depth >= r + 2.0 * tol,
        "{ctx}: lead-out ends {depth} from the edge"
    );
    if matches!(run.x.kind, LeadKind::Arc | LeadKind::LineArc) {
        let over = one.cut.first_run("overcut");
        let contour = one.cut.first_run("contour");
        let before = if over.is_empty() { &contour } else { &over };
        let angle = angle_deg(
            end_tangent(before).expect("a move"),
            start_tangent(&out_moves).expect("a lead-out move"),
        );
        assert!(angle <= run.bound, "{ctx}: lead-out turns {angle}°");
    }
}
