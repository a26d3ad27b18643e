//! What one program is written with: the settings asked for, the feeds and heights resolved
//! against the profile, the passes, and what was written for each cut (for the header). Every
//! file of the post stage reads these; this one reads none of them.

/// What the user asked for this program. Lengths in millimetres, feeds in millimetres per minute
/// (conicut's internal units; the profile's units apply only to the written program).
#[derive(Debug, Clone, PartialEq)]
pub struct ProgramSettings {
    /// The job's title, for the header.
    pub title: String,
    /// The drawing the cuts came from, for the header (a file name, not a path of this machine).
    pub source: String,
    /// The width the paths allow for (mm, positive), for the header: the tool diameter on a mill
    /// or router, the kerf width on a laser, plasma table or waterjet (usually the profile's
    /// [`MachineProfile::kerf_width`]).
    pub tool_diameter: f64,
    /// Cut depth (mm, positive) on a mill or router: the floor of the cut is at Z = −depth.
    /// Unused by lasers, plasma tables and waterjets, which cut through (any value is accepted).
    pub depth: f64,
    /// The tolerance the paths were fitted to (mm), for the header.
    pub tolerance: f64,
    /// Cutting feed (mm/min); `None` uses the profile's.
    pub cut_feed: Option<f64>,
    /// Feed down into the work (mm/min): the plunge on a mill or router, the move from pierce
    /// height to cut height on the other kinds; `None` uses the profile's.
    pub plunge_feed: Option<f64>,
    /// Spindle speed (rpm) on a mill or router; `None` uses the profile's. Unused by the other
    /// kinds.
    pub spindle_speed: Option<f64>,
    /// Entry into the material on a mill or router: `Some(angle)` ramps down in a zig-zag along the
    /// line from the plunge point to the contour's start, never steeper than `angle` degrees
    /// (common practice: about 1–3° in steel, up to 5–10° in aluminium, docs/sources.md
    /// §4.3); `None` plunges straight down (only for centre-cutting tools). Unused by the other
    /// kinds.
    pub ramp_angle_deg: Option<f64>,
    /// Depth of each pass (mm, positive) on a mill or router: the cut is made in
    /// `ceil(depth / stepdown)` passes, the last one to the full depth; `None` cuts the full
    /// depth in one pass. Unused by the other kinds.
    pub stepdown: Option<f64>,
    /// With a ramp angle: enter by a helix about the plunge point where the cut leaves room for
    /// one ([`helix_radius`]), by the zig-zag elsewhere. Unused by the other kinds.
    pub helical_entry: bool,
    /// Mills and routers: the height of tabs above the floor of the cut (mm); passes whose floor
    /// lies below the tab top rise to it over each tab. Unused by the other kinds, whose tabs
    /// are gaps.
    pub tab_height: f64,
    /// Where X0 Y0 lies on the part, in words, for the header (`the lower-left corner of the
    /// outline's box`); `None`: the drawing's own origin.
    pub work_zero: Option<String>,
    /// The work offset to run from; `None`: whatever the profile's start block selects. A G54
    /// to G59 word in the start block is replaced by it; without one it is written as its own
    /// block before the start block.
    pub work_offset: Option<WorkOffset>,
}

/// A work offset, G54 to G59: which of the controller's stored zeros the program runs from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct WorkOffset(u8);

impl WorkOffset {
    /// The offset `G<code>`, for codes 54 to 59.
    pub fn new(code: u8) -> Option<WorkOffset> {
        (54..=59).contains(&code).then_some(WorkOffset(code))
    }

    /// The G code's number, 54 to 59.
    pub fn code(self) -> u8 {
        self.0
    }

    /// The word as written: `G55`.
    pub fn word(self) -> String {
        format!("G{}", self.0)
    }
}

/// The floors of the passes (mm below the work zero, ascending in depth): every `stepdown` down
/// to `depth`, the last at exactly `depth`. A pass shallower than a micrometre is merged into the
/// one before it.
pub fn pass_depths(depth: f64, stepdown: Option<f64>) -> Vec<f64> {
    match stepdown {
        Some(step) if step.is_finite() && step > 0.0 && step < depth => {
            let n = (depth / step - 1e-9).ceil().max(1.0) as usize;
            let mut out: Vec<f64> = (1..n).map(|k| k as f64 * step).collect();
            out.retain(|d| depth - d > 1e-3);
            out.push(depth);
            out
        }
        _ => vec![depth],
    }
}

/// Feeds, heights and speeds of one program, resolved from the settings and the profile, in the
/// profile's units.
pub(super) struct Resolved {
    pub(super) cut_feed: f64,
    pub(super) plunge_feed: f64,
    /// Spindle speed (rpm); mills and routers only.
    pub(super) spindle_speed: f64,
    /// The floor of a mill or router cut (negative); unused by the other kinds.
    pub(super) floor: f64,
    /// The tool diameter (mm), for the helix's reach.
    pub(super) tool_diameter: f64,
    /// Whether entries may be helical.
    pub(super) helical: bool,
}

impl Resolved {
    /// The cutting and plunge feeds of `cut` (profile units per minute): its own where its
    /// feature gives them (mm/min), else the job's.
    pub(super) fn feeds_of(
        &self,
        cut: &crate::fit::FittedCut,
        units: super::ProgramUnits,
    ) -> (f64, f64) {
        (
            cut.own.feed.map_or(self.cut_feed, |f| units.from_mm(f)),
            cut.own
                .plunge_feed
                .map_or(self.plunge_feed, |f| units.from_mm(f)),
        )
    }

    /// The spindle speed of `cut` (rpm): its own where its feature gives one, else the job's.
    pub(super) fn spindle_speed_of(&self, cut: &crate::fit::FittedCut) -> f64 {
        cut.own.spindle_speed.unwrap_or(self.spindle_speed)
    }
}

/// What was written for one cut, for the header.
#[derive(Debug, Clone, Copy, Default)]
pub(super) struct Written {
    pub(super) lines: usize,
    pub(super) arcs: usize,
}
