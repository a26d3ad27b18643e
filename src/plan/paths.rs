//! The tool-centre path of each feature: an ellipse's parallel curve at the tool radius, or a
//! drawn contour's exact offset, with its plunge point.

use super::{CutSide, FeatureKind, GOUGE_MARGIN, PlanError, PlannedCut, offset};
use crate::geom::{Contour, Edge, Element, Ellipse, ExactPath, ParallelCurve, Point};

/// The inside cut of an ellipse: the inward parallel curve at the tool radius, entered from the
/// centre along the major axis.
pub(super) fn plan_ellipse(
    name: &str,
    kind: FeatureKind,
    e: &Ellipse,
    r: f64,
    d: f64,
) -> Result<PlannedCut, PlanError> {
    let curve =
        ParallelCurve::new(*e, r, GOUGE_MARGIN).map_err(|too_deep| PlanError::EllipseTooTight {
            feature: name.to_string(),
            diameter: d,
            radius: r,
            limit: too_deep.limit,
            max_diameter: 2.0 * too_deep.limit,
        })?;
    Ok(PlannedCut::around_ellipse(
        name,
        kind,
        *curve.ellipse(),
        curve.inset(),
    ))
}

/// The outside cut of an elliptical boss: the outward parallel curve at the tool radius (always
/// regular), clockwise (climb milling with a clockwise spindle), entered from one more tool radius
/// out along the major axis.
pub(super) fn plan_ellipse_boss(name: &str, e: &Ellipse, r: f64) -> PlannedCut {
    PlannedCut::around_ellipse(name, FeatureKind::Boss, *e, -r)
}

/// A cut along a drawn contour with the tool on its left (callers orient the contour so that
/// the left is the scrap side).
pub(super) fn plan_contour(
    name: &str,
    kind: FeatureKind,
    side: CutSide,
    contour: &Contour,
    r: f64,
    d: f64,
    warnings: &mut Vec<String>,
) -> Result<PlannedCut, PlanError> {
    let offset = offset::offset_left(contour, r).map_err(|e| match e {
        offset::OffsetError::ArcTooTight { at, radius } => PlanError::ArcTooTight {
            feature: name.to_string(),
            radius,
            x: at.x,
            y: at.y,
            diameter: d,
            max_diameter: 2.0 * radius,
        },
        offset::OffsetError::PieceVanishes { at } => PlanError::ToolDoesNotFit {
            feature: name.to_string(),
            diameter: d,
            x: at.x,
            y: at.y,
        },
        offset::OffsetError::Unclosed(error) => PlanError::BrokenPath {
            feature: name.to_string(),
            error,
        },
    })?;
    if !offset.inside_corners.is_empty() {
        let list: Vec<String> = offset
            .inside_corners
            .iter()
            .map(|p| format!("({:.3}, {:.3})", p.x, p.y))
            .collect();
        warnings.push(format!(
            "{name}: {} sharp inside corner(s) keep the tool's {r} mm radius: {}",
            list.len(),
            list.join(", ")
        ));
    }
    check_clearance(name, &offset.contour, contour, r, d)?;
    let path = offset.contour;
    let start = path.start_point().unwrap_or(Point::ORIGIN);
    let plunge = match circle_of(contour) {
        Some((centre, _)) if side == CutSide::Inside => centre,
        _ => {
            // One tool radius further into the scrap, along the normal at the start, if the tool
            // clears the drawn edge there; otherwise on the path itself.
            let normal = path
                .elements()
                .first()
                .and_then(offset::start_left_normal)
                .unwrap_or_default();
            let candidate = start + normal * r;
            let clear = contour.distance_to(candidate) >= 2.0 * r * (1.0 - GOUGE_MARGIN);
            let on_scrap_side = match side {
                CutSide::Inside => contour.contains(candidate),
                CutSide::Outside => !contour.contains(candidate),
            };
            if clear && on_scrap_side {
                candidate
            } else {
                start
            }
        }
    };
    Ok(PlannedCut::new(
        name,
        kind,
        side,
        ExactPath::Contour(path),
        plunge,
        Edge::Contour(contour.clone()),
    )
    .with_entry_room(r))
}

/// The centre and radius when the contour is one full circle.
fn circle_of(c: &Contour) -> Option<(Point, f64)> {
    match c.elements() {
        [Element::Arc(a)] if a.is_full_circle() => Some((a.centre, a.radius)),
        _ => None,
    }
}

/// Refuses a tool-centre path that comes closer than the tool radius to the drawn edge anywhere
/// (a narrow neck the local corner trimming cannot see). Checks 64 points per piece.
fn check_clearance(
    name: &str,
    path: &Contour,
    drawn: &Contour,
    r: f64,
    d: f64,
) -> Result<(), PlanError> {
    for e in path.elements() {
        for k in 0..64 {
            let p = e.point_at(k as f64 / 64.0);
            if drawn.distance_to(p) < r * (1.0 - GOUGE_MARGIN) {
                return Err(PlanError::ToolDoesNotFit {
                    feature: name.to_string(),
                    diameter: d,
                    x: p.x,
                    y: p.y,
                });
            }
        }
    }
    Ok(())
}
