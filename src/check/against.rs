//! A program from anywhere measured against the cuts its drawing and job call for: which moves
//! cut which feature, how far each feature's moves stray from its exact tool-centre curve (both
//! ways), where a contour is left uncut, where the tool would gouge the finished part, and which
//! cutting moves belong to no feature.
//!
//! Unlike the job's own read-back ([`super::verify`]) this needs no comment from the writer: a
//! move is told apart by where it runs.
//!
//! # Rules
//!
//! * **Cutting moves** are the feed moves that move in XY with the spindle (or the beam, torch or
//!   jet) on and, on mills and routers, some part below the top of the stock (`Z < 0`); on
//!   thermal kinds every feed move with the process on. A feed move below the stock top with the
//!   spindle off is a finding of its own.
//! * A cutting move is **on** a feature's path when it keeps its depth (entries and the climbs
//!   over tabs do not) and every one of its [`MOVE_SAMPLES`] evenly spaced points lies within
//!   the band `max(ON_PATH_TOLERANCES × tolerance, ON_PATH_FLOOR)` of
//!   that exact path (the nearest feature when several are). Each feature's moves on its path
//!   are its contour when they lie within the tight band `max(TIGHT_TOLERANCES × tolerance,
//!   TIGHT_FLOOR)`, or between two such moves in one run (a bulge in the middle of a contour);
//!   leads that run close along the path before or after it are not (a feature with no move in
//!   the tight band takes every move in the wide band: all of it is off). The contour moves
//!   are measured together by [`super::deviation::measure_pieces`]: the largest distance either
//!   way, and on the part side; more than the tolerance is a finding at the worst move's line.
//! * **Uncut**: the stretches of the path farther than the on-path band from every move on it
//!   ([`super::deviation::uncut_stretches`]; nearer, a stretch is cut, if off its curve, and the
//!   deviation says by how much); on a cut with tabs, as many stretches as it has tabs, each no
//!   longer than its tab's length plus `2 × UNCUT_FLOOR`, are the tabs.
//! * A **run** is a chain of cutting moves, each starting where the last ended. A run with no
//!   move on any path cuts something the drawing does not ask for: a finding naming its lines.
//! * **Gouges**: a feature's contour moves reaching farther onto the part side of its curve than
//!   the tolerance (the exact part-side deviation: the tool's edge is then that far into the
//!   finished edge); and every cutting move is sampled, every [`GOUGE_SPACING`] mm near an edge
//!   and in steps bounded by the distance to the nearest edge elsewhere (at most
//!   [`MAX_GOUGE_SAMPLES`] points a move); a point whose distance to a finished edge (other than
//!   its own contour's, held by the deviation) is less
//!   than the tool radius less the tolerance, or that lies in the material (inside the outline
//!   and outside every hole and pocket, or inside a boss), is a gouge: one finding per move,
//!   with the depth. Between samples the distance can dip by at most half the spacing, and only
//!   where a move turns towards an edge; along an edge it changes smoothly.
//!
//! Edges and paths are found through grids over their boxes (`geom::BoxGrid`), so the cost is
//! linear in the moves and the features.

use super::deviation::{Uncut, measure_pieces, path_distance, uncut_stretches};
use super::reader::ProgramFinding;
use super::{Trace, TraceMove};
use crate::geom::{Bounds, BoxGrid, Move, Point};
use crate::plan::{CutSide, PlannedCut};
use rayon::prelude::*;
use serde::Serialize;

/// Points of each move tested against a path to say whether the move is on it.
pub const MOVE_SAMPLES: usize = 7;

/// The tight band in tolerances, and its least width (mm): a move this near its path is its
/// contour (and within the tolerance, whatever else it is).
pub const TIGHT_TOLERANCES: f64 = 1.0;
pub const TIGHT_FLOOR: f64 = 1e-6;

/// The on-path band in tolerances, and its least width (mm).
pub const ON_PATH_TOLERANCES: f64 = 20.0;
pub const ON_PATH_FLOOR: f64 = 0.1;

/// The allowance on a tab's length (mm) when uncut stretches are taken for tabs.
pub const UNCUT_FLOOR: f64 = 0.01;

/// Allowed above the tolerance before a deviation is a finding (mm): the rounding of a program
/// written to four decimals of a millimetre moves each end point by up to 5e-5 mm in X and in Y
/// (7.1e-5 mm in all); the writer keeps a share of the tolerance for it, a program from
/// elsewhere may not.
pub const DEVIATION_ALLOWANCE: f64 = 1e-4;

/// The least spacing of the gouge check's points along each cutting move (mm): the spacing
/// where a move is within the limit of an edge; elsewhere each step is as long as the distance
/// to the nearest edge allows (`d − limit`, at most [`GOUGE_LOOKAHEAD`]).
pub const GOUGE_SPACING: f64 = 0.05;

/// How far beyond the limit the gouge check looks for edges at each point (mm), and so its
/// longest step.
pub const GOUGE_LOOKAHEAD: f64 = 5.0;

/// The most points the gouge check takes on one move.
pub const MAX_GOUGE_SAMPLES: usize = 20_000;

/// What the program is held to.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AgainstRules {
    /// Half the cutter diameter or the kerf (mm).
    pub tool_radius: f64,
    /// The job's tolerance (mm).
    pub tolerance: f64,
    /// Laser, plasma or waterjet: every feed move with the process on cuts.
    pub thermal: bool,
    /// Each cut's contour has been measured already, both ways and on the part side, by the same
    /// measurement (`check::verify`, as the job does on what it writes): it is not measured again
    /// here, and features carry no deviation.
    pub contours_measured: bool,
}

/// One feature as the program cuts it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FeatureCheck {
    pub name: String,
    /// Moves found on its path, and the program lines of the first and last.
    pub moves: usize,
    pub lines: Option<(usize, usize)>,
    /// The largest distance either way between those moves and the exact path (mm).
    pub deviation_mm: Option<f64>,
    /// The farthest those moves reach onto the part side (mm).
    pub part_side_mm: Option<f64>,
    /// Stretches of the path left uncut that are not its tabs.
    pub uncut: Vec<Uncut>,
    /// Stretches taken for its tabs.
    pub tabs: usize,
    /// The program line of the move reaching farthest onto the part side.
    pub worst_part_line: Option<usize>,
    /// The program line of the move at the largest deviation either way.
    pub worst_line: Option<usize>,
}

/// The outcome of [`check_against`].
#[derive(Debug, Clone, PartialEq)]
pub struct Against {
    pub features: Vec<FeatureCheck>,
    pub findings: Vec<ProgramFinding>,
}

/// Measures the moves of `trace` against `cuts` (see the module docs).
pub fn check_against(trace: &Trace, cuts: &[PlannedCut], rules: &AgainstRules) -> Against {
    let mut findings = Vec::new();
    let cutting: Vec<usize> = (0..trace.moves.len())
        .filter(|&i| is_cutting(&trace.moves[i], rules, &mut findings))
        .collect();
    let band = (ON_PATH_TOLERANCES * rules.tolerance).max(ON_PATH_FLOOR);
    let paths = BoxGrid::new(
        cuts.iter()
            .map(|c| {
                grown(
                    c.edge().bounding_box(),
                    rules.tool_radius + c.allowance() + band,
                )
            })
            .collect(),
    );
    // The feature each cutting move is near, if any, and how far it strays.
    let near: Vec<Option<(usize, f64)>> = cutting
        .par_iter()
        .map(|&i| on_path(&trace.moves[i], cuts, &paths, band))
        .collect();
    let owner: Vec<Option<usize>> = near.iter().map(|n| n.map(|(f, _)| f)).collect();
    let tight = (TIGHT_TOLERANCES * rules.tolerance).max(TIGHT_FLOOR);
    let by_feature = contour_moves(trace, &cutting, &near, tight, cuts.len());
    let features: Vec<FeatureCheck> = cuts
        .par_iter()
        .zip(&by_feature)
        .map(|(cut, at)| measure_feature(trace, cut, at, band, rules.contours_measured))
        .collect();
    // From here on the reader could not follow the program: nothing after it is measured.
    let lost = trace.moves.iter().find(|m| !m.measurable).map(|m| m.line);
    for f in &features {
        feature_findings(f, rules, lost, &mut findings);
    }
    stray_runs(trace, &cutting, &owner, &mut findings);
    // Which feature's contour each cutting move is (its own edge is then held by the part-side
    // deviation, measured exactly, instead of by samples).
    let mut contour_of = vec![None; trace.moves.len()];
    for (f, at) in by_feature.iter().enumerate() {
        for &i in at {
            contour_of[i] = Some(f);
        }
    }
    findings.extend(gouges(trace, &cutting, &owner, &contour_of, cuts, rules));
    Against { features, findings }
}

/// The runs of `cutting` (indices into the trace): chains of moves each starting where the last
/// ended, as ranges of positions in `cutting`.
fn runs(trace: &Trace, cutting: &[usize]) -> Vec<std::ops::Range<usize>> {
    let mut out = Vec::new();
    let mut k = 0;
    while k < cutting.len() {
        let mut end = k + 1;
        while end < cutting.len() && joined(trace, cutting[end - 1], cutting[end]) {
            end += 1;
        }
        out.push(k..end);
        k = end;
    }
    out
}

/// Whether the cutting moves `a` and `b` (trace indices, `a < b`) are one chain: `b` starts in
/// XY where `a` ends, and the moves between them (if any) are feed moves that stay there (a move
/// only in Z, or one that rounds to no movement).
fn joined(trace: &Trace, a: usize, b: usize) -> bool {
    let xy = |p: [f64; 3]| (p[0], p[1]);
    xy(trace.moves[b].from) == xy(trace.moves[a].to)
        && trace.moves[a + 1..b]
            .iter()
            .all(|m| !m.rapid && xy(m.from) == xy(m.to))
}

/// Each feature's contour moves (trace indices, in order): the moves within the tight band of
/// its path, and those within the wide band that lie between two of them in one run; a feature
/// with no move in the tight band takes every move in the wide band.
fn contour_moves(
    trace: &Trace,
    cutting: &[usize],
    near: &[Option<(usize, f64)>],
    tight: f64,
    features: usize,
) -> Vec<Vec<usize>> {
    let mut has_tight = vec![false; features];
    for (f, d) in near.iter().flatten() {
        if *d <= tight {
            has_tight[*f] = true;
        }
    }
    let mut out: Vec<Vec<usize>> = vec![Vec::new(); features];
    for run in runs(trace, cutting) {
        // The first and last tight move of each feature in the run.
        let mut span: std::collections::HashMap<usize, (usize, usize)> =
            std::collections::HashMap::new();
        for k in run.clone() {
            if let Some((f, d)) = near[k]
                && d <= tight
            {
                let e = span.entry(f).or_insert((k, k));
                e.1 = k;
            }
        }
        for k in run {
            let Some((f, _)) = near[k] else { continue };
            let inside = span.get(&f).is_some_and(|&(a, b)| a <= k && k <= b);
            if inside || !has_tight[f] {
                out[f].push(cutting[k]);
            }
        }
    }
    out
}

fn grown(b: Option<Bounds>, by: f64) -> Bounds {
    match b {
        Some(b) => Bounds {
            min: Point::new(b.min.x - by, b.min.y - by),
            max: Point::new(b.max.x + by, b.max.y + by),
        },
        None => Bounds {
            min: Point::new(f64::NAN, f64::NAN),
            max: Point::new(f64::NAN, f64::NAN),
        },
    }
}

fn is_cutting(m: &TraceMove, rules: &AgainstRules, findings: &mut Vec<ProgramFinding>) -> bool {
    let moves_xy = m.from[0] != m.to[0] || m.from[1] != m.to[1];
    if m.rapid || !moves_xy || !m.measurable {
        return false;
    }
    if rules.thermal {
        return m.on;
    }
    let below = m.from[2].min(m.to[2]) < 0.0;
    if below && !m.on {
        findings.push(ProgramFinding::must_fix(
            m.line,
            "spindle-off",
            "a feed move below the top of the stock with the spindle off".into(),
        ));
    }
    below && m.on
}

/// The feature whose path the whole move lies near (within `band`), the nearest if several, and
/// the largest distance of the move's samples from it.
fn on_path(m: &TraceMove, cuts: &[PlannedCut], paths: &BoxGrid, band: f64) -> Option<(usize, f64)> {
    // Entries (helices, ramps) and the climbs over tabs change depth: never the contour.
    if m.from[2] != m.to[2] {
        return None;
    }
    let (from, mv) = m.xy();
    let points: Vec<Point> = (0..MOVE_SAMPLES)
        .map(|k| mv.point_at(from, k as f64 / (MOVE_SAMPLES - 1) as f64))
        .collect();
    let mut near = Vec::new();
    paths.near(points[MOVE_SAMPLES / 2], 0.0, &mut near);
    let mut best: Option<(f64, usize)> = None;
    for &c in &near {
        let path = cuts[c].path();
        let mut worst = 0.0f64;
        for &p in &points {
            worst = worst.max(path_distance(path, p));
            if worst > band {
                break;
            }
        }
        if worst <= band && best.is_none_or(|b| worst < b.0) {
            best = Some((worst, c));
        }
    }
    best.map(|(d, c)| (c, d))
}

fn measure_feature(
    trace: &Trace,
    cut: &PlannedCut,
    at: &[usize],
    band: f64,
    measured: bool,
) -> FeatureCheck {
    let (starts, moves): (Vec<Point>, Vec<Move>) = at.iter().map(|&i| trace.moves[i].xy()).unzip();
    let deviation = if measured {
        None
    } else {
        measure_pieces(&starts, &moves, cut.path(), cut.scrap_left())
    };
    let (mut uncut, covered) = uncut_stretches(&starts, &moves, cut.path(), band);
    // The tabs: as many stretches as the cut has tabs, each no longer than its tab.
    let mut tabs = 0;
    if !cut.tabs().is_empty() {
        let longest = cut.tabs().iter().map(|t| t.length).fold(0.0, f64::max);
        let (short, long): (Vec<Uncut>, Vec<Uncut>) = uncut
            .into_iter()
            .partition(|u| u.length <= longest + 2.0 * UNCUT_FLOOR);
        tabs = short.len().min(cut.tabs().len());
        uncut = long;
        uncut.extend(short.into_iter().skip(tabs));
    }
    let lines = at
        .first()
        .zip(at.last())
        .map(|(&a, &b)| (trace.moves[a].line, trace.moves[b].line));
    FeatureCheck {
        name: cut.name().to_string(),
        moves: at.len(),
        lines,
        // With tabs the path's own gaps are left out: the moves' distance from the path, and
        // the path's (sampled) from the moves outside the stretches taken for tabs.
        deviation_mm: deviation.map(|d| {
            if tabs > 0 {
                uncut
                    .iter()
                    .map(|u| u.gap)
                    .fold(d.moves_to_path.max(covered), f64::max)
            } else {
                d.both_ways
            }
        }),
        part_side_mm: deviation.map(|d| d.part_side),
        uncut,
        tabs,
        worst_line: deviation.and_then(|d| at.get(d.worst_move).map(|&i| trace.moves[i].line)),
        worst_part_line: deviation
            .and_then(|d| at.get(d.worst_part_move).map(|&i| trace.moves[i].line)),
    }
}

fn feature_findings(
    f: &FeatureCheck,
    rules: &AgainstRules,
    lost: Option<usize>,
    out: &mut Vec<ProgramFinding>,
) {
    let line = f.lines.map_or(0, |l| l.0);
    if f.moves == 0 {
        let message = match lost {
            Some(l) => format!(
                "\"{}\" is not measured: no cutting move the checker could follow runs along its \
                 path, and the moves from line {l} on are not followed (see the finding before \
                 them)",
                f.name
            ),
            None => format!(
                "\"{}\" is not cut: no cutting move runs along its path",
                f.name
            ),
        };
        out.push(ProgramFinding::must_fix(0, "not-cut", message));
        return;
    }
    if let Some(d) = f
        .deviation_mm
        .filter(|&d| d > rules.tolerance + DEVIATION_ALLOWANCE)
    {
        out.push(ProgramFinding::must_fix(
            f.worst_line.unwrap_or(line),
            "deviation",
            format!(
                "\"{}\" (lines {}–{}) strays {d:.4} mm from its exact tool-centre curve, more \
                 than the tolerance {} mm",
                f.name,
                line,
                f.lines.map_or(0, |l| l.1),
                rules.tolerance
            ),
        ));
    }
    if let Some(p) = f
        .part_side_mm
        .filter(|&p| p > rules.tolerance + DEVIATION_ALLOWANCE)
    {
        out.push(ProgramFinding::must_fix(
            f.worst_part_line.unwrap_or(line),
            "gouge",
            format!(
                "gouges \"{}\" by {p:.4} mm: its contour runs {p:.4} mm onto the part side of its \
                 exact tool-centre curve, so the tool's edge cuts that far into the finished edge \
                 (more than the tolerance {} mm)",
                f.name, rules.tolerance
            ),
        ));
    }
    for u in &f.uncut {
        out.push(ProgramFinding::must_fix(
            line,
            "uncut",
            format!(
                "\"{}\" is left uncut for {:.3} mm from ({:.3}, {:.3}) to ({:.3}, {:.3}) mm (the \
                 nearest cutting move is {:.3} mm away)",
                f.name, u.length, u.from.x, u.from.y, u.to.x, u.to.y, u.gap
            ),
        ));
    }
}

/// Runs of cutting moves none of whose moves is on a path.
fn stray_runs(
    trace: &Trace,
    cutting: &[usize],
    owner: &[Option<usize>],
    out: &mut Vec<ProgramFinding>,
) {
    for run in runs(trace, cutting) {
        if owner[run.clone()].iter().all(Option::is_none) {
            let (a, b) = (
                trace.moves[cutting[run.start]].line,
                trace.moves[cutting[run.end - 1]].line,
            );
            out.push(ProgramFinding::must_fix(
                a,
                "stray",
                format!(
                    "cutting moves on lines {a}–{b} belong to no feature of the drawing: they run \
                     along no cut's path"
                ),
            ));
        }
    }
}

/// Every cutting move closer to a finished edge than the tool radius less the tolerance, or in
/// the material: one finding per move.
fn gouges(
    trace: &Trace,
    cutting: &[usize],
    owner: &[Option<usize>],
    contour_of: &[Option<usize>],
    cuts: &[PlannedCut],
    rules: &AgainstRules,
) -> Vec<ProgramFinding> {
    let limit = rules.tool_radius - rules.tolerance;
    let material = Material::new(cuts, rules.tool_radius);
    let found: Vec<Option<ProgramFinding>> = cutting
        .par_iter()
        .zip(owner)
        .map(|(&i, own)| {
            let m = &trace.moves[i];
            let skip = contour_of[i];
            let (from, mv) = m.xy();
            let length = from.distance(mv.end()).max(mv.length(from));
            let lookahead = limit.max(0.0) + GOUGE_LOOKAHEAD;
            let mut near = Vec::new();
            let mut worst: Option<(f64, Point, usize, bool)> = None;
            let mut t = 0.0f64;
            for _ in 0..MAX_GOUGE_SAMPLES {
                let p = mv.point_at(from, t);
                let nearest = material.nearest_edge(p, lookahead, skip, &mut near);
                if let Some((d, c)) = nearest
                    && d < limit
                    && worst.is_none_or(|w| d < w.0)
                {
                    worst = Some((d, p, c, false));
                }
                // A move along a path is measured by its deviation; the others (leads,
                // entries, strays) must stay in the scrap.
                if worst.is_none() && own.is_none() && material.contains(p, &mut near) {
                    // In the part: that is the finding; the rest of the move adds nothing.
                    worst = Some((0.0, p, usize::MAX, true));
                    break;
                }
                if t >= 1.0 || length.is_nan() || length <= 0.0 {
                    break;
                }
                // The distance to an edge changes no faster than the tool moves along the move,
                // so no point before `d − limit` further on can come nearer than the limit (nor
                // cross an edge into the part).
                let d = nearest.map_or(lookahead, |n| n.0);
                t = (t + (d - limit).max(GOUGE_SPACING) / length).min(1.0);
            }
            worst.map(|(d, p, c, material)| {
                let message = if material {
                    format!(
                        "the tool centre runs through the finished part at ({:.3}, {:.3}) mm",
                        p.x, p.y
                    )
                } else {
                    format!(
                        "gouges \"{}\" by {:.4} mm at ({:.3}, {:.3}) mm: the tool centre is {:.4} \
                         mm from its finished edge, less than the tool radius {} mm less the \
                         tolerance",
                        cuts[c].name(),
                        rules.tool_radius - d,
                        p.x,
                        p.y,
                        d,
                        rules.tool_radius
                    )
                };
                ProgramFinding::must_fix(m.line, "gouge", message)
            })
        })
        .collect();
    found.into_iter().flatten().collect()
}

/// The finished part, to ask whether a point lies in it: inside the outline (when there is
/// one; a roughing cut of the outline is an outline too) and outside every cut made inside its
/// edge, or inside a boss (but not within three tool radii outside one, where a boss's leads
/// run).
pub struct Material<'a> {
    cuts: &'a [PlannedCut],
    edges: BoxGrid,
    has_outline: bool,
    tool_radius: f64,
}

fn is_outline(c: &PlannedCut) -> bool {
    c.kind() == crate::plan::FeatureKind::Outline
}

impl<'a> Material<'a> {
    pub fn new(cuts: &'a [PlannedCut], tool_radius: f64) -> Self {
        Material {
            cuts,
            edges: BoxGrid::new(
                cuts.iter()
                    .map(|c| grown(c.edge().bounding_box(), 0.0))
                    .collect(),
            ),
            has_outline: cuts.iter().any(is_outline),
            tool_radius,
        }
    }

    /// Whether `p` lies in the finished part (`near` is scratch space).
    pub fn contains(&self, p: Point, near: &mut Vec<usize>) -> bool {
        // A boss's leads run outside it in what is material until the cut around it is made:
        // points within three tool radii outside a boss count as its scrap.
        let reach = 3.0 * self.tool_radius;
        self.edges.near(p, reach, near);
        let mut in_outline = !self.has_outline;
        let mut in_scrap = false;
        let mut in_boss = false;
        for &c in near.iter() {
            let cut = &self.cuts[c];
            let outline = is_outline(cut);
            if !cut.edge().contains(p) {
                let boss = !outline && cut.side() == CutSide::Outside;
                if boss && cut.edge().distance_to(p) < reach {
                    return false;
                }
                continue;
            }
            match (outline, cut.side()) {
                (true, _) => in_outline = true,
                (false, CutSide::Inside) => in_scrap = true,
                (false, CutSide::Outside) => in_boss = true,
            }
        }
        in_outline && (!in_scrap || in_boss)
    }

    /// The distance from `p` to the nearest finished edge within `radius` other than `skip`'s,
    /// with that edge's cut.
    fn nearest_edge(
        &self,
        p: Point,
        radius: f64,
        skip: Option<usize>,
        near: &mut Vec<usize>,
    ) -> Option<(f64, usize)> {
        self.edges.near(p, radius, near);
        near.iter()
            .filter(|&&c| Some(c) != skip)
            .map(|&c| (self.cuts[c].edge().distance_to(p), c))
            .filter(|&(d, _)| d < radius)
            .min_by(|a, b| a.0.total_cmp(&b.0))
    }
}
