//! The request: what the user asked for on the command line and in the job file, before it is
//! resolved against a machine profile ([`super::resolve`]). Lengths in mm.

use super::defaults;
use super::job_file::JobFile;
use crate::chain;
use crate::geom::{Point, Units};
use crate::plan::{Direction, LeadKind, WorkZero};
use crate::post::WorkOffset;
use std::collections::BTreeMap;

/// What the user asked for.
#[derive(Debug, Clone, PartialEq)]
pub struct JobSettings {
    /// The drawing's file name, for messages and headers (not a path of this machine).
    pub file_name: String,
    /// Units to assume when the drawing states none (`--units`).
    pub units: Option<Units>,
    /// The layer holding the bays (a job file's `bay_layer` overrides it).
    pub bay_layer: String,
    /// Largest gap closed when chaining pieces into contours (mm).
    pub max_gap: f64,
    /// Edge margin for bays when neither the job file nor its feature states one (mm).
    pub margin: f64,
    /// Cutter diameter (mm); `None`: the profile's kerf width on a laser, plasma table or
    /// waterjet, else [`Self::fallback_tool_diameter`] (a mill or router needs one of the two).
    pub tool_diameter: Option<f64>,
    /// A mill's or router's cutter diameter when none is given (mm): the demo's 6 mm end mill;
    /// `None` for a drawing of the user's, whose tool must be named.
    pub fallback_tool_diameter: Option<f64>,
    /// Largest distance between the emitted path and the exact curve (mm).
    pub tolerance: f64,
    /// Cut depth (mm, positive); `None` uses the machine profile's default.
    pub depth: Option<f64>,
    /// Depth of each pass on a mill or router (mm); `None` cuts the full depth at once.
    pub stepdown: Option<f64>,
    /// Ramp entry angle on a mill or router (degrees); `None` plunges straight down.
    pub ramp_angle_deg: Option<f64>,
    /// With a ramp angle: a helical entry where the cut leaves room for one (the zig-zag
    /// elsewhere).
    pub helical_entry: bool,
    /// Leads, overcut and lead-out the user asked for; what is not given comes from the machine
    /// profile.
    pub leads: LeadRequest,
    /// Climb (the default) or conventional milling. Laser, plasma and waterjet keep the usual
    /// direction (outline clockwise, holes counter-clockwise); a conventional request is ignored
    /// there with a warning in the report.
    pub direction: Direction,
    /// Tabs on the outline, if any.
    pub tabs: Option<TabRequest>,
    /// Mills and routers: radial stock (mm) left by the roughing passes for one finishing pass
    /// at full depth; `None`: no finishing pass. Refused on laser, plasma and waterjet, and when
    /// not positive.
    pub finish_allowance: Option<f64>,
    /// Pockets: distance between clearing rings (mm); `None`: 40 % of the tool diameter.
    pub pocket_stepover: Option<f64>,
    /// Straight moves only (G1), no arcs.
    pub lines_only: bool,
    /// Keep all deviation on the scrap side of the exact curve (for edges that must not lose
    /// material).
    pub scrap_side_only: bool,
    /// The job file, if any: which ellipse each feature gets. Without one, every bay gets the
    /// largest ellipse touching all its sides.
    pub job: Option<JobFile>,
    /// Points read from the CSV files the job file names, by the path as written there (mm).
    pub csv_points: BTreeMap<String, Vec<Point>>,
    /// Only these layers' geometry is cut (`--cut-layers`); `None`: the job file's, else every
    /// layer the drawing shows.
    pub cut_layers: Option<Vec<String>>,
    /// These layers' geometry is never cut (`--skip-layers`); `None`: the job file's, else none.
    pub skip_layers: Option<Vec<String>>,
    /// The cutting feed (mm/min; `--feed`); `None`: the job file's, else the profile's.
    pub cut_feed: Option<f64>,
    /// The feed down into the work (mm/min; `--plunge-feed`); `None`: the job file's, else the
    /// profile's.
    pub plunge_feed: Option<f64>,
    /// The spindle speed (rpm; `--spindle-speed`), mills and routers; `None`: the job file's,
    /// else the profile's.
    pub spindle_speed: Option<f64>,
    /// The milling-only options the user gave (`--depth`, `--stepdown`, `--entry`,
    /// `--ramp-angle`, `--tab-height`), by flag, so that a kind that cuts through can say it
    /// ignored them.
    pub milling_flags: Vec<String>,
    /// Which drawing point becomes the program's X0 Y0 (`--zero`); `None`: the job file's, else
    /// the drawing's own origin.
    pub zero: Option<WorkZero>,
    /// The work offset (`--work-offset`); `None`: the job file's, else the profile's.
    pub work_offset: Option<WorkOffset>,
}

impl JobSettings {
    /// The work zero asked for: the command line's, else the job file's, else the drawing's
    /// origin.
    pub fn work_zero(&self) -> WorkZero {
        self.zero
            .or_else(|| self.job.as_ref().and_then(|j| j.zero))
            .unwrap_or_default()
    }

    /// The layers to cut, when limited: the command line's, else the job file's.
    pub fn cut_layers(&self) -> Option<Vec<String>> {
        self.cut_layers
            .clone()
            .or_else(|| self.job.as_ref().and_then(|j| j.cut_layers.clone()))
    }

    /// The layers never cut: the command line's, else the job file's.
    pub fn skip_layers(&self) -> Vec<String> {
        self.skip_layers
            .clone()
            .or_else(|| self.job.as_ref().and_then(|j| j.skip_layers.clone()))
            .unwrap_or_default()
    }

    /// The work offset asked for: the command line's, else the job file's; `None`: the
    /// profile's.
    pub fn work_offset(&self) -> Option<WorkOffset> {
        self.work_offset
            .or_else(|| self.job.as_ref().and_then(|j| j.work_offset))
    }

    /// The command line's defaults for the drawing `file_name` cut with a tool (or kerf) of
    /// `tool_diameter` mm: no edge margin, 0.01 mm tolerance, the profile's depth in one pass, a
    /// helical entry no steeper than 3°, climb milling, the profile's leads, no tabs, no
    /// finishing pass, arcs, two-sided tolerance, every bay's largest ellipse, the drawing's
    /// origin as the work zero, the profile's work offset.
    pub fn new(file_name: &str, tool_diameter: f64) -> Self {
        JobSettings {
            file_name: file_name.to_string(),
            units: None,
            bay_layer: chain::DEFAULT_BAY_LAYER.to_string(),
            max_gap: chain::DEFAULT_MAX_GAP,
            margin: defaults::MARGIN_MM,
            tool_diameter: Some(tool_diameter),
            fallback_tool_diameter: None,
            tolerance: defaults::TOLERANCE_MM,
            depth: None,
            stepdown: None,
            ramp_angle_deg: Some(defaults::RAMP_ANGLE_DEG),
            helical_entry: true,
            leads: LeadRequest::default(),
            direction: Direction::Climb,
            tabs: None,
            finish_allowance: None,
            pocket_stepover: None,
            lines_only: false,
            scrap_side_only: false,
            job: None,
            csv_points: BTreeMap::new(),
            cut_layers: None,
            skip_layers: None,
            cut_feed: None,
            plunge_feed: None,
            spindle_speed: None,
            milling_flags: Vec::new(),
            zero: None,
            work_offset: None,
        }
    }
}

/// Lead settings the user gave (`None`: the machine profile's).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct LeadRequest {
    pub kind: Option<LeadKind>,
    /// The straight part (mm).
    pub length: Option<f64>,
    /// The arc part's radius (mm).
    pub radius: Option<f64>,
    /// Overcut past the start (mm).
    pub overcut: Option<f64>,
    /// Whether to leave by a lead-out.
    pub lead_out: Option<bool>,
}

/// Tabs the user asked for: a count or a spacing; width and height default by kind of machine.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct TabRequest {
    pub count: Option<usize>,
    /// Distance between tabs along the outline (mm).
    pub spacing: Option<f64>,
    /// Length of each tab along the edge (mm).
    pub width: Option<f64>,
    /// Mills and routers: height above the floor of the cut (mm).
    pub height: Option<f64>,
}
