//! Tabs (micro-joints) on the demo's outline, through `run_job`, read back from the program.
//!
//! Sources of the expected values:
//! - The demo plate (src/demo/mod.rs, an invented part): 240 × 140 mm, 10 mm corner radii. Its
//!   outline's tool-centre path is computed here independently: the straight sides moved out by
//!   the tool radius r, the corners arcs of radius 10 + r about the same centres, so the path is
//!   2 (220 + 120) + 2π (10 + r) mm long.
//! - Tab sizes: router tabs a few mm long and about 1–3 mm high, laser bridges about 0.2–1 mm
//!   wide, placed on straight or gently curved stretches (common practice, docs/sources.md
//!   §4.3). The tool-centre span of a tab is its width plus the tool diameter (the tool's disc
//!   reaches d/2 past each end of the span: plain geometry, see src/plan/tabs.rs).
//! - Coordinates are written with 4 decimals (mm profiles) or 5 (inch): a length read back from
//!   the program is within 1e-3 mm of the planned one.

#[path = "support/demo_job.rs"]
mod demo_job;
#[path = "support/gcode_read.rs"]
mod gcode_read;
#[path = "support/machine.rs"]
mod machine;
use conicut::demo::{CORNER_RADIUS, PLATE_HEIGHT, PLATE_WIDTH, demo_dxf_bytes};
use conicut::pipeline::{JobError, JobOutput, JobSettings, LeadRequest, TabRequest, run_job};
use conicut::plan::LeadKind;
use conicut::post::MachineProfile;
use conicut::settings::Machine;
use conicut::settings::SettingsError;
use gcode_read::{ReadBack, ReadMove, contour_runs, marked_moves, read_back};
use machine::{machine, profile};
use resvg::usvg::roxmltree;
use std::f64::consts::TAU;

/// Lengths read back from the written program agree with the plan within this (mm): the output
/// rounding of 4 decimals, with room to spare.
const READ_BACK: f64 = 1e-3;
/// Heights read back agree within this (mm): the inch router writes Z with 4 decimals of an
/// inch (steps of 0.00254 mm).
const Z_TOL: f64 = 0.01;
/// The demo's cut depth (mm), as `conicut demo` uses it.
const DEPTH: f64 = 3.5;
/// The overcut asked for in these tests (mm).
const OVERCUT: f64 = 1.0;
/// The lead-in and lead-out arc radius asked for (mm).
const LEAD_RADIUS: f64 = 4.0;

/// The tool diameter `conicut demo` uses: 6 mm on mills and routers, the kerf otherwise.
fn tool_of(p: &MachineProfile) -> f64 {
    p.kerf_width().map_or(6.0, |k| p.units().to_mm(k))
}

fn settings(p: &MachineProfile, tabs: TabRequest, stepdown: Option<f64>) -> JobSettings {
    JobSettings {
        depth: Some(DEPTH),
        stepdown,
        leads: LeadRequest {
            kind: Some(LeadKind::Arc),
            length: Some(0.0),
            radius: Some(LEAD_RADIUS),
            overcut: Some(OVERCUT),
            lead_out: Some(true),
        },
        tabs: Some(tabs),
        ..demo_job::demo_settings(tool_of(p))
    }
}

fn count(n: usize) -> TabRequest {
    TabRequest {
        count: Some(n),
        ..TabRequest::default()
    }
}

fn run(stem: &str, tabs: TabRequest, stepdown: Option<f64>) -> (MachineProfile, JobOutput) {
    let m = machine(stem);
    let out = run_job(&demo_dxf_bytes(), &m, &settings(&m.profile, tabs, stepdown))
        .unwrap_or_else(|e| panic!("{stem}: {e}"));
    (m.profile, out)
}

/// The moves of the outline's contour, one run per pass (tabs included).
fn outline_contour_runs(trace: &ReadBack) -> Vec<Vec<ReadMove>> {
    let runs = contour_runs(trace, "outline");
    assert!(!runs.is_empty(), "the outline is cut");
    runs.into_iter()
        .map(|run| run.into_iter().map(|i| trace.moves[i]).collect())
        .collect()
}

/// The XY length of a move (an arc by its radius and the angle it turns, in its sense).
fn xy_length(m: &ReadMove) -> f64 {
    let (dx, dy) = (m.to[0] - m.from[0], m.to[1] - m.from[1]);
    match m.arc {
        None => dx.hypot(dy),
        Some((c, ccw)) => {
            let a0 = (m.from[1] - c[1]).atan2(m.from[0] - c[0]);
            let a1 = (m.to[1] - c[1]).atan2(m.to[0] - c[0]);
            let sweep = if ccw {
                (a1 - a0).rem_euclid(TAU)
            } else {
                (a0 - a1).rem_euclid(TAU)
            };
            (m.from[0] - c[0]).hypot(m.from[1] - c[1]) * sweep
        }
    }
}

/// A stretch of the contour run at one height: where it starts and ends along the run (mm),
/// and its end points.
#[derive(Debug)]
struct Stretch {
    from: f64,
    to: f64,
    first: [f64; 2],
    last: [f64; 2],
    /// Indices of its first and last move in the run.
    moves: (usize, usize),
}

/// The stretches of `run` whose XY moves satisfy `pick`, consecutive moves joined, measured
/// along the run's XY path from its start.
fn stretches(run: &[ReadMove], pick: impl Fn(&ReadMove) -> bool) -> Vec<Stretch> {
    let mut out: Vec<Stretch> = Vec::new();
    let mut walked = 0.0;
    let mut open = false;
    for (i, m) in run.iter().enumerate() {
        let len = xy_length(m);
        if len == 0.0 {
            continue;
        }
        if pick(m) {
            match out.last_mut() {
                Some(s) if open => {
                    s.to = walked + len;
                    s.last = [m.to[0], m.to[1]];
                    s.moves.1 = i;
                }
                _ => out.push(Stretch {
                    from: walked,
                    to: walked + len,
                    first: [m.from[0], m.from[1]],
                    last: [m.to[0], m.to[1]],
                    moves: (i, i),
                }),
            }
            open = true;
        } else {
            open = false;
        }
        walked += len;
    }
    out
}

/// The total XY length of a run.
fn run_length(run: &[ReadMove]) -> f64 {
    run.iter().map(xy_length).sum()
}

/// Which piece of the demo outline's tool-centre path (tool radius `r`) the point lies on:
/// `Side(k)` for the four straight sides, `Corner(k)` for the four corner arcs, within `tol`.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Piece {
    Side(usize),
    Corner(usize),
}

fn piece_of(p: [f64; 2], r: f64, tol: f64) -> Option<Piece> {
    let (w, h, c) = (PLATE_WIDTH, PLATE_HEIGHT, CORNER_RADIUS);
    let (x, y) = (p[0], p[1]);
    let within = |v: f64, lo: f64, hi: f64| v >= lo - tol && v <= hi + tol;
    if (y + r).abs() <= tol && within(x, c, w - c) {
        return Some(Piece::Side(0));
    }
    if (x - w - r).abs() <= tol && within(y, c, h - c) {
        return Some(Piece::Side(1));
    }
    if (y - h - r).abs() <= tol && within(x, c, w - c) {
        return Some(Piece::Side(2));
    }
    if (x + r).abs() <= tol && within(y, c, h - c) {
        return Some(Piece::Side(3));
    }
    let centres = [(w - c, c), (w - c, h - c), (c, h - c), (c, c)];
    for (k, (cx, cy)) in centres.into_iter().enumerate() {
        let outward = (x - cx) * (if cx > w / 2.0 { 1.0 } else { -1.0 }) >= -tol
            && (y - cy) * (if cy > h / 2.0 { 1.0 } else { -1.0 }) >= -tol;
        if outward && ((x - cx).hypot(y - cy) - (c + r)).abs() <= tol {
            return Some(Piece::Corner(k));
        }
    }
    None
}

/// The demo outline's tool-centre path length for a tool of radius `r` (see the file docs).
fn outline_length(r: f64) -> f64 {
    2.0 * (PLATE_WIDTH - 2.0 * CORNER_RADIUS)
        + 2.0 * (PLATE_HEIGHT - 2.0 * CORNER_RADIUS)
        + TAU * (CORNER_RADIUS + r)
}

/// Checks that each tab stretch lies wholly on one straight side, or on one corner arc whose
/// radius is at least 5 tool diameters (gently curved: src/plan/tabs.rs's rule), and keeps clear
/// of the start region: after the overcut and the lead-out's reach, before the lead-in's, with a
/// tool diameter to spare, along the path and in the plane.
fn check_tab_places(tabs: &[Stretch], run: &[ReadMove], d: f64, trace: &ReadBack, what: &str) {
    let r = 0.5 * d;
    let total = run_length(run);
    assert!(
        (total - outline_length(r)).abs() < 0.01,
        "{what}: outline path {total} mm, expected {} mm",
        outline_length(r)
    );
    for t in tabs {
        let a = piece_of(t.first, r, 2.0 * READ_BACK);
        let b = piece_of(t.last, r, 2.0 * READ_BACK);
        assert!(
            a.is_some() && a == b,
            "{what}: tab {t:?} spans {a:?} to {b:?}"
        );
        if let Some(Piece::Corner(_)) = a {
            assert!(
                CORNER_RADIUS + r >= 5.0 * d,
                "{what}: tab on a tight corner"
            );
        }
        assert!(
            t.from >= OVERCUT + LEAD_RADIUS + d,
            "{what}: tab {t:?} starts within the overcut and lead-out"
        );
        assert!(
            t.to <= total - LEAD_RADIUS - d,
            "{what}: tab {t:?} ends within the lead-in's reach"
        );
    }
    // In the plane: every lead-in, overcut and lead-out move of the outline keeps a tool
    // diameter from every tab's ends.
    let leads: Vec<usize> = ["lead-in", "overcut", "lead-out"]
        .iter()
        .flat_map(|m| marked_moves(trace, "outline", m))
        .collect();
    for i in leads {
        let m = &trace.moves[i];
        for k in 0..=16 {
            let p = point_on(m, k as f64 / 16.0);
            for t in tabs {
                for q in [t.first, t.last] {
                    let gap = (p[0] - q[0]).hypot(p[1] - q[1]);
                    assert!(gap >= d, "{what}: a lead move passes {gap} mm from a tab");
                }
            }
        }
    }
}

/// The XY point at share `s` of a move (arcs turned about their centre in their sense).
fn point_on(m: &ReadMove, s: f64) -> [f64; 2] {
    match m.arc {
        None => [
            m.from[0] + s * (m.to[0] - m.from[0]),
            m.from[1] + s * (m.to[1] - m.from[1]),
        ],
        Some((c, ccw)) => {
            let r = (m.from[0] - c[0]).hypot(m.from[1] - c[1]);
            let a0 = (m.from[1] - c[1]).atan2(m.from[0] - c[0]);
            let sweep = xy_length(m) / r * if ccw { 1.0 } else { -1.0 };
            let a = a0 + s * sweep;
            [c[0] + r * a.cos(), c[1] + r * a.sin()]
        }
    }
}

/// The words of a program line without its line number.
fn block(line: &str) -> &str {
    let t = line.trim();
    match t.strip_prefix('N') {
        Some(rest) => rest
            .trim_start_matches(|c: char| c.is_ascii_digit())
            .trim_start(),
        None => t,
    }
}

/// The program text names each tab: a `(tab)` comment between the last move in the plane before
/// the stretch `s` of `run` and its first move, and a `(contour)` comment between its last move
/// and the next move in the plane, when the contour goes on after it.
fn check_tab_comments(program: &str, run: &[ReadMove], stretches: &[Stretch], stem: &str) {
    let lines: Vec<&str> = program.lines().map(block).collect();
    // Program lines strictly between 1-based lines a and b.
    let between = |a: usize, b: usize| lines[a..b - 1].to_vec();
    for s in stretches {
        let before = run[..s.moves.0]
            .iter()
            .rev()
            .find(|m| xy_length(m) > 0.0)
            .expect("the contour is cut before each tab");
        let text = between(before.line, run[s.moves.0].line);
        assert!(
            text.contains(&"(tab)"),
            "{stem}: no (tab) before {s:?}: {text:?}"
        );
        assert!(!text.contains(&"(contour)"), "{stem}: {text:?}");
        if let Some(after) = run[s.moves.1 + 1..].iter().find(|m| xy_length(m) > 0.0) {
            let text = between(run[s.moves.1].line, after.line);
            assert!(
                text.contains(&"(contour)"),
                "{stem}: no (contour) after {s:?}: {text:?}"
            );
        }
    }
}

#[test]
fn mill_tabs_rise_to_the_tab_height_on_the_last_pass_only() {
    // Defaults for mills: 4 mm wide, 1 mm high (common practice, §4.3).
    for stem in ["metric-mill", "inch-router"] {
        let n = 4;
        let (p, out) = run(stem, count(n), Some(2.0));
        let d = tool_of(&p);
        let trace = read_back(&out.program);
        let runs = outline_contour_runs(&trace);
        assert_eq!(runs.len(), 2, "{stem}: two passes (2 mm, then 3.5 mm)");
        // Pass 1 at 2 mm lies above the tab top (3.5 − 1 = 2.5 mm deep): no tabs there.
        let first = &runs[0];
        assert!(
            first
                .iter()
                .filter(|m| xy_length(m) > 0.0)
                .all(|m| (m.from[2] + 2.0).abs() < Z_TOL && (m.to[2] + 2.0).abs() < Z_TOL),
            "{stem}: pass 1 is cut flat at its floor"
        );
        let last = &runs[1];
        let top = -(DEPTH - 1.0);
        let raised = stretches(last, |m| {
            (m.from[2] - top).abs() < Z_TOL && (m.to[2] - top).abs() < Z_TOL
        });
        assert_eq!(raised.len(), n, "{stem}: {raised:?}");
        for t in &raised {
            assert!(
                (t.to - t.from - (4.0 + d)).abs() < READ_BACK,
                "{stem}: tab {t:?} is {} mm long, expected 4 + {d}",
                t.to - t.from
            );
        }
        // Everything else of the last pass is cut at the floor.
        let at_floor = stretches(last, |m| {
            (m.from[2] + DEPTH).abs() < Z_TOL && (m.to[2] + DEPTH).abs() < Z_TOL
        });
        let floor_length: f64 = at_floor.iter().map(|s| s.to - s.from).sum();
        let total = run_length(last);
        assert!(
            (floor_length + n as f64 * (4.0 + d) - total).abs() < n as f64 * READ_BACK,
            "{stem}: floor {floor_length} + tabs = {total}"
        );
        check_tab_places(&raised, last, d, &trace, stem);
        check_tab_comments(&out.program, last, &raised, stem);
    }
}

#[test]
fn thermal_tabs_are_gaps_with_the_process_off() {
    for (stem, n) in [("laser", 3), ("plasma", 5)] {
        let (p, out) = run(stem, count(n), None);
        let d = tool_of(&p);
        let process = p.process().expect("a cut-through kind");
        let (pierce, cut) = (
            p.units().to_mm(process.pierce_height),
            p.units().to_mm(process.cut_height),
        );
        let trace = read_back(&out.program);
        let runs = outline_contour_runs(&trace);
        assert_eq!(runs.len(), 1);
        let run = &runs[0];
        let gaps = stretches(run, |m| {
            (m.from[2] - pierce).abs() < Z_TOL && (m.to[2] - pierce).abs() < Z_TOL
        });
        assert_eq!(gaps.len(), n, "{stem}: {gaps:?}");
        // Default gap 0.5 mm (common practice, §4.3) plus the kerf.
        for g in &gaps {
            assert!(
                (g.to - g.from - (0.5 + d)).abs() < READ_BACK,
                "{stem}: gap {g:?}"
            );
        }
        // The rest of the contour is cut at the cut height.
        let cutting: f64 = stretches(run, |m| (m.from[2] - cut).abs() < Z_TOL)
            .iter()
            .map(|s| s.to - s.from)
            .sum();
        assert!((cutting + n as f64 * (0.5 + d) - run_length(run)).abs() < n as f64 * READ_BACK);
        check_tab_places(&gaps, run, d, &trace, stem);
        check_tab_comments(&out.program, run, &gaps, stem);
        // In the text: between the last cutting move before a gap and the gap, the process is
        // switched off (and not on again); between the gap and the next cutting move it is
        // switched on, with a pierce dwell (G4).
        let lines: Vec<&str> = out.program.lines().collect();
        let text_between = |a: usize, b: usize| -> Vec<&str> {
            // Program lines strictly between 1-based lines a and b.
            lines[a..b - 1].iter().map(|l| block(l)).collect()
        };
        for g in &gaps {
            let cutting = |m: &ReadMove| xy_length(m) > 0.0 && (m.to[2] - cut).abs() < Z_TOL;
            let previous = run[..g.moves.0]
                .iter()
                .rev()
                .find(|m| cutting(m))
                .expect("cutting before the gap");
            let next = run[g.moves.1 + 1..]
                .iter()
                .find(|m| cutting(m))
                .expect("cutting after the gap");
            let off = text_between(previous.line, run[g.moves.0].line);
            assert!(off.contains(&process.off.as_str()), "{stem}: {off:?}");
            assert!(!off.contains(&process.on.as_str()), "{stem}: {off:?}");
            let on = text_between(run[g.moves.1].line, next.line);
            let k = on
                .iter()
                .position(|l| *l == process.on)
                .unwrap_or_else(|| panic!("{stem}: on again after the gap: {on:?}"));
            assert!(
                on[k..].iter().any(|l| l.starts_with("G4")),
                "{stem}: {on:?}"
            );
        }
    }
}

#[test]
fn spacing_gives_the_path_length_over_the_spacing_rounded() {
    // Laser: (680 + 2π·10.1) / 100 = 7.43 → 7; mill: (680 + 2π·13) / 150 = 5.08 → 5.
    for (stem, spacing) in [("laser", 100.0), ("metric-mill", 150.0)] {
        let p = profile(stem);
        let d = tool_of(&p);
        let expected = (outline_length(0.5 * d) / spacing).round() as usize;
        let (p, out) = run(
            stem,
            TabRequest {
                spacing: Some(spacing),
                ..TabRequest::default()
            },
            None,
        );
        let trace = read_back(&out.program);
        let run = &outline_contour_runs(&trace)[0];
        let z = match p.process() {
            Some(pr) => p.units().to_mm(pr.pierce_height),
            None => -(DEPTH - 1.0),
        };
        let found = stretches(run, |m| {
            (m.from[2] - z).abs() < Z_TOL && (m.to[2] - z).abs() < Z_TOL
        });
        assert_eq!(found.len(), expected, "{stem}");
        assert!(out.report.warnings.iter().all(|w| !w.contains("tab")));
    }
}

#[test]
fn too_many_tabs_place_what_fits_and_warn() {
    // 60 tabs of 10 mm, at least 10 mm apart, need 1200 mm: more than the 762 mm outline. 30
    // tabs aim 25.4 mm apart, so the last aims 12.7 mm before the path's end, in the lead-in's
    // reach: it must move away or be dropped.
    for n in [60, 30] {
        let (p, out) = run("metric-mill", count(n), None);
        let d = tool_of(&p);
        let trace = read_back(&out.program);
        let run = &outline_contour_runs(&trace)[0];
        let raised = stretches(run, |m| (m.from[2] + DEPTH - 1.0).abs() < Z_TOL);
        assert!(
            !raised.is_empty() && raised.len() <= n,
            "{n}: {}",
            raised.len()
        );
        if n == 60 {
            assert!(raised.len() < n);
        }
        let warning = out
            .report
            .warnings
            .iter()
            .find(|w| w.starts_with("outline:") && w.contains(&format!("of {n} tab")));
        match warning {
            Some(w) => assert!(w.contains(&format!("{} of {n}", raised.len())), "{w}"),
            None => assert_eq!(raised.len(), n, "fewer placed than asked, and no warning"),
        }
        check_tab_places(&raised, run, d, &trace, "crowded mill");
        // Apart: at least one tab length between spans.
        for w in raised.windows(2) {
            assert!(w[1].from - w[0].to >= (4.0 + d) - READ_BACK, "{w:?}");
        }
    }
}

#[test]
fn tight_corners_never_take_tabs() {
    // A 3 mm tool and 1 mm tabs: the corner arcs of the tool-centre path (radius 10 + 1.5 mm,
    // 18 mm long) have room for a 4 mm tab between their end margins, but are tighter than
    // 5 tool diameters (15 mm): crowded with tabs, the outline still gets none on its corners.
    let m = machine("metric-mill");
    let p = &m.profile;
    let mut s = settings(
        p,
        TabRequest {
            width: Some(1.0),
            ..count(60)
        },
        None,
    );
    s.tool_diameter = Some(3.0);
    let out = run_job(&demo_dxf_bytes(), &m, &s).expect("the job runs");
    let trace = read_back(&out.program);
    let run = &outline_contour_runs(&trace)[0];
    let raised = stretches(run, |m| (m.from[2] + DEPTH - 1.0).abs() < Z_TOL);
    assert!(raised.len() > 20, "{}", raised.len());
    for t in &raised {
        assert!((t.to - t.from - 4.0).abs() < READ_BACK, "{t:?}");
    }
    check_tab_places(&raised, run, 3.0, &trace, "3 mm tool");
}

#[test]
fn preview_and_report_show_every_tab() {
    let n = 4;
    let (p, out) = run("metric-mill", count(n), None);
    let d = tool_of(&p);
    let doc = roxmltree::Document::parse(&out.preview).expect("the preview is XML");
    let markers = by_class(&doc, "tab-marker");
    let spans = by_class(&doc, "tab");
    assert_eq!(markers.len(), n);
    assert_eq!(spans.len(), n);
    assert!(
        markers
            .iter()
            .chain(&spans)
            .all(|e| e.attribute("data-name") == Some("outline"))
    );
    let outline = out
        .report
        .features
        .iter()
        .find(|f| f.name == "outline")
        .expect("the outline in the report");
    assert_eq!(outline.tabs.len(), n);
    check_tab_drawings(&outline.tabs, &spans, &markers, d);
    // The lead-in and lead-out are drawn too.
    assert!(!by_class(&doc, "lead-in").is_empty());
    check_tabs_rendered(&out.preview, &doc, &outline.tabs, d);
    check_tabs_reported(&out, n);
}

/// The elements of the preview with class `c`.
fn by_class<'a>(doc: &'a roxmltree::Document, c: &str) -> Vec<roxmltree::Node<'a, 'a>> {
    doc.descendants()
        .filter(|e| e.attribute("class") == Some(c))
        .collect()
}

/// Each reported tab: its bridge, its span in the preview and its marker on its middle.
fn check_tab_drawings(
    tabs: &[conicut::report::TabReport],
    spans: &[roxmltree::Node],
    markers: &[roxmltree::Node],
    d: f64,
) {
    for (t, (span, marker)) in tabs.iter().zip(spans.iter().zip(markers)) {
        // The report: the bridge is the stretch less the tool.
        assert!((t.to_mm - t.from_mm - (4.0 + d)).abs() < 1e-9);
        assert!((t.bridge_mm - 4.0).abs() < 1e-9);
        let attr = |e: &roxmltree::Node, k: &str| -> f64 {
            e.attribute(k).and_then(|v| v.parse().ok()).expect(k)
        };
        assert!((attr(span, "data-from") - t.from_mm).abs() < 1e-4);
        assert!((attr(span, "data-to") - t.to_mm).abs() < 1e-4);
        // The marker is a diamond centred on the tab's middle (y flipped in the SVG).
        let v: Vec<f64> = marker
            .attribute("d")
            .unwrap()
            .split_whitespace()
            .filter_map(|s| s.parse().ok())
            .collect();
        assert_eq!(v.len(), 8);
        let cx = (v[0] + v[2] + v[4] + v[6]) / 4.0;
        let cy = -(v[1] + v[3] + v[5] + v[7]) / 4.0;
        assert!(
            (cx - t.middle_mm[0]).abs() < 1e-3 && (cy - t.middle_mm[1]).abs() < 1e-3,
            "marker at ({cx}, {cy}), tab middle {:?}",
            t.middle_mm
        );
        assert!(piece_of(t.middle_mm, 0.5 * d, 1e-6).is_some());
    }
}

fn check_tabs_rendered(
    preview: &str,
    doc: &roxmltree::Document,
    tabs: &[conicut::report::TabReport],
    d: f64,
) {
    // Rendered (resvg), each tab's middle shows the tab colour (amber, #e8a300: red and green
    // high, blue low), and a point of the outline's path away from the tabs does not.
    let tree = resvg::usvg::Tree::from_str(preview, &resvg::usvg::Options::default())
        .expect("usvg reads the preview");
    let vb: Vec<f64> = doc
        .root_element()
        .attribute("viewBox")
        .unwrap()
        .split_whitespace()
        .map(|v| v.parse().unwrap())
        .collect();
    let ppm = 4.0;
    let (w, h) = ((vb[2] * ppm).round() as u32, (vb[3] * ppm).round() as u32);
    let mut pixmap = resvg::tiny_skia::Pixmap::new(w, h).unwrap();
    let size = tree.size();
    resvg::render(
        &tree,
        resvg::tiny_skia::Transform::from_scale(w as f32 / size.width(), h as f32 / size.height()),
        &mut pixmap.as_mut(),
    );
    let amber = |x: f64, y: f64| {
        let px = ((x - vb[0]) * ppm).floor() as u32;
        let py = ((-y - vb[1]) * ppm).floor() as u32;
        let c = pixmap.pixel(px, py).expect("on the page");
        c.red() > 200 && c.green() > 120 && c.green() < 200 && c.blue() < 80
    };
    for t in tabs {
        assert!(
            amber(t.middle_mm[0], t.middle_mm[1]),
            "tab at {:?}",
            t.middle_mm
        );
    }
    // A point of the path's left side (x = −3) 10 mm or more from every tab is not amber.
    let y = (20..=120)
        .map(f64::from)
        .find(|y| {
            tabs.iter().all(|t| {
                (t.middle_mm[0] + 0.5 * d).abs() > 1e-6 || (t.middle_mm[1] - y).abs() >= 10.0
            })
        })
        .expect("a stretch of the left side without tabs");
    assert!(!amber(-0.5 * d, y), "no tab at (-3, {y})");
}

fn check_tabs_reported(out: &JobOutput, n: usize) {
    // The text and JSON reports list them.
    let text = out.report.to_text();
    assert!(text.contains(&format!("tabs on outline: {n}")), "{text}");
    assert!(text.contains("1 mm high"));
    let json: serde_json::Value = serde_json::from_str(&out.report.to_json()).unwrap();
    let feature = json["features"]
        .as_array()
        .unwrap()
        .iter()
        .find(|f| f["name"] == "outline")
        .unwrap();
    assert_eq!(feature["tabs"].as_array().unwrap().len(), n);
    assert_eq!(json["tab_height_mm"].as_f64(), Some(1.0));
}

#[test]
fn bad_tab_requests_are_refused_with_the_reason() {
    let mill = machine("metric-mill");
    let laser = machine("laser");
    for (m, request, says) in bad_tab_requests(&mill, &laser) {
        let err = run_job(&demo_dxf_bytes(), m, &settings(&m.profile, request, None))
            .expect_err("a bad tab request is refused");
        assert!(
            matches!(
                err,
                JobError::Settings {
                    error: SettingsError::BadTabs { .. },
                    ..
                }
            ),
            "{err}"
        );
        let text = err.to_string();
        assert!(
            text.starts_with("truss-bracket.dxf: tabs on the outline:") && text.contains(says),
            "{request:?}: {text}"
        );
    }
}

/// Bad tab requests on a mill and a laser, each with what its refusal must say.
fn bad_tab_requests<'a>(
    mill: &'a Machine,
    laser: &'a Machine,
) -> [(&'a Machine, TabRequest, &'static str); 10] {
    [
        (mill, count(0), "at least 1"),
        (
            mill,
            TabRequest {
                count: Some(3),
                spacing: Some(50.0),
                ..TabRequest::default()
            },
            "not both",
        ),
        (mill, TabRequest::default(), "give a count"),
        (
            mill,
            TabRequest {
                spacing: Some(-5.0),
                ..TabRequest::default()
            },
            "spacing must be a positive",
        ),
        (
            laser,
            TabRequest {
                spacing: Some(f64::NAN),
                ..TabRequest::default()
            },
            "spacing must be a positive",
        ),
        (
            mill,
            TabRequest {
                width: Some(0.0),
                ..count(2)
            },
            "width must be a positive",
        ),
        (
            mill,
            TabRequest {
                height: Some(0.0),
                ..count(2)
            },
            "below the cut depth",
        ),
        (
            mill,
            TabRequest {
                height: Some(DEPTH),
                ..count(2)
            },
            "below the cut depth",
        ),
        (
            mill,
            TabRequest {
                height: Some(-1.0),
                ..count(2)
            },
            "below the cut depth",
        ),
        (
            laser,
            TabRequest {
                height: Some(1.0),
                ..count(2)
            },
            "mills and routers only",
        ),
    ]
}

#[test]
fn the_gcode_crate_reads_programs_with_tabs() {
    for (stem, z_word) in [("metric-mill", -2.5), ("laser", 1.5), ("plasma", 3.8)] {
        let n = 4;
        let (_, out) = run(stem, count(n), None);
        let parsed = gcode::parse(&out.program).expect("the gcode crate parses the program");
        // Read by the outside parser: on the mill, each tab's rise is a G1 to Z = −(3.5 − 1);
        // on laser and plasma each gap starts with a G0 up to the pierce height, which the
        // profile sets (laser 1.5, plasma 3.8 mm). Count them after the outline's comment.
        let mut in_outline = false;
        let mut hits = 0;
        for b in &parsed.blocks {
            for c in &b.comments {
                if c.value.contains("cut ") {
                    in_outline = c.value.contains(": outline");
                }
            }
            if !in_outline {
                continue;
            }
            for code in &b.codes {
                if let gcode::Code::General(g) = code {
                    let z = g
                        .args
                        .iter()
                        .find(|a| a.letter == 'Z')
                        .and_then(|a| match a.value {
                            gcode::Value::Literal(v) => Some(v as f64),
                            _ => None,
                        });
                    let has_xy = g.args.iter().any(|a| a.letter == 'X' || a.letter == 'Y');
                    if z.is_some_and(|z| (z - z_word).abs() < 1e-3) && !has_xy {
                        hits += 1;
                    }
                }
            }
        }
        // Laser and plasma also rise to the pierce height once before the first pierce.
        let expected = if stem == "metric-mill" { n } else { n + 1 };
        assert_eq!(hits, expected, "{stem}");
    }
}
