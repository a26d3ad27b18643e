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
    /// An elliptical pocket: cleared to the depth by rings, then finished along the edge.
    Pocket,
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

mod cut;
mod error;
mod finishing;
mod layout;
mod lead_room;
mod lead_shape;
mod leads;
mod offset;
mod options;
mod order;
mod paths;
pub mod pocket;
mod tabs;
pub mod zero;

pub use cut::{OwnSettings, PlannedCut, Tab};
pub use error::PlanError;
pub use layout::{EDGE_SAMPLES, LayoutError, Twin, check_layout};
pub use options::{
    Direction, LeadKind, LeadOptions, POCKET_STEPOVER_PER_DIAMETER, PlanOptions, TabOptions,
};
pub use zero::{PlacedZero, WorkZero, ZERO_WORDS, ZeroError};

use crate::chain::{InnerShape, Part};
use crate::geom::Ellipse;
use finishing::add_finishing_cuts;
use paths::{plan_contour, plan_ellipse, plan_ellipse_boss};

/// The largest share of the tool radius by which a gouge check may be missed: the path is
/// refused when it comes closer than `(1 − GOUGE_MARGIN) · r` to an edge it must not cut.
pub const GOUGE_MARGIN: f64 = 1e-6;

/// A solved elliptical feature to cut.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Opening {
    /// The feature's name, e.g. `bay 1` or a name from the job file.
    pub name: String,
    pub ellipse: Ellipse,
    /// `Inside` for a hole or pocket, `Outside` for a boss.
    pub side: CutSide,
    /// Clear the whole inside (a pocket), not just the edge; only with `Inside`.
    pub pocket: bool,
    /// The feature's own depth, passes and feeds, if it has them.
    pub own: OwnSettings,
}

/// The cuts in the order they run: every inner feature before the outline.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Plan {
    pub cuts: Vec<PlannedCut>,
    pub warnings: Vec<String>,
}

/// Plans every cut: the solved openings and the drawn holes inside (tool inside, climb milling
/// with a clockwise spindle, so counter-clockwise), then the outline outside (clockwise).
///
/// Direction: with the spindle turning clockwise (M3), the tool on the left of travel climb-mills
/// (NISTIR 6556 App. B.2.1; common practice prefers climb milling on rigid machines).
/// [`Direction::Conventional`] reverses every cut exactly ([`PlannedCut::reversed`]: holes
/// clockwise, outline and bosses counter-clockwise, plunge points unchanged) before tabs and
/// leads are placed, so that both follow the direction of travel.
///
/// Finishing pass (`opts.finish_allowance = Some(s)`, mills and routers): every cut becomes two,
/// "NAME roughing" on the parallel path at r + s in every depth pass, then NAME at r once at the
/// full depth (`full_depth_only`); tabs are kept on both, a pocket's clearing on the roughing cut
/// (see `add_finishing_cuts` in the source). Refused: an allowance that is not positive
/// ([`PlanError::BadFinishAllowance`]), one that puts the roughing path of an ellipse at or past
/// b²/a ([`PlanError::AllowanceTooBig`], naming the largest that fits) or a contour's offset out
/// of existence ([`PlanError::RoughingDoesNotFit`]).
pub fn plan_cuts(part: &Part, openings: &[Opening], opts: &PlanOptions) -> Result<Plan, PlanError> {
    let d = opts.tool_diameter;
    if !(d > 0.0 && d.is_finite()) {
        return Err(PlanError::BadTool(d));
    }
    if let Some(s) = opts.finish_allowance
        && !(s > 0.0 && s.is_finite())
    {
        return Err(PlanError::BadFinishAllowance(s));
    }
    let r = d / 2.0;
    let mut warnings = Vec::new();
    let mut inner = Vec::new();
    for o in openings {
        inner.push(
            match o.side {
                CutSide::Inside if o.pocket => {
                    let mut cut = plan_ellipse(&o.name, FeatureKind::Pocket, &o.ellipse, r, d)?;
                    cut.clearing =
                        pocket::clearing_rings(&o.name, &o.ellipse, r, opts, &mut warnings)?;
                    cut
                }
                CutSide::Inside => plan_ellipse(&o.name, FeatureKind::Opening, &o.ellipse, r, d)?,
                CutSide::Outside => plan_ellipse_boss(&o.name, &o.ellipse, r),
            }
            .with_own(o.own),
        );
    }
    for h in &part.holes {
        let cut = match &h.shape {
            InnerShape::Ellipse(e) => plan_ellipse(&h.name, FeatureKind::Hole, e, r, d)?,
            InnerShape::Contour(c) => {
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
    // The outline is cut last (inner cuts first, so the part stays held): planned first, so
    // that the order of the others can end near where it starts.
    let outline_cut = match &part.outline {
        Some(outline) => {
            let cw = if outline.is_ccw() {
                outline.reversed()
            } else {
                outline.clone()
            };
            Some(plan_contour(
                "outline",
                FeatureKind::Outline,
                CutSide::Outside,
                &cw,
                r,
                d,
                &mut warnings,
            )?)
        }
        None => None,
    };
    let mut cuts: Vec<PlannedCut> =
        order::order_cuts(inner, outline_cut.as_ref().map(|c| c.plunge))
            .into_iter()
            .map(|c| directed(c, opts.direction))
            .collect();
    if let Some(outline_cut) = outline_cut {
        cuts.push(directed(outline_cut, opts.direction));
        if let (Some(tabs), Some(last)) = (&opts.tabs, cuts.last_mut()) {
            last.tabs = tabs::place_tabs(last, tabs, opts, &mut warnings)?;
        }
    }
    if let Some(s) = opts.finish_allowance {
        cuts = add_finishing_cuts(cuts, s, r, d)?;
    }
    leads::add_leads(&mut cuts, opts, &mut warnings)?;
    Ok(Plan { cuts, warnings })
}

/// The cut in `direction`: as planned for climb, reversed for conventional.
fn directed(cut: PlannedCut, direction: Direction) -> PlannedCut {
    match direction {
        Direction::Climb => cut,
        Direction::Conventional => cut.reversed(),
    }
}
