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

pub mod leads;
pub mod offset;
pub mod pocket;
pub mod tabs;

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
    /// `Inside` for a hole or pocket, `Outside` for a boss.
    pub side: CutSide,
    /// Clear the whole inside (a pocket), not just the edge; only with `Inside`.
    pub pocket: bool,
}

/// Settings for planning.
#[derive(Debug, Clone, PartialEq)]
pub struct PlanOptions {
    /// Cutter diameter (mm): the tool on a mill or router, the kerf width on a thermal or
    /// waterjet table.
    pub tool_diameter: f64,
    /// How the tool gets onto and off each contour.
    pub leads: LeadOptions,
    /// Climb or conventional (mills; thermal cuts keep the usual direction, which is the climb
    /// sense).
    pub direction: Direction,
    /// Tabs (micro-joints) on the outline, if any.
    pub tabs: Option<TabOptions>,
    /// Mills and routers: leave this much (mm, radial) for a finishing pass at full depth; the
    /// roughing cut runs at the tool radius plus this allowance. `None`: no finishing pass.
    pub finish_allowance: Option<f64>,
    /// Pockets: the distance between clearing rings (mm), at most the tool diameter.
    pub pocket_stepover: f64,
}

impl PlanOptions {
    /// The plan of earlier versions: a straight move from the plunge point to the path, no
    /// overcut or lead-out, climb direction, no tabs, no finishing pass, pockets cleared at 40 %
    /// of the tool diameter (common practice: 30–50 %).
    pub fn plain(tool_diameter: f64) -> Self {
        PlanOptions {
            tool_diameter,
            leads: LeadOptions::STRAIGHT,
            direction: Direction::Climb,
            tabs: None,
            finish_allowance: None,
            pocket_stepover: 0.4 * tool_diameter,
        }
    }
}

/// The shape of a lead-in (and of the lead-out, mirrored).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum LeadKind {
    /// A straight move from the plunge or pierce point to the path's start.
    Straight,
    /// A straight lead along the path's normal, `length` long.
    Line,
    /// A quarter-circle arc of `radius`, tangent to the path at its start.
    Arc,
    /// A straight line `length` long, then a quarter-circle arc of `radius` tangent to both.
    LineArc,
}

/// Lead geometry: how the tool reaches and leaves the path, in the scrap.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct LeadOptions {
    pub kind: LeadKind,
    /// The straight part (mm).
    pub length: f64,
    /// The arc part's radius (mm).
    pub radius: f64,
    /// How far past the start the path is cut again before leaving (mm, zero or more).
    pub overcut: f64,
    /// Whether to leave by a lead-out (the lead-in's shape, mirrored) or stop on the path.
    pub lead_out: bool,
}

impl LeadOptions {
    /// A straight move in, no overcut, no lead-out.
    pub const STRAIGHT: LeadOptions = LeadOptions {
        kind: LeadKind::Straight,
        length: 0.0,
        radius: 0.0,
        overcut: 0.0,
        lead_out: false,
    };
}

/// Which way the tool travels relative to the spindle's rotation (clockwise spindle, M3).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum Direction {
    /// Tool on the left of travel, scrap on the left: holes counter-clockwise, outlines
    /// clockwise (NISTIR 6556 App. B.2.1).
    Climb,
    /// The other way round: for machines with backlash or scaly stock.
    Conventional,
}

/// Where tabs go and how big they are.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct TabOptions {
    /// How many tabs per outline; when `None`, `spacing` decides.
    pub count: Option<usize>,
    /// The distance between tabs along the path (mm), used when `count` is `None`.
    pub spacing: f64,
    /// Length of each tab along the path (mm), measured between the tool's edges.
    pub width: f64,
    /// Mills and routers: the tab's height above the floor of the cut (mm). Thermal and waterjet
    /// tabs are gaps in the cut and have no height.
    pub height: f64,
}

/// A stretch of a cut left uncut: raised to the tab height on a mill or router, the beam or jet
/// off on the other kinds.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Tab {
    /// The tab's middle as a share of the path's length from its start (0 ≤ at < 1).
    pub at: f64,
    /// The length along the tool-centre path (mm) over which the tool does not cut: the tab's
    /// width plus the tool's diameter.
    pub length: f64,
}

/// The finished edge a cut makes: what leads, pierces and clearing moves must keep away from.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub enum Edge {
    Ellipse(Ellipse),
    Contour(Contour),
}

impl Edge {
    /// The distance from `p` to the edge (mm).
    pub fn distance_to(&self, p: Point) -> f64 {
        match self {
            Edge::Ellipse(e) => e.distance_to(p).0,
            Edge::Contour(c) => c.distance_to(p),
        }
    }

    /// Whether `p` is inside the closed edge.
    pub fn contains(&self, p: Point) -> bool {
        match self {
            Edge::Ellipse(e) => e.contains(p),
            Edge::Contour(c) => c.contains(p),
        }
    }
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
    /// Where the tool enters the material (in the scrap).
    pub plunge: Point,
    /// Pockets: the clearing rings, innermost first, cut before the lead-in. The tool feeds
    /// straight from the plunge point to the first ring's start and from each ring's end to the
    /// next ring's start.
    pub clearing: Vec<ExactPath>,
    /// Exact moves from the plunge point (or the last clearing ring's end) to the path's start;
    /// empty for a straight move.
    pub lead_in: Vec<Element>,
    /// How far past the start the path is cut again after closing (mm).
    pub overcut: f64,
    /// Exact moves from the end of the overcut into the scrap; empty for none.
    pub lead_out: Vec<Element>,
    /// Stretches left uncut.
    pub tabs: Vec<Tab>,
    /// A finishing cut: made once, at the full depth, after the roughing passes.
    pub full_depth_only: bool,
    /// The finished edge this cut makes.
    pub edge: Edge,
    /// How far the tool centre may wander from the plunge point in every direction without
    /// touching the finished edge (mm): room for a helical entry. Zero when there is none.
    pub entry_room: f64,
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
        PlannedCut::new(
            name,
            kind,
            if outside {
                CutSide::Outside
            } else {
                CutSide::Inside
            },
            ExactPath::EllipseParallel {
                ellipse,
                inset,
                start: 0.0,
                clockwise: outside,
            },
            if outside {
                ellipse.center() + axis * (ellipse.a() - 2.0 * inset)
            } else {
                ellipse.center()
            },
            Edge::Ellipse(ellipse),
        )
        .with_entry_room(inset.abs())
    }

    /// A cut along `path` entered at `plunge` by a straight move, making `edge`: no clearing,
    /// leads, overcut or tabs, every pass, no entry room (see [`PlannedCut::with_entry_room`]).
    pub fn new(
        name: &str,
        kind: FeatureKind,
        side: CutSide,
        path: ExactPath,
        plunge: Point,
        edge: Edge,
    ) -> Self {
        PlannedCut {
            name: name.to_string(),
            kind,
            side,
            path,
            plunge,
            clearing: Vec::new(),
            lead_in: Vec::new(),
            overcut: 0.0,
            lead_out: Vec::new(),
            tabs: Vec::new(),
            full_depth_only: false,
            edge,
            entry_room: 0.0,
        }
    }

    /// Sets `entry_room` from the edge and the tool radius `r`: the plunge point's distance from
    /// the finished edge less the tool radius, if the plunge point is on the scrap side.
    pub fn with_entry_room(mut self, r: f64) -> Self {
        let scrap_side = match self.side {
            CutSide::Inside => self.edge.contains(self.plunge),
            CutSide::Outside => !self.edge.contains(self.plunge),
        };
        self.entry_room = if scrap_side {
            (self.edge.distance_to(self.plunge) - r).max(0.0)
        } else {
            0.0
        };
        self
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
            CutSide::Inside if o.pocket => {
                let mut cut = plan_ellipse(&o.name, FeatureKind::Pocket, &o.ellipse, r, d)?;
                cut.clearing = pocket::clearing_rings(&o.name, &o.ellipse, r, opts)?;
                cut
            }
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
        if let (Some(tabs), Some(last)) = (&opts.tabs, cuts.last_mut()) {
            last.tabs = tabs::place_tabs(last, tabs, opts, &mut warnings)?;
        }
    }
    leads::add_leads(&mut cuts, opts, &mut warnings)?;
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
