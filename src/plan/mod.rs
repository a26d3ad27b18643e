//! Stage 4, plan: turns the part and the solved ellipses into exact tool-centre paths: which side
//! the tool runs on, the parallel curve at the tool radius, where it enters, and in what order.

use serde::Serialize;

/// What a cut makes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum FeatureKind {
    /// An elliptical opening solved from a bay or from constraints, cut as a hole.
    Opening,
    /// An elliptical boss: the ellipse is kept, the tool runs outside it.
    Boss,
    /// A hole drawn in the part (circle, closed contour or ellipse).
    Hole,
    /// The part's outer outline.
    Outline,
}

/// Which side of the drawn edge the tool centre runs on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum CutSide {
    /// Inside the closed shape: holes and openings.
    Inside,
    /// Outside the closed shape: the part outline, bosses.
    Outside,
}

pub mod offset;

use crate::chain::{Contour, Element, HoleShape, Part};
use crate::geom::{Ellipse, Point};

/// The largest share of the tool radius by which a gouge check may be missed: the path is
/// refused when it comes closer than `(1 − GOUGE_MARGIN) · r` to an edge it must not cut.
pub const GOUGE_MARGIN: f64 = 1e-6;

/// A solved elliptical feature to cut.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Opening {
    /// The feature's name, e.g. `bay 1` or a name from the job file.
    pub name: String,
    pub ellipse: Ellipse,
    /// `Inside` for a hole, `Outside` for a boss.
    pub side: CutSide,
}

/// Settings for planning.
#[derive(Debug, Clone, PartialEq)]
pub struct PlanOptions {
    /// Cutter diameter (mm).
    pub tool_diameter: f64,
}

/// An exact tool-centre path.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub enum ExactPath {
    /// The parallel curve `O_d(t) = P(t) − d N(t)` of `ellipse` at signed distance `inset`
    /// (positive inside, negative outside), travelled once from anomaly `start`,
    /// counter-clockwise unless `clockwise`.
    EllipseParallel {
        ellipse: Ellipse,
        inset: f64,
        start: f64,
        clockwise: bool,
    },
    /// A closed contour of lines and arcs that is itself the tool-centre path.
    Contour(Contour),
}

impl ExactPath {
    /// The point where the cut starts and ends.
    pub fn start_point(&self) -> Point {
        match self {
            ExactPath::EllipseParallel {
                ellipse,
                inset,
                start,
                ..
            } => ellipse.inward_offset_point(*start, *inset),
            ExactPath::Contour(c) => c.start_point().unwrap_or(Point::ORIGIN),
        }
    }
}

/// One feature's planned cut.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PlannedCut {
    pub name: String,
    pub kind: FeatureKind,
    pub side: CutSide,
    /// The tool-centre path.
    pub path: ExactPath,
    /// Where the tool enters the material (in the scrap); it then moves straight to the path's
    /// start.
    pub plunge: Point,
}

impl PlannedCut {
    /// The cut along the parallel curve of `ellipse` at signed distance `inset` from it (the tool
    /// radius; positive inside, negative outside), with the scrap on the left of travel: inside
    /// counter-clockwise, entered from the centre (at least b ≥ b²/a > r from the edge, and the
    /// move out along the major axis stays inside); outside clockwise, entered from one more tool
    /// radius out along the major axis. Checks nothing: [`plan_cuts`] refuses an inset that
    /// would gouge.
    pub fn around_ellipse(name: &str, kind: FeatureKind, ellipse: Ellipse, inset: f64) -> Self {
        let outside = inset < 0.0;
        let axis = crate::geom::Vec2::from_angle(ellipse.angle());
        PlannedCut {
            name: name.to_string(),
            kind,
            side: if outside {
                CutSide::Outside
            } else {
                CutSide::Inside
            },
            path: ExactPath::EllipseParallel {
                ellipse,
                inset,
                start: 0.0,
                clockwise: outside,
            },
            plunge: if outside {
                ellipse.center() + axis * (ellipse.a() - 2.0 * inset)
            } else {
                ellipse.center()
            },
        }
    }
}

/// The cuts in the order they run: every inner feature before the outline.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Plan {
    pub cuts: Vec<PlannedCut>,
    pub warnings: Vec<String>,
}

/// Why a cut could not be planned.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PlanError {
    #[error("the tool diameter must be a positive number of millimetres (got {0})")]
    BadTool(f64),
    #[error(
        "{feature}: a {diameter} mm tool would gouge the ellipse: its radius {radius} mm is not \
         below the smallest radius of curvature b²/a = {limit:.4} mm (at the ends of the major \
         axis). Use a tool smaller than {max_diameter:.3} mm in diameter"
    )]
    EllipseTooTight {
        feature: String,
        diameter: f64,
        radius: f64,
        limit: f64,
        max_diameter: f64,
    },
    #[error(
        "{feature}: an arc of radius {radius:.4} mm near ({x:.3}, {y:.3}) is tighter than the \
         {diameter} mm tool; use a tool smaller than {max_diameter:.3} mm in diameter"
    )]
    ArcTooTight {
        feature: String,
        radius: f64,
        x: f64,
        y: f64,
        diameter: f64,
        max_diameter: f64,
    },
    #[error(
        "{feature}: the {diameter} mm tool does not fit near ({x:.3}, {y:.3}) mm (a narrow \
         stretch or a short edge); use a smaller tool or widen the feature"
    )]
    ToolDoesNotFit {
        feature: String,
        diameter: f64,
        x: f64,
        y: f64,
    },
}

/// Plans every cut: the solved openings and the drawn holes inside (tool inside, climb milling
/// with a clockwise spindle, so counter-clockwise), then the outline outside (clockwise).
///
/// Direction: with the spindle turning clockwise (M3), the tool on the left of travel climb-mills
/// (NISTIR 6556 App. B.2.1; common practice prefers climb milling on rigid machines).
pub fn plan_cuts(part: &Part, openings: &[Opening], opts: &PlanOptions) -> Result<Plan, PlanError> {
    let d = opts.tool_diameter;
    if !(d > 0.0 && d.is_finite()) {
        return Err(PlanError::BadTool(d));
    }
    let r = d / 2.0;
    let mut warnings = Vec::new();
    let mut inner = Vec::new();
    for o in openings {
        inner.push(match o.side {
            CutSide::Inside => plan_ellipse(&o.name, FeatureKind::Opening, &o.ellipse, r, d)?,
            CutSide::Outside => plan_ellipse_boss(&o.name, &o.ellipse, r),
        });
    }
    for h in &part.holes {
        let cut = match &h.shape {
            HoleShape::Ellipse(e) => plan_ellipse(&h.name, FeatureKind::Hole, e, r, d)?,
            HoleShape::Contour(c) => {
                let ccw = if c.is_ccw() { c.clone() } else { c.reversed() };
                plan_contour(
                    &h.name,
                    FeatureKind::Hole,
                    CutSide::Inside,
                    &ccw,
                    r,
                    d,
                    &mut warnings,
                )?
            }
        };
        inner.push(cut);
    }
    let mut cuts = order_nearest_first(inner);
    if let Some(outline) = &part.outline {
        let cw = if outline.is_ccw() {
            outline.reversed()
        } else {
            outline.clone()
        };
        cuts.push(plan_contour(
            "outline",
            FeatureKind::Outline,
            CutSide::Outside,
            &cw,
            r,
            d,
            &mut warnings,
        )?);
    }
    Ok(Plan { cuts, warnings })
}

/// The inside cut of an ellipse: the inward parallel curve at the tool radius, entered from the
/// centre along the major axis.
fn plan_ellipse(
    name: &str,
    kind: FeatureKind,
    e: &Ellipse,
    r: f64,
    d: f64,
) -> Result<PlannedCut, PlanError> {
    let limit = e.min_radius_of_curvature();
    if r >= limit * (1.0 - GOUGE_MARGIN) {
        return Err(PlanError::EllipseTooTight {
            feature: name.to_string(),
            diameter: d,
            radius: r,
            limit,
            max_diameter: 2.0 * limit,
        });
    }
    Ok(PlannedCut::around_ellipse(name, kind, *e, r))
}

/// The outside cut of an elliptical boss: the outward parallel curve at the tool radius (always
/// regular), clockwise (climb milling with a clockwise spindle), entered from one more tool radius
/// out along the major axis.
fn plan_ellipse_boss(name: &str, e: &Ellipse, r: f64) -> PlannedCut {
    PlannedCut::around_ellipse(name, FeatureKind::Boss, *e, -r)
}

/// A cut along a drawn contour with the tool on its left (callers orient the contour so that
/// the left is the scrap side).
fn plan_contour(
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
        Some((center, _)) if side == CutSide::Inside => center,
        _ => {
            // One tool radius further into the scrap, along the normal at the start, if the tool
            // clears the drawn edge there; otherwise on the path itself.
            let normal = path
                .elements
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
    Ok(PlannedCut {
        name: name.to_string(),
        kind,
        side,
        path: ExactPath::Contour(path),
        plunge,
    })
}

/// The centre and radius when the contour is one full circle.
fn circle_of(c: &Contour) -> Option<(Point, f64)> {
    match c.elements.as_slice() {
        [Element::Arc(a)] if a.is_full_circle() => Some((a.center, a.radius)),
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
    for e in &path.elements {
        for k in 0..64 {
            let p = match e {
                Element::Line(s) => s.point_at(k as f64 / 64.0),
                Element::Arc(a) => a.point_at(k as f64 / 64.0),
            };
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

/// Orders cuts by nearest neighbour, starting nearest to the work zero.
fn order_nearest_first(mut cuts: Vec<PlannedCut>) -> Vec<PlannedCut> {
    let mut out = Vec::with_capacity(cuts.len());
    let mut here = Point::ORIGIN;
    while !cuts.is_empty() {
        let (i, _) = cuts
            .iter()
            .enumerate()
            .map(|(i, c)| (i, c.plunge.distance(here)))
            .min_by(|a, b| a.1.total_cmp(&b.1))
            .unwrap_or((0, 0.0));
        let c = cuts.remove(i);
        here = c.path.start_point();
        out.push(c);
    }
    out
}
