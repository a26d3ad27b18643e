//! Settings for planning: the tool, leads, direction, tabs, finishing pass and pocket stepover.

use serde::Serialize;

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
    /// (NISTIR 6556 App. B.3.1). See [`super::leads`].
    pub pierce_clearance: Option<f64>,
}

/// Pocket stepover as a fraction of the tool diameter when none is asked for. Common practice:
/// 30–50 % of the diameter; 40 % leaves overlapping passes without scallops standing proud.
/// The one definition: `settings::defaults` names it too.
pub const POCKET_STEPOVER_PER_DIAMETER: f64 = 0.4;

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
            pocket_stepover: POCKET_STEPOVER_PER_DIAMETER * tool_diameter,
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
