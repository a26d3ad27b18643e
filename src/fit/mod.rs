//! Stage 5, fit: approximates each exact tool-centre path by moves the controller understands,
//! within the tolerance, with as few moves as the tolerance allows, and measures the deviation it
//! achieved.
//!
//! "Tolerance" is the largest distance between the emitted path and the exact curve, either way
//! (mm). The fitters work inside a band around the exact curve: `±tolerance`, or, when the cut
//! asks to keep all deviation on the scrap side, `[0, tolerance]` on the scrap side: the left of
//! travel for a climb cut, the right for a conventional one ([`PlannedCut::scrap_left`]). The
//! approximations:
//!
//! | path | [`MoveKind::Arcs`] | [`MoveKind::Lines`] |
//! |---|---|---|
//! | ellipse parallel curve | arc spline (`arcs.rs`): ≈ ∫ (\|κ′\| / (72√3 w))^{1/3} ds arcs, `w` half the band | band polygon (`lines.rs`): ≈ ∫ √(κ / 8W) ds chords, `W` the band's width |
//! | contour line | the line | the line |
//! | contour arc | the arc, split below 180° | band polygon on the circle |
//!
//! For the two-sided band `w = ε`, `W = 2ε` (the `√(κ/16ε)` count of docs/sources.md
//! §3.2); the one-sided band is half as wide.

use crate::geom::Point;
use crate::geom::moves::{self, Move};
use crate::plan::{CutSide, FeatureKind, OwnSettings};
use rayon::prelude::*;
use serde::Serialize;

/// One feature's cut, ready for a post-processor: the tool enters at `plunge`, runs `clearing`
/// (pockets only), then `lead_in` to `start`, then `moves` (lines and arcs) round the contour
/// back to `start`, then `overcut` and `lead_out`.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FittedCut {
    /// The feature's name, e.g. `bay 1`, `hole 2`, `outline`.
    pub name: String,
    pub kind: FeatureKind,
    pub side: CutSide,
    /// Where the tool enters the material, in the scrap (mm).
    pub plunge: Point,
    /// Pockets: the clearing rings and the links between them, from `plunge` (mm).
    pub clearing: Vec<Move>,
    /// From the end of the clearing (or `plunge`) to `start` (mm).
    pub lead_in: Vec<Move>,
    /// Where the contour starts and ends (mm).
    pub start: Point,
    /// The feed moves of the tool centre along the contour (mm).
    pub moves: Vec<Move>,
    /// The first stretch of the contour cut again, from `start` (mm).
    pub overcut: Vec<Move>,
    /// From the end of the overcut (or `start`) into the scrap (mm).
    pub lead_out: Vec<Move>,
    /// Stretches of `moves` left uncut, as distances along them from `start` (mm), ascending and
    /// apart.
    pub tabs: Vec<(f64, f64)>,
    /// A finishing cut: made once at the full depth.
    pub full_depth_only: bool,
    /// How far the tool centre may wander from `plunge` without touching the finished edge
    /// (mm): room for a helical entry.
    pub entry_room: f64,
    /// The tolerance the fit was asked to keep (mm).
    pub tolerance: f64,
    /// The largest distance between the emitted path and the exact tool-centre curve, measured
    /// by dense sampling in both directions (mm).
    pub measured_deviation: f64,
    /// The largest change of direction between consecutive moves (degrees).
    pub largest_kink_deg: f64,
    /// The largest distance of the emitted path from the exact curve on the part side (the right
    /// of travel), measured by dense sampling (mm); at most `measured_deviation`, and at most
    /// [`PART_SIDE_SLACK`] for a fit asked to keep to the scrap side.
    pub part_side_deviation: f64,
    /// Whether the scrap lies on the left of travel (climb) or on the right (conventional); see
    /// [`PlannedCut::scrap_left`](crate::plan::PlannedCut::scrap_left).
    pub scrap_left: bool,
    /// Radial stock (mm) this cut leaves for a finishing cut (a roughing cut), else 0.
    pub allowance: f64,
    /// The feature's own depth, passes and feeds, where its job-file feature gives them.
    pub own: OwnSettings,
}

impl FittedCut {
    /// A cut made of straight moves through `points` (the first is the start; a closed run ends
    /// where it starts).
    #[allow(clippy::too_many_arguments)]
    pub fn from_points(
        name: &str,
        kind: FeatureKind,
        side: CutSide,
        plunge: Point,
        points: &[Point],
        tolerance: f64,
        measured_deviation: f64,
    ) -> FittedCut {
        let start = points.first().copied().unwrap_or(plunge);
        let moves: Vec<Move> = points.iter().skip(1).map(|&to| Move::Line { to }).collect();
        FittedCut {
            name: name.to_string(),
            kind,
            side,
            plunge,
            clearing: Vec::new(),
            lead_in: vec![Move::Line { to: start }],
            overcut: Vec::new(),
            lead_out: Vec::new(),
            tabs: Vec::new(),
            full_depth_only: false,
            entry_room: 0.0,
            start,
            largest_kink_deg: moves::largest_kink_deg(start, &moves),
            moves,
            tolerance,
            measured_deviation,
            // Which side the deviation lies on is not known here.
            part_side_deviation: measured_deviation,
            scrap_left: true,
            allowance: 0.0,
            own: OwnSettings::default(),
        }
    }

    /// The start and every move's end point, in order (for lines only, the polyline).
    pub fn end_points(&self) -> Vec<Point> {
        std::iter::once(self.start)
            .chain(self.moves.iter().map(Move::end))
            .collect()
    }

    /// Where the lead-in begins: the end of the clearing, or the plunge point.
    pub fn lead_in_start(&self) -> Point {
        self.clearing.last().map_or(self.plunge, Move::end)
    }

    /// Where the lead-out begins: the end of the overcut, or the start.
    pub fn lead_out_start(&self) -> Point {
        self.overcut.last().map_or(self.start, Move::end)
    }

    /// Where the cut ends: the end of the lead-out, of the overcut, or the start.
    pub fn end(&self) -> Point {
        self.lead_out
            .last()
            .map_or(self.lead_out_start(), Move::end)
    }
}

mod arcs;
mod band;
mod lines;
mod measure;

pub use measure::{SideDeviation, measure_deviation, measure_sides, measure_with_sides};

use crate::geom::{ArcSegment, Ellipse};
use crate::geom::{Contour, Element};
use crate::geom::{ExactPath, ParallelCurve};
use crate::plan::{Plan, PlannedCut};
use band::{Band, CircleCurve, EllipseCurve};
use std::f64::consts::{FRAC_PI_2, PI, TAU};

/// The smallest tolerance accepted (mm): below this the fixed-decimal output cannot carry it.
pub const MIN_TOLERANCE: f64 = 1e-5;

/// How far (mm) a path fitted with [`FitOptions::scrap_side_only`] may stray to the part side:
/// rounding in the construction (vertices placed on the exact curve itself) and in the
/// measurement. It is not spent from the tolerance.
pub const PART_SIDE_SLACK: f64 = 1e-9;

/// The share of the tolerance the inscribed-chord construction aims for; the rest covers the
/// accuracy of the search that places each vertex (≈1e-12 mm).
const TARGET_SHARE: f64 = 1.0 - 1e-6;

/// Which moves approximate the curved parts of a path.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum MoveKind {
    /// Circular arcs (G2/G3) and straight lines: ellipse paths become an arc spline, contour arcs
    /// stay exact arcs (split below 180°), contour lines stay lines.
    Arcs,
    /// Straight lines only (G1): every curved part becomes a polygon in the tolerance band.
    Lines,
}

/// How to fit a planned path.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct FitOptions {
    /// The largest distance allowed between the emitted path and the exact tool-centre curve, in
    /// either direction (mm), at least [`MIN_TOLERANCE`].
    pub tolerance: f64,
    /// Arcs and lines, or lines only.
    pub moves: MoveKind,
    /// Keep every deviation on the scrap side of the exact curve (the left of travel for a climb
    /// cut, the right for a conventional one: [`PlannedCut::scrap_left`]): the emitted path
    /// never crosses into the part (beyond [`PART_SIDE_SLACK`]), and the tolerance band is
    /// one-sided, so half as wide as a two-sided one of the same tolerance and the fit needs
    /// more moves.
    pub scrap_side_only: bool,
}

/// Why a path could not be fitted.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum FitError {
    #[error(
        "the tolerance must be at least {MIN_TOLERANCE} mm and finite (got {0}); the usual value \
         is 0.01 mm"
    )]
    BadTolerance(f64),
    #[error(
        "{feature}: the tool-centre path is not a smooth convex curve: the inset {inset} mm is not \
         below the smallest radius of curvature {limit:.4} mm of the ellipse; plan the cut with a \
         smaller tool"
    )]
    IrregularPath {
        feature: String,
        inset: f64,
        limit: f64,
    },
    #[error(
        "{feature}: no arc spline within {tolerance} mm was found; this is a bug, please report it \
         with the drawing, or fit with lines"
    )]
    NoArcSpline { feature: String, tolerance: f64 },
    #[error(
        "{feature}: the fitted path deviates {measured:.6} mm from the exact curve, more than the \
         tolerance {tolerance} mm; this is a bug, please report it with the drawing"
    )]
    ToleranceExceeded {
        feature: String,
        measured: f64,
        tolerance: f64,
    },
    #[error(
        "{feature}: the fitted path strays {measured:.3e} mm to the part side of the exact curve, \
         though asked to keep to the scrap side; this is a bug, please report it with the drawing"
    )]
    PartSideCrossed { feature: String, measured: f64 },
}

/// Fits every planned cut with `options`.
///
/// The cuts are fitted in parallel (rayon) and gathered in order; the error is the first cut's
/// in plan order, as a serial run would give.
pub fn fit_plan(plan: &Plan, options: &FitOptions) -> Result<Vec<FittedCut>, FitError> {
    let fitted: Vec<Result<FittedCut, FitError>> =
        plan.cuts.par_iter().map(|c| fit_cut(c, options)).collect();
    fitted.into_iter().collect()
}

/// Fits one cut: the ellipse's parallel curve by an arc spline ([`MoveKind::Arcs`]) or a band
/// polygon ([`MoveKind::Lines`]); a contour's lines as lines and its arcs exactly (split below
/// 180°) or by band polygons. Every fit is then measured independently by dense sampling
/// ([`measure_deviation`], and [`measure_sides`] for one-sided fits); a measurement over the
/// tolerance, or on the part side beyond [`PART_SIDE_SLACK`] for a one-sided fit, is an error.
///
/// Bounds (each guaranteed up to the accuracy of its searches, ≈1e-12 mm, which the band's
/// millionth share absorbs): band polygons lie between the band's edges; arc-spline arcs lie
/// within half the band's width of its middle curve, measured along the rays from their centres,
/// for error profiles with one extremum between samples 1/48 of a stretch apart (always so for
/// the smooth curves here; the measurement confirms it). Two-sided bands are `±tolerance`;
/// one-sided bands are `[0, tolerance]` on the scrap side. A band's inner edge keeps within 99 %
/// of the smallest radius of curvature on the concave side (the band is narrowed there, never
/// widened), so that the curve's normals do not cross inside it.
pub fn fit_cut(cut: &PlannedCut, options: &FitOptions) -> Result<FittedCut, FitError> {
    let tolerance = options.tolerance;
    if !(tolerance >= MIN_TOLERANCE && tolerance.is_finite()) {
        return Err(FitError::BadTolerance(tolerance));
    }
    let (start, moves) = fit_path(cut, options)?;
    let (measured, sides) =
        measure::measure_with_sides(start, &moves, cut.path(), cut.scrap_left());
    if measured.is_nan() || measured > tolerance {
        return Err(FitError::ToleranceExceeded {
            feature: cut.name().to_string(),
            measured,
            tolerance,
        });
    }
    if options.scrap_side_only && (sides.part_side.is_nan() || sides.part_side > PART_SIDE_SLACK) {
        return Err(FitError::PartSideCrossed {
            feature: cut.name().to_string(),
            measured: sides.part_side,
        });
    }
    let clearing = fit_clearing(cut, options)?;
    let lead_in_from = clearing.last().map_or(cut.plunge(), Move::end);
    let lead_in = if cut.lead_in().is_empty() {
        vec![Move::Line { to: start }]
    } else {
        elements_to_moves(cut.lead_in(), lead_in_from, Some(start), options)
    };
    let overcut = moves::leading_stretch(start, &moves, cut.overcut());
    let lead_out_from = overcut.last().map_or(start, Move::end);
    let lead_out = elements_to_moves(cut.lead_out(), lead_out_from, None, options);
    let length = moves::total_length(start, &moves);
    let tabs = tab_spans(cut, length);
    Ok(FittedCut {
        name: cut.name().to_string(),
        kind: cut.kind(),
        side: cut.side(),
        plunge: cut.plunge(),
        clearing,
        lead_in,
        overcut,
        lead_out,
        tabs,
        full_depth_only: cut.full_depth_only(),
        entry_room: cut.entry_room(),
        start,
        largest_kink_deg: moves::largest_kink_deg(start, &moves),
        moves,
        tolerance,
        measured_deviation: measured,
        part_side_deviation: sides.part_side,
        scrap_left: cut.scrap_left(),
        allowance: cut.allowance(),
        own: cut.own(),
    })
}

/// The cut's tool-centre path as a start point and moves within the tolerance band; refuses an
/// irregular parallel curve (inset at or past b²/a).
fn fit_path(cut: &PlannedCut, options: &FitOptions) -> Result<(Point, Vec<Move>), FitError> {
    Ok(match &cut.path() {
        ExactPath::EllipseParallel {
            ellipse,
            inset,
            start,
            clockwise,
        } => {
            ParallelCurve::new(*ellipse, *inset, 0.0).map_err(|too_deep| {
                FitError::IrregularPath {
                    feature: cut.name().to_string(),
                    inset: *inset,
                    limit: too_deep.limit,
                }
            })?;
            fit_ellipse_parallel(
                ellipse,
                *inset,
                *start,
                *clockwise,
                cut.scrap_left(),
                options,
            )
            .ok_or_else(|| FitError::NoArcSpline {
                feature: cut.name().to_string(),
                tolerance: options.tolerance,
            })?
        }
        ExactPath::Contour(c) => fit_contour(c, cut.scrap_left(), options),
    })
}

/// The tabs as stretches `(from, to)` of the fitted contour's length (mm), clipped to it.
fn tab_spans(cut: &PlannedCut, length: f64) -> Vec<(f64, f64)> {
    cut.tabs()
        .iter()
        .map(|t| {
            let mid = t.at.rem_euclid(1.0) * length;
            (
                (mid - 0.5 * t.length).max(0.0),
                (mid + 0.5 * t.length).min(length),
            )
        })
        .collect()
}

/// The parallel curve `O_d(t)` (`d` = `inset`) from anomaly `start`, once round, as a start
/// point and moves. The fit runs counter-clockwise and is reversed for a clockwise cut; the scrap
/// is on the left of travel when `scrap_left` (inside for counter-clockwise and outside for
/// clockwise cuts), on the right otherwise (a conventional cut).
/// `None` when no arc spline was found.
fn fit_ellipse_parallel(
    e: &Ellipse,
    inset: f64,
    start: f64,
    clockwise: bool,
    scrap_left: bool,
    options: &FitOptions,
) -> Option<(Point, Vec<Move>)> {
    let curve = EllipseCurve { ellipse: *e, inset };
    let reach = ParallelCurve::any(*e, inset).reach();
    let band = Band::new(
        options.tolerance,
        options.scrap_side_only,
        clockwise != scrap_left,
        reach,
    );
    let end = start + TAU;
    let (first, moves) = match options.moves {
        MoveKind::Lines => {
            let first = band::ConvexCurve::point(&curve, start, band.hi);
            let points = lines::band_polygon(&curve, band, start, end, first, first);
            (first, lines_through(&points))
        }
        MoveKind::Arcs => {
            let s = band.mid();
            let first = band::ConvexCurve::point(&curve, start, s);
            let spans = arcs::arc_spline(&curve, s, start, end, band.half_width())?;
            (first, arcs::spans_to_moves(&curve, s, &spans, first))
        }
    };
    Some(if clockwise {
        moves::reversed(first, &moves)
    } else {
        (first, moves)
    })
}

/// The clearing rings of a pocket as moves from the plunge point: a straight link to each ring's
/// start, then the ring fitted like any path (within the tolerance of its exact curve).
fn fit_clearing(cut: &PlannedCut, options: &FitOptions) -> Result<Vec<Move>, FitError> {
    let mut out = Vec::new();
    for ring in cut.clearing() {
        let (first, ring_moves) = match ring {
            ExactPath::EllipseParallel {
                ellipse,
                inset,
                start,
                clockwise,
            } => fit_ellipse_parallel(ellipse, *inset, *start, *clockwise, true, options)
                .ok_or_else(|| FitError::NoArcSpline {
                    feature: cut.name().to_string(),
                    tolerance: options.tolerance,
                })?,
            ExactPath::Contour(c) => fit_contour(c, true, options),
        };
        out.push(Move::Line { to: first });
        out.extend(ring_moves);
    }
    Ok(out)
}

/// Exact lead elements as moves from `from`: lines as lines, arcs as arcs (split below 180°) or,
/// for lines only, band polygons within the tolerance. The last move ends exactly at `end` when
/// given (the path's start), so that the lead meets the path without a gap.
fn elements_to_moves(
    elements: &[Element],
    from: Point,
    end: Option<Point>,
    options: &FitOptions,
) -> Vec<Move> {
    let mut out = Vec::new();
    let mut at = from;
    let count = elements.len();
    for (i, element) in elements.iter().enumerate() {
        let to = match end {
            Some(p) if i + 1 == count => p,
            _ => element.end(),
        };
        match element {
            Element::Line(_) => out.push(Move::Line { to }),
            Element::Arc(a) => match options.moves {
                MoveKind::Arcs => out.extend(exact_arc(a, to)),
                MoveKind::Lines => {
                    out.extend(lines_through(&arc_polygon(a, at, to, true, options)))
                }
            },
        }
        at = to;
    }
    out
}

/// A contour as moves: lines as lines; arcs exactly ([`MoveKind::Arcs`], split so that each
/// sweeps less than 180°) or by a band polygon ([`MoveKind::Lines`]) whose ends are the arc's.
fn fit_contour(c: &Contour, scrap_left: bool, options: &FitOptions) -> (Point, Vec<Move>) {
    let Some(first) = c.start_point() else {
        return (Point::ORIGIN, Vec::new());
    };
    let mut moves = Vec::new();
    let mut at = first;
    let count = c.elements().len();
    for (i, element) in c.elements().iter().enumerate() {
        // The contour closes exactly on its first point.
        let end = if i + 1 == count { first } else { element.end() };
        match element {
            Element::Line(_) => moves.push(Move::Line { to: end }),
            Element::Arc(a) => match options.moves {
                MoveKind::Arcs => moves.extend(exact_arc(a, end)),
                MoveKind::Lines => {
                    moves.extend(lines_through(&arc_polygon(a, at, end, scrap_left, options)))
                }
            },
        }
        at = end;
    }
    (first, moves)
}

/// An arc as arc moves of equal sweep, each below 180°, the last ending at `end`.
fn exact_arc(a: &ArcSegment, end: Point) -> Vec<Move> {
    let pieces = (a.sweep.abs() / PI).floor() as usize + 1;
    (1..=pieces)
        .map(|k| Move::Arc {
            to: if k == pieces {
                end
            } else {
                a.point_at(k as f64 / pieces as f64)
            },
            centre: a.centre,
            ccw: a.sweep > 0.0,
        })
        .collect()
}

/// The band polygon of a contour arc from `from` to `to` (its ends), built counter-clockwise
/// and reversed for a clockwise arc. With `scrap_left` the scrap is on the left of travel:
/// inside the circle for a counter-clockwise arc, outside for a clockwise one; otherwise on the
/// right.
fn arc_polygon(
    a: &ArcSegment,
    from: Point,
    to: Point,
    scrap_left: bool,
    options: &FitOptions,
) -> Vec<Point> {
    let curve = CircleCurve {
        centre: a.centre,
        radius: a.radius,
    };
    let ccw = a.sweep > 0.0;
    let band = Band::new(
        options.tolerance,
        options.scrap_side_only,
        ccw == scrap_left,
        a.radius,
    );
    let forward = if ccw { *a } else { a.reversed() };
    let (p, q) = if ccw { (from, to) } else { (to, from) };
    let mut points = lines::band_polygon(
        &curve,
        band,
        forward.start_angle,
        forward.start_angle + forward.sweep,
        p,
        q,
    );
    if !ccw {
        points.reverse();
    }
    points
}

/// Straight moves through `points` after the first.
fn lines_through(points: &[Point]) -> Vec<Move> {
    points.iter().skip(1).map(|&to| Move::Line { to }).collect()
}

/// The inscribed polygon of the parallel curve `O_d(t) = P(t) − d N(t)` of `e` (inside for
/// `d > 0`, outside for `d < 0`), counter-clockwise from anomaly `start`, vertices on the curve,
/// chosen greedily: from each vertex the next is the farthest along the curve whose chord stays
/// within `tolerance` of the arc it cuts off. This is the usual "chord tolerance" construction
/// (count ≈ ∫ √(κ/8ε) ds), kept for comparison with published counts; [`fit_cut`] uses band
/// polygons, which need about 1/√2 as many moves for the same two-sided tolerance.
///
/// The curve is convex when `d < b²/a` (its tangent turns with the ellipse's, `O′ = P′(1 − dκ)`),
/// so each chord's deviation is the largest distance of the arc from the chord's line, found by
/// golden-section search, and grows with the chord.
pub fn flatten_ellipse_offset(e: &Ellipse, d: f64, start: f64, tolerance: f64) -> Vec<Point> {
    let curve = |t: f64| e.inward_offset_point(t, d);
    let target = tolerance * TARGET_SHARE;
    let end = start + TAU;
    let mut t0 = start;
    let mut points = vec![curve(start)];
    while t0 < end {
        let hi = (t0 + FRAC_PI_2).min(end);
        let t1 = if chord_deviation(&curve, t0, hi) <= target {
            hi
        } else {
            let (mut lo, mut hi) = (t0, hi);
            for _ in 0..60 {
                let mid = 0.5 * (lo + hi);
                if chord_deviation(&curve, t0, mid) <= target {
                    lo = mid;
                } else {
                    hi = mid;
                }
            }
            lo
        };
        // A chord too short to advance would mean a tolerance below f64 resolution, which
        // MIN_TOLERANCE rules out; guard anyway so the loop always ends.
        let t1 = if t1 <= t0 { (t0 + 1e-6).min(end) } else { t1 };
        points.push(if t1 >= end { points[0] } else { curve(t1) });
        t0 = t1;
    }
    points
}

/// Largest distance of the curve between `t0` and `t1` from the chord's line (golden-section
/// search; the distance is unimodal on a convex arc turning less than π).
fn chord_deviation(curve: &impl Fn(f64) -> Point, t0: f64, t1: f64) -> f64 {
    let (p, q) = (curve(t0), curve(t1));
    let Some(n) = (q - p).normalized().map(|v| v.perp()) else {
        return 0.0;
    };
    let (least, _) = crate::geom::search::golden_min(&|t: f64| -n.dot(curve(t) - p).abs(), t0, t1);
    -least
}
