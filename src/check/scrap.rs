//! The scrap check: every move of the written program that is not the contour itself (entries,
//! clearing, leads, overcut, lead-out), read back by the checker, keeps the tool off the finished
//! part, and every pierce point keeps its clearance.
//!
//! This is the independent check behind the planner's rules (`plan::leads`): it reads the
//! program text as the machine would run it ([`crate::check::trace`], which shares no code with
//! the writer) and measures against the finished edges, not against the leads the planner meant
//! to write. A violation is a bug in conicut, never a user error; the job stops and nothing is
//! written.
//!
//! # Rules
//!
//! For each cut, every feed move of the cut that is not a `(contour)` move
//! ([`crate::check::cut_moves_off_contour`], found by the cut's number), sampled every [`SAMPLE_SPACING`] mm (arcs along the
//! arc), skipping rapids and, on mills and routers, the points above the top of the stock
//! (`Z > 0`, where the tool cuts nothing):
//!
//! * lies on its own cut's scrap side of its finished edge (inside a hole, outside the outline or
//!   a boss), at least `r (1 − GOUGE_MARGIN) − tolerance` from it;
//! * lies at least `r (1 − GOUGE_MARGIN) − tolerance` from every other cut's finished edge, and
//!   outside every boss;
//! * on lasers, plasma tables and waterjets, the pierce point (where the cut's first feed move
//!   starts: the move down from the pierce height) lies at least `pierce_clearance − rounding`
//!   from every finished edge.
//!
//! # Allowances
//!
//! `r` is the tool radius (half the cutter diameter or the kerf). Leads, overcuts and lead-outs
//! join the contour, and the contour as written may lie up to the job's tolerance from the exact
//! tool-centre path (the fit's share plus the output rounding: the job's tolerance budget), so
//! points near the path are allowed that tolerance; lead arcs written as lines (lines-only
//! output) take the same band. The pierce point is written once, rounded: it is allowed the
//! rounding alone. Between two samples the distance to an edge can dip by at most half the
//! spacing, and only where a move runs along an edge.

use crate::check::{self, Trace, TraceMove};
use crate::geom::{Bounds, BoxGrid, Edge, Point};
use crate::plan::{CutSide, FeatureKind, GOUGE_MARGIN, PlannedCut};
use rayon::prelude::*;

/// Spacing (mm) of the points checked along each move; at most [`MAX_SAMPLES`] per move.
pub const SAMPLE_SPACING: f64 = 0.02;

/// The most points checked on one move.
pub const MAX_SAMPLES: usize = 50_000;

/// What the check holds the program to.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ScrapRules {
    /// The tool radius (mm): half the cutter diameter, or half the kerf.
    pub tool_radius: f64,
    /// How far a written point near the path may stray towards an edge (mm): the job's
    /// tolerance.
    pub tolerance: f64,
    /// How far a written point may lie from the point meant, by rounding alone (mm).
    pub rounding: f64,
    /// Laser, plasma, waterjet: the pierce point's least distance from every finished edge (mm);
    /// `None` for mills and routers.
    pub pierce_clearance: Option<f64>,
    /// Mills and routers: leave out points above the top of the stock (`Z > 0`).
    pub skip_above_stock: bool,
}

/// A point of the program where the tool would touch the finished part.
#[derive(Debug, Clone, PartialEq)]
pub struct ScrapViolation {
    /// The feature whose cut holds the move.
    pub feature: String,
    /// The comment the move follows (`lead-in`, `overcut`, `lead-out`, `clearing`, or the cut's
    /// own comment for the entry).
    pub part: String,
    /// The program line of the move (1-based).
    pub line: usize,
    /// The point (mm).
    pub at: Point,
    /// What is wrong there.
    pub problem: String,
}

/// Checks every cut of `cuts` in the program read back as `trace` (see the module docs).
/// Returns the first violation found.
pub fn check_scrap(
    trace: &Trace,
    cuts: &[PlannedCut],
    rules: &ScrapRules,
) -> Result<(), ScrapViolation> {
    let limit = rules.tool_radius * (1.0 - GOUGE_MARGIN) - rules.tolerance;
    let edges = Edges::of(cuts);
    // Each cut on its own (in parallel, rayon); the first violation in cut order wins, as in a
    // serial run.
    let found: Vec<Result<(), ScrapViolation>> = (0..cuts.len())
        .into_par_iter()
        .map(|own| check_cut(trace, own, &edges, limit, rules))
        .collect();
    found.into_iter().collect()
}

/// Checks the moves of cut `own` (index into the cuts) off its contour.
fn check_cut(
    trace: &Trace,
    own: usize,
    edges: &Edges,
    limit: f64,
    rules: &ScrapRules,
) -> Result<(), ScrapViolation> {
    let cuts = edges.cuts;
    let cut = &cuts[own];
    let mut near = Vec::new();
    // Found by its number K in the writer's index comment `(cut K of N: NAME)`.
    let number = own + 1;
    if check::cut_range(trace, number).is_none() {
        return Err(ScrapViolation {
            feature: cut.name().to_string(),
            part: String::new(),
            line: 0,
            at: cut.plunge(),
            problem: "the cut is not in the program".into(),
        });
    }
    let mut pierce_seen = false;
    for i in check::cut_moves_off_contour(trace, number) {
        let m = &trace.moves[i];
        if m.rapid {
            continue;
        }
        let fail = |at: Point, problem: String| ScrapViolation {
            feature: cut.name().to_string(),
            part: part_of(trace, i),
            line: m.line,
            at,
            problem,
        };
        if !pierce_seen {
            pierce_seen = true;
            if let Some(c) = rules.pierce_clearance {
                let p = Point::new(m.from[0], m.from[1]);
                edges.grid.near(p, c - rules.rounding, &mut near);
                for other in near.iter().map(|&k| &cuts[k]) {
                    let d = other.edge().distance_to(p);
                    if d < c - rules.rounding {
                        return Err(fail(
                            p,
                            format!(
                                "the pierce point is {d:.4} mm from the edge of \"{}\", less \
                                 than the pierce clearance {c} mm",
                                other.name()
                            ),
                        ));
                    }
                }
            }
        }
        for (p, z) in sample_move(m) {
            if rules.skip_above_stock && z > 0.0 {
                continue;
            }
            if let Some(problem) = point_problem(p, own, edges, &mut near, limit, rules) {
                return Err(fail(p, problem));
            }
        }
    }
    Ok(())
}

/// The finished edges of every cut, on a grid (see [`BoxGrid`]) so that a point is measured
/// only against the edges that may be near it.
struct Edges<'a> {
    cuts: &'a [PlannedCut],
    grid: BoxGrid,
}

impl<'a> Edges<'a> {
    fn of(cuts: &'a [PlannedCut]) -> Self {
        let boxes = cuts
            .iter()
            .map(|c| c.edge().bounding_box().unwrap_or(UNKNOWN_BOX))
            .collect();
        Edges {
            cuts,
            grid: BoxGrid::new(boxes),
        }
    }
}

/// A box that is not finite: the grid names such an item in every query.
const UNKNOWN_BOX: Bounds = Bounds {
    min: Point::new(f64::NAN, f64::NAN),
    max: Point::new(f64::NAN, f64::NAN),
};

/// What is wrong with the tool centre at `p` in the cut `own`, if anything. Other cuts are
/// measured only when the grid says their edge's box is within `limit` of `p` (a box holds its
/// edge and, for a boss, everything inside it, so the cuts left out are clear).
fn point_problem(
    p: Point,
    own: usize,
    edges: &Edges,
    near: &mut Vec<usize>,
    limit: f64,
    rules: &ScrapRules,
) -> Option<String> {
    let r = rules.tool_radius;
    let tol = rules.tolerance;
    let cuts = edges.cuts;
    edges.grid.near(p, limit, near);
    if near.binary_search(&own).is_err() {
        near.push(own);
    }
    for &k in near.iter() {
        let c = &cuts[k];
        if k == own {
            let scrap_side = match c.side() {
                CutSide::Inside => Edge::contains(c.edge(), p),
                CutSide::Outside => !Edge::contains(c.edge(), p),
            };
            if !scrap_side {
                return Some("the tool centre is on the part side of the cut's own edge".into());
            }
        } else if c.kind() == FeatureKind::Boss && Edge::contains(c.edge(), p) {
            return Some(format!(
                "the tool centre is inside the boss \"{}\"",
                c.name()
            ));
        }
        let d = c.edge().distance_to(p);
        if d < limit {
            return Some(format!(
                "the tool centre is {d:.4} mm from the finished edge of \"{}\": the {r} mm tool \
                 radius less the {tol} mm tolerance would be the least",
                c.name()
            ));
        }
    }
    None
}

/// The comment move `i` follows: the last mark at or before it.
fn part_of(trace: &Trace, i: usize) -> String {
    trace
        .marks
        .iter()
        .rfind(|(_, at)| *at <= i)
        .map(|(text, _)| text.clone())
        .unwrap_or_default()
}

/// Points along a move (XY in mm, with the height), every [`SAMPLE_SPACING`] mm or closer, both
/// ends included; arcs along the arc.
fn sample_move(m: &TraceMove) -> Vec<(Point, f64)> {
    let (from, mv) = m.xy();
    let length = mv.length(from);
    let n = if length.is_finite() {
        ((length / SAMPLE_SPACING).ceil() as usize).clamp(1, MAX_SAMPLES)
    } else {
        1
    };
    (0..=n)
        .map(|k| {
            let t = k as f64 / n as f64;
            (mv.point_at(from, t), m.from[2] + t * (m.to[2] - m.from[2]))
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::check::trace;
    use crate::geom::ExactPath;
    use crate::geom::{ArcSegment, Vec2};
    use crate::geom::{Contour, Element};

    /// A Ø20 mm hole about (50, 50), cut with a 6 mm tool: the path is the circle of radius 7.
    fn hole() -> PlannedCut {
        let c = Point::new(50.0, 50.0);
        let drawn =
            Contour::new(vec![Element::Arc(ArcSegment::circle(c, 10.0))], "0", vec![]).unwrap();
        let path =
            Contour::new(vec![Element::Arc(ArcSegment::circle(c, 7.0))], "0", vec![]).unwrap();
        PlannedCut::new(
            "hole 1",
            FeatureKind::Hole,
            CutSide::Inside,
            ExactPath::Contour(path),
            c,
            Edge::Contour(drawn),
        )
    }

    fn rules() -> ScrapRules {
        ScrapRules {
            tool_radius: 3.0,
            tolerance: 0.01,
            rounding: 0.0001,
            pierce_clearance: None,
            skip_above_stock: true,
        }
    }

    /// A program for the hole: plunge at `plunge`, a lead-in straight to `lead_to`, then the
    /// contour from (57, 50) round the 7 mm circle.
    fn program(plunge: (f64, f64), lead_to: (f64, f64)) -> String {
        format!(
            "%\nG21 G90 G17\n(cut 1 of 1: hole 1)\nG0 Z5\nG0 X{} Y{}\nG1 Z-1 F100\n(lead-in)\n\
             G1 X{} Y{} F400\nG1 X57 Y50\n(contour)\nG3 X43 Y50 I-7 J0\nG3 X57 Y50 I7 J0\n\
             (lead-out)\nG1 X50 Y50\nG0 Z5\nM30\n%\n",
            plunge.0, plunge.1, lead_to.0, lead_to.1
        )
    }

    #[test]
    fn a_lead_in_the_scrap_passes() {
        let t = trace(&program((50.0, 50.0), (53.0, 50.0))).unwrap();
        assert_eq!(check_scrap(&t, &[hole()], &rules()), Ok(()));
    }

    #[test]
    fn a_lead_into_the_part_is_refused_with_its_line() {
        // The lead-in reaches (50, 58): 2 mm from the edge of the hole, closer than the 3 mm tool
        // radius (the hole's edge is the circle of radius 10 about (50, 50)).
        let text = program((50.0, 50.0), (50.0, 58.0));
        let t = trace(&text).unwrap();
        let v = check_scrap(&t, &[hole()], &rules()).unwrap_err();
        assert_eq!(v.feature, "hole 1");
        assert_eq!(v.part, "lead-in");
        assert_eq!(text.lines().nth(v.line - 1), Some("G1 X50 Y58 F400"));
        assert!(v.problem.contains("finished edge"), "{}", v.problem);
    }

    #[test]
    fn a_plunge_outside_the_hole_is_on_the_part_side() {
        let t = trace(&program((50.0, 70.0), (53.0, 50.0))).unwrap();
        let v = check_scrap(&t, &[hole()], &rules()).unwrap_err();
        assert!(v.problem.contains("part side"), "{}", v.problem);
    }

    #[test]
    fn points_just_inside_a_small_circle_are_inside() {
        // 0.1 mm inside a Ø9 mm circle: within the sagitta of a 0.5 rad chord (0.14 mm), where a
        // polygon of the circle would put it outside. Independent: |p − c| < 4.5.
        let c = Point::new(15.0, 15.0);
        let circle = Edge::Contour(
            Contour::new(vec![Element::Arc(ArcSegment::circle(c, 4.5))], "0", vec![]).unwrap(),
        );
        for k in 0..360 {
            let dir = Vec2::from_angle((k as f64).to_radians());
            assert!(Edge::contains(&circle, c + dir * 4.4), "{k}°");
            assert!(!Edge::contains(&circle, c + dir * 4.6), "{k}°");
        }
        // Clockwise too.
        let cw = Edge::Contour(
            Contour::new(
                vec![Element::Arc(ArcSegment::circle(c, 4.5).reversed())],
                "0",
                vec![],
            )
            .unwrap(),
        );
        assert!(Edge::contains(&cw, c + Vec2::new(4.4, 0.1)));
        assert!(!Edge::contains(&cw, c + Vec2::new(4.6, 0.1)));
    }

    #[test]
    fn a_pierce_too_near_the_edge_is_refused() {
        // Pierce at (55.5, 50): 4.5 mm from the edge, less than a 5 mm clearance.
        let mut r = rules();
        r.pierce_clearance = Some(5.0);
        r.skip_above_stock = false;
        let t = trace(&program((55.5, 50.0), (57.0, 50.0))).unwrap();
        let v = check_scrap(&t, &[hole()], &r).unwrap_err();
        assert!(v.problem.contains("pierce"), "{}", v.problem);
        r.pierce_clearance = Some(4.0);
        assert_eq!(check_scrap(&t, &[hole()], &r), Ok(()));
    }
}
