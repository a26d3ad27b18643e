//! The finishing pass: every cut split into a roughing cut at the tool radius plus the allowance
//! and the finishing cut at the tool radius, once at full depth.

use super::paths::plan_contour;
use super::{CutSide, GOUGE_MARGIN, PlanError, PlannedCut, Tab};
use crate::geom::{Contour, Edge, Element, ExactPath, OffsetTooDeep, ParallelCurve, Point};

/// Splits every cut into a roughing cut and a finishing cut, in that order, for a finishing
/// allowance `s` (mm, radial; common practice 0.1–0.5 mm, docs/sources.md P4.3) with a
/// tool of radius `r` and diameter `d`:
///
/// * the roughing cut, named "NAME roughing", runs on the parallel path at `r + s` from the
///   finished edge (an ellipse's parallel curve, a contour's exact offset), in every depth pass,
///   in the same direction and from the same start anomaly as the finishing cut, and leaves `s`
///   of stock on the edge (`allowance = s`). Its plunge point and entry room are planned for
///   `r + s`, so an entry cannot cut into the stock. Inside an ellipse `r + s` must stay below
///   b²/a (less [`GOUGE_MARGIN`]), else [`PlanError::AllowanceTooBig`] names the largest
///   allowance that fits; a contour whose offset at `r + s` fails gives
///   [`PlanError::RoughingDoesNotFit`]. A pocket's clearing rings stay on the roughing cut, less
///   any ring closer to the edge than `r + s` (the roughing contour takes its place; the rings
///   further in stay no further apart than before, so no island is left);
/// * the finishing cut is the cut as planned at `r`, made once at the full depth
///   (`full_depth_only`), without clearing.
///
/// Tabs placed on a cut are kept on both: each tab's middle is carried to the nearest point of
/// the roughing contour, with the same length.
pub(super) fn add_finishing_cuts(
    cuts: Vec<PlannedCut>,
    s: f64,
    r: f64,
    d: f64,
) -> Result<Vec<PlannedCut>, PlanError> {
    let mut out = Vec::with_capacity(2 * cuts.len());
    for mut finish in cuts {
        let rough = roughing_cut(&finish, s, r, d)?;
        finish.full_depth_only = true;
        finish.clearing.clear();
        finish.allowance = 0.0;
        out.push(rough);
        out.push(finish);
    }
    Ok(out)
}

/// The roughing cut of `finish` at `r + s` from its edge (see [`add_finishing_cuts`]).
fn roughing_cut(finish: &PlannedCut, s: f64, r: f64, d: f64) -> Result<PlannedCut, PlanError> {
    let name = format!("{} roughing", finish.name);
    let rr = r + s;
    let mut rough = match &finish.edge {
        Edge::Ellipse(e) => {
            if finish.side == CutSide::Inside {
                if let Err(OffsetTooDeep { limit, .. }) = ParallelCurve::new(*e, rr, GOUGE_MARGIN) {
                    let largest = limit * (1.0 - GOUGE_MARGIN) - r;
                    // Rounded down to 0.1 µm, so that the allowance named fits.
                    let shown = (largest * 1e4).floor() / 1e4;
                    let advice = if shown > 0.0 && shown < largest {
                        format!("Use an allowance of at most {shown:.4} mm")
                    } else {
                        "No finishing allowance fits with this tool; use a smaller tool for a \
                         finishing pass"
                            .to_string()
                    };
                    return Err(PlanError::AllowanceTooBig {
                        feature: finish.name.clone(),
                        allowance: s,
                        inset: rr,
                        limit,
                        advice,
                    });
                }
                PlannedCut::around_ellipse(&name, finish.kind, *e, rr)
            } else {
                PlannedCut::around_ellipse(&name, finish.kind, *e, -rr)
            }
        }
        Edge::Contour(drawn) => {
            // Inside-corner warnings were given for the finishing cut already.
            let mut ignored = Vec::new();
            plan_contour(&name, finish.kind, finish.side, drawn, rr, d, &mut ignored).map_err(
                |e| {
                    let detail = match e {
                        PlanError::ArcTooTight { radius, x, y, .. } => {
                            format!("at an arc of radius {radius:.4} mm near ({x:.3}, {y:.3}) mm")
                        }
                        PlanError::ToolDoesNotFit { x, y, .. } => {
                            format!("near ({x:.3}, {y:.3}) mm")
                        }
                        other => format!("({other})"),
                    };
                    PlanError::RoughingDoesNotFit {
                        feature: finish.name.clone(),
                        allowance: s,
                        distance: rr,
                        detail,
                    }
                },
            )?
        }
    };
    if !finish.scrap_left {
        rough = rough.reversed();
    }
    rough.tabs = tabs_moved(&finish.tabs, &finish.path, &rough.path);
    rough.clearing = finish
        .clearing
        .iter()
        .filter(|ring| ring_distance(ring, &finish.edge) >= rr * (1.0 - GOUGE_MARGIN))
        .cloned()
        .collect();
    rough.allowance = s;
    rough.own = finish.own;
    Ok(rough)
}

/// The smallest distance of a clearing ring from the edge: its inset for a parallel curve
/// (every point of a regular parallel curve lies at that distance), the nearest vertex for a
/// contour (rings of pieces with their vertices on the level set).
fn ring_distance(ring: &ExactPath, edge: &Edge) -> f64 {
    match ring {
        ExactPath::EllipseParallel { inset, .. } => inset.abs(),
        ExactPath::Contour(c) => c
            .elements()
            .iter()
            .map(|e| edge.distance_to(e.start()))
            .fold(f64::INFINITY, f64::min),
    }
}

/// `tabs` placed on contour `from`, carried to contour `to`: each tab's middle moved to the
/// nearest point of `to`, its length kept. Shares on an ellipse path are kept as they are.
fn tabs_moved(tabs: &[Tab], from: &ExactPath, to: &ExactPath) -> Vec<Tab> {
    match (from, to) {
        (ExactPath::Contour(a), ExactPath::Contour(b)) => tabs
            .iter()
            .map(|t| Tab {
                at: share_nearest(b, point_at_share(a, t.at)).rem_euclid(1.0),
                length: t.length,
            })
            .collect(),
        _ => tabs.to_vec(),
    }
}

/// The point at `share` of the contour's length from its start.
fn point_at_share(c: &Contour, share: f64) -> Point {
    let total: f64 = c.elements().iter().map(Element::length).sum();
    let mut left = share.rem_euclid(1.0) * total;
    for e in c.elements() {
        let len = e.length();
        if left <= len && len > 0.0 {
            return e.point_at(left / len);
        }
        left -= len;
    }
    c.start_point().unwrap_or(Point::ORIGIN)
}

/// The share of the contour's length from its start to the point of the contour nearest `p`.
fn share_nearest(c: &Contour, p: Point) -> f64 {
    let total: f64 = c.elements().iter().map(Element::length).sum();
    if total <= 0.0 {
        return 0.0;
    }
    let mut walked = 0.0;
    let mut best = (f64::INFINITY, 0.0);
    for e in c.elements() {
        let len = e.length();
        let t = match e {
            Element::Line(s) => {
                let v = s.end - s.start;
                let vv = v.dot(v);
                if vv > 0.0 {
                    ((p - s.start).dot(v) / vv).clamp(0.0, 1.0)
                } else {
                    0.0
                }
            }
            Element::Arc(a) => {
                let sweep = a.sweep.abs();
                let angle = (p - a.centre).angle();
                let rel = if a.sweep >= 0.0 {
                    (angle - a.start_angle).rem_euclid(std::f64::consts::TAU)
                } else {
                    (a.start_angle - angle).rem_euclid(std::f64::consts::TAU)
                };
                if sweep <= 0.0 {
                    0.0
                } else if rel <= sweep {
                    rel / sweep
                } else if p.distance(a.start_point()) <= p.distance(a.end_point()) {
                    0.0
                } else {
                    1.0
                }
            }
        };
        let dist = p.distance(e.point_at(t));
        if dist < best.0 {
            best = (dist, (walked + t * len) / total);
        }
        walked += len;
    }
    best.1
}
