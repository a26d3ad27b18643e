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

use crate::chain::{Contour, Element, InnerShape, Part};
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
    /// Laser, plasma and waterjet (`Some`): the pierce point's least distance from every
    /// finished edge (mm; one kerf plus the pierce crater, docs/sources.md P4.3).
    /// Mills and routers (`None`): no pierce, but every lead arc must be wider than the tool
    /// (NISTIR 6556 App. B.3.1). See [`leads`].
    pub pierce_clearance: Option<f64>,
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
            pierce_clearance: None,
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

    /// The same path travelled the other way from the same start point (exact: the ellipse's
    /// parallel curve with the other sense, a contour's pieces in reverse order, each reversed).
    pub fn reversed(&self) -> ExactPath {
        match self {
            ExactPath::EllipseParallel {
                ellipse,
                inset,
                start,
                clockwise,
            } => ExactPath::EllipseParallel {
                ellipse: *ellipse,
                inset: *inset,
                start: *start,
                clockwise: !clockwise,
            },
            ExactPath::Contour(c) => ExactPath::Contour(c.reversed()),
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
    /// Whether the scrap lies on the left of travel (climb milling with a clockwise spindle,
    /// and the usual thermal direction: holes counter-clockwise, outline and bosses clockwise);
    /// `false` for a conventional cut, which runs the other way with the scrap on the right.
    /// Leads, one-sided fits and side measurements follow it.
    pub scrap_left: bool,
    /// Radial stock (mm) this cut leaves on the finished edge for a finishing cut that follows
    /// it: the finishing allowance on a roughing cut, 0 on a cut that makes the edge.
    pub allowance: f64,
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
            scrap_left: true,
            allowance: 0.0,
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

    /// The same cut travelled the other way, exactly: the path and the clearing rings reversed
    /// (each still starts and ends where it did), the scrap on the other side of travel, tabs
    /// kept where they are (their shares measured from the start the other way round). The plunge
    /// point, the edge and the entry room do not change. For cuts without leads (the planner
    /// reverses before [`leads::add_leads`]): leads, overcut and lead-out are not reversed.
    pub fn reversed(mut self) -> Self {
        self.path = self.path.reversed();
        self.clearing = self.clearing.iter().map(ExactPath::reversed).collect();
        self.scrap_left = !self.scrap_left;
        for t in &mut self.tabs {
            t.at = (1.0 - t.at).rem_euclid(1.0);
        }
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
    #[error("the {setting} {value} mm cannot be used: {hint}")]
    BadLead {
        setting: &'static str,
        value: f64,
        hint: &'static str,
    },
    #[error("{feature}: no room for a lead-in: {detail}")]
    NoRoomForLead { feature: String, detail: String },
    #[error(
        "the finishing allowance must be a positive number of millimetres (got {0}); common \
         practice is 0.1–0.5 mm of radial stock"
    )]
    BadFinishAllowance(f64),
    #[error(
        "{feature}: a finishing allowance of {allowance} mm is too big for this ellipse: the \
         roughing path runs at the tool radius plus the allowance, {inset} mm inside the edge, \
         which must stay below the smallest radius of curvature b²/a = {limit:.4} mm. {advice}"
    )]
    AllowanceTooBig {
        feature: String,
        allowance: f64,
        inset: f64,
        limit: f64,
        /// What to do: the largest allowance that fits, or a smaller tool.
        advice: String,
    },
    #[error(
        "{feature}: with a finishing allowance of {allowance} mm the roughing path ({distance} mm \
         from the edge: the tool radius plus the allowance) does not fit {detail}; use a smaller \
         allowance or a smaller tool"
    )]
    RoughingDoesNotFit {
        feature: String,
        allowance: f64,
        distance: f64,
        /// Where, e.g. `near (12.000, 3.500) mm`.
        detail: String,
    },
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
    #[error(
        "{feature}: a pocket stepover of {stepover} mm is {problem}; give a stepover \
         (--stepover) from {min} mm to {diameter} mm, the {diameter} mm tool's diameter (common \
         practice: 30–50 % of the diameter)"
    )]
    BadStepover {
        feature: String,
        stepover: f64,
        problem: &'static str,
        diameter: f64,
        min: f64,
    },
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
        inner.push(match o.side {
            CutSide::Inside if o.pocket => {
                let mut cut = plan_ellipse(&o.name, FeatureKind::Pocket, &o.ellipse, r, d)?;
                cut.clearing = pocket::clearing_rings(&o.name, &o.ellipse, r, opts, &mut warnings)?;
                cut
            }
            CutSide::Inside => plan_ellipse(&o.name, FeatureKind::Opening, &o.ellipse, r, d)?,
            CutSide::Outside => plan_ellipse_boss(&o.name, &o.ellipse, r),
        });
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
    let mut cuts: Vec<PlannedCut> = order_nearest_first(inner)
        .into_iter()
        .map(|c| directed(c, opts.direction))
        .collect();
    if let Some(outline) = &part.outline {
        let cw = if outline.is_ccw() {
            outline.reversed()
        } else {
            outline.clone()
        };
        let outline_cut = plan_contour(
            "outline",
            FeatureKind::Outline,
            CutSide::Outside,
            &cw,
            r,
            d,
            &mut warnings,
        )?;
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

/// The cut in `direction`: as planned for climb, reversed for conventional.
fn directed(cut: PlannedCut, direction: Direction) -> PlannedCut {
    match direction {
        Direction::Climb => cut,
        Direction::Conventional => cut.reversed(),
    }
}

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
fn add_finishing_cuts(
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
                let limit = e.min_radius_of_curvature();
                if rr >= limit * (1.0 - GOUGE_MARGIN) {
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
    Ok(rough)
}

/// The smallest distance of a clearing ring from the edge: its inset for a parallel curve
/// (every point of a regular parallel curve lies at that distance), the nearest vertex for a
/// contour (rings of pieces with their vertices on the level set).
fn ring_distance(ring: &ExactPath, edge: &Edge) -> f64 {
    match ring {
        ExactPath::EllipseParallel { inset, .. } => inset.abs(),
        ExactPath::Contour(c) => c
            .elements
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

fn element_point(e: &Element, t: f64) -> Point {
    match e {
        Element::Line(s) => s.point_at(t),
        Element::Arc(a) => a.point_at(t),
    }
}

/// The point at `share` of the contour's length from its start.
fn point_at_share(c: &Contour, share: f64) -> Point {
    let total: f64 = c.elements.iter().map(Element::length).sum();
    let mut left = share.rem_euclid(1.0) * total;
    for e in &c.elements {
        let len = e.length();
        if left <= len && len > 0.0 {
            return element_point(e, left / len);
        }
        left -= len;
    }
    c.start_point().unwrap_or(Point::ORIGIN)
}

/// The share of the contour's length from its start to the point of the contour nearest `p`.
fn share_nearest(c: &Contour, p: Point) -> f64 {
    let total: f64 = c.elements.iter().map(Element::length).sum();
    if total <= 0.0 {
        return 0.0;
    }
    let mut walked = 0.0;
    let mut best = (f64::INFINITY, 0.0);
    for e in &c.elements {
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
                let angle = (p - a.center).angle();
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
        let dist = p.distance(element_point(e, t));
        if dist < best.0 {
            best = (dist, (walked + t * len) / total);
        }
        walked += len;
    }
    best.1
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
