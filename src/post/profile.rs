//! Machine profiles: what one kind of machine needs written into its programs.
//!
//! The profile's types live here, beside the writer that uses their words; reading and checking
//! a profile's TOML text is the settings layer's job (`settings::profile`, which builds a
//! [`MachineProfile`] only from a checked text).
//!
//! # Units
//!
//! Every length, height, feed and travel limit in a profile is in the profile's own `units`
//! (`mm` or `in`; feeds per minute), except the lead defaults and the pierce clearance, which
//! the reader converts to millimetres. conicut works in millimetres inside and converts to the
//! profile's units only when it writes the program.

use serde::Deserialize;
use std::fmt;

use crate::geom::Units;
pub use crate::geom::units::MM_PER_INCH;

/// The kind of machine a profile describes. Each kind has its own safety cautions.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum MachineKind {
    Mill,
    Router,
    Laser,
    Plasma,
    Waterjet,
}

impl MachineKind {
    /// The kind as written in a profile.
    pub fn as_str(self) -> &'static str {
        match self {
            MachineKind::Mill => "mill",
            MachineKind::Router => "router",
            MachineKind::Laser => "laser",
            MachineKind::Plasma => "plasma",
            MachineKind::Waterjet => "waterjet",
        }
    }
}

impl fmt::Display for MachineKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

/// The length unit a program is written in: millimetres (`G21`) or inches (`G20`), the two
/// RS274/NGC knows (NISTIR 6556 §3.5.7). Conversions go through the one [`Units`] type.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
pub enum ProgramUnits {
    #[serde(rename = "mm")]
    Millimetres,
    #[serde(rename = "in")]
    Inches,
}

impl ProgramUnits {
    /// The general length unit this is.
    pub fn length_unit(self) -> Units {
        match self {
            ProgramUnits::Millimetres => Units::Millimetres,
            ProgramUnits::Inches => Units::Inches,
        }
    }

    /// The unit as written in a profile and in program comments.
    pub fn as_str(self) -> &'static str {
        self.length_unit().symbol()
    }

    /// The RS274/NGC units word (NISTIR 6556 §3.5.7).
    pub fn g_word(self) -> &'static str {
        match self {
            ProgramUnits::Millimetres => "G21",
            ProgramUnits::Inches => "G20",
        }
    }

    /// Converts a length in millimetres to this unit.
    pub fn from_mm(self, mm: f64) -> f64 {
        self.length_unit().from_mm(mm)
    }

    /// Converts a length in this unit to millimetres.
    pub fn to_mm(self, value: f64) -> f64 {
        self.length_unit().to_mm(value)
    }
}

impl fmt::Display for ProgramUnits {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

/// The box the tool centre may reach, relative to the work zero, in the profile's units.
#[derive(Debug, Clone, Copy, PartialEq, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct TravelEnvelope {
    pub x_min: f64,
    pub x_max: f64,
    pub y_min: f64,
    pub y_max: f64,
    pub z_min: f64,
    pub z_max: f64,
}

impl TravelEnvelope {
    /// `(min, max)` along the axis `'X'`, `'Y'` or `'Z'`.
    pub fn limits(&self, axis: char) -> (f64, f64) {
        match axis {
            'X' => (self.x_min, self.x_max),
            'Y' => (self.y_min, self.y_max),
            _ => (self.z_min, self.z_max),
        }
    }
}

/// How arcs of the path are written.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ArcForm {
    /// `G2`/`G3` with the centre as `I`, `J` offsets from the arc's start (NISTIR 6556 §3.5.3.2,
    /// §3.5.17). The radius form (`R`, §3.5.3.1) is never written.
    CentreOffsets,
    /// Straight moves (`G1`) only; a path holding arcs is refused.
    LinesOnly,
}

impl ArcForm {
    /// The value as written in a profile.
    pub fn as_str(self) -> &'static str {
        match self {
            ArcForm::CentreOffsets => "centre",
            ArcForm::LinesOnly => "lines",
        }
    }
}

/// How comments are written.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum CommentStyle {
    /// `(text)`, the RS274/NGC comment (NISTIR 6556 §3.3.4).
    #[default]
    Parentheses,
    /// `; text`, to the end of the line (not in NISTIR 6556; some controllers read it).
    Semicolon,
}

/// The unit of the `P` word of a `G4` dwell.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum DwellUnit {
    /// Seconds, as NISTIR 6556 §3.5.4 defines it.
    #[default]
    Seconds,
    /// Milliseconds, as some other dialects read it (docs/sources.md P1.5, from memory).
    Milliseconds,
}

/// What drives the cut on a mill or router: a spindle turning a cutter at a depth.
///
/// Heights and depths are in the profile's units; speeds in rpm; the delay in seconds.
#[derive(Debug, Clone, PartialEq)]
pub struct Spindle {
    /// The words that start the spindle (the speed word `S` is added after them).
    pub on: String,
    /// The words that stop the spindle.
    pub off: String,
    /// Spindle speed used when the user gives none, rpm.
    pub speed: f64,
    /// The highest spindle speed a program may ask for, rpm.
    pub max_speed: f64,
    /// Seconds to wait after starting the spindle (0: no dwell).
    pub delay: f64,
    /// Height just above the stock from which the tool plunges.
    pub retract_height: f64,
    /// Cut depth used when the user gives none (positive, below the work zero).
    pub default_depth: f64,
}

/// What drives the cut on a laser, plasma or waterjet: a beam, arc or jet switched on above the
/// sheet after a pierce, cutting through the whole thickness (there is no cut depth).
///
/// Heights and the kerf are in the profile's units; the dwell in seconds.
#[derive(Debug, Clone, PartialEq)]
pub struct Process {
    /// The words that switch the beam, torch or jet on.
    pub on: String,
    /// The words that switch it off.
    pub off: String,
    /// Seconds to wait at the pierce height after switching on (`G4`), before moving down to
    /// the cut height.
    pub pierce_dwell: f64,
    /// Height above the work zero (the sheet's top) at which the process is switched on.
    pub pierce_height: f64,
    /// Height above the work zero at which the path is cut.
    pub cut_height: f64,
    /// Width of the cut the process makes.
    pub kerf_width: f64,
}

/// How the profile's kind of machine cuts.
#[derive(Debug, Clone, PartialEq)]
pub enum Cutter {
    /// Mills and routers.
    Spindle(Spindle),
    /// Lasers, plasma tables and waterjets.
    Process(Process),
}

/// A checked machine profile: the words and limits the program is written with (the planner's
/// defaults a profile file also gives go to `settings::MachineDefaults`). Build one with
/// [`MachineProfile::from_toml`] or `settings::Machine::from_toml`; every value has been
/// validated (positive feeds, ordered heights and limits, sensible decimals, clean blocks, the
/// keys of its kind of machine and no others).
#[derive(Debug, Clone, PartialEq)]
pub struct MachineProfile {
    pub(crate) name: String,
    pub(crate) kind: MachineKind,
    pub(crate) units: ProgramUnits,
    pub(crate) arc_form: ArcForm,
    pub(crate) xy_decimals: usize,
    pub(crate) z_decimals: usize,
    pub(crate) feed_decimals: usize,
    pub(crate) line_numbers: bool,
    /// The program file's extension, without the dot (`nc` unless the profile says).
    pub(crate) program_extension: String,
    pub(crate) comment_style: CommentStyle,
    pub(crate) dwell_unit: DwellUnit,
    pub(crate) start_block: Vec<String>,
    pub(crate) end_block: Vec<String>,
    pub(crate) cutter: Cutter,
    pub(crate) cut_feed: f64,
    pub(crate) plunge_feed: f64,
    pub(crate) max_feed: f64,
    pub(crate) rapid_feed: f64,
    pub(crate) acceleration: f64,
    pub(crate) safe_height: f64,
    pub(crate) travel: TravelEnvelope,
}

/// The most decimals a profile may ask for.
pub const MAX_DECIMALS: usize = 6;

impl MachineProfile {
    pub fn name(&self) -> &str {
        &self.name
    }
    pub fn kind(&self) -> MachineKind {
        self.kind
    }
    pub fn units(&self) -> ProgramUnits {
        self.units
    }
    /// How arcs are written: centre offsets (`G2`/`G3` with `I`, `J`) or lines only.
    pub fn arc_form(&self) -> ArcForm {
        self.arc_form
    }
    /// Decimals for X, Y (and arc offsets).
    pub fn xy_decimals(&self) -> usize {
        self.xy_decimals
    }
    /// Decimals for Z.
    pub fn z_decimals(&self) -> usize {
        self.z_decimals
    }
    /// Decimals for F.
    pub fn feed_decimals(&self) -> usize {
        self.feed_decimals
    }
    /// Whether blocks get `N` numbers (N10, N20, …).
    pub fn line_numbers(&self) -> bool {
        self.line_numbers
    }
    /// The program file's extension, without the dot.
    pub fn program_extension(&self) -> &str {
        &self.program_extension
    }
    /// How comments are written.
    pub fn comment_style(&self) -> CommentStyle {
        self.comment_style
    }
    /// The unit of the dwell word `G4 P`.
    pub fn dwell_unit(&self) -> DwellUnit {
        self.dwell_unit
    }
    /// Blocks written after the modal setup line, before the spindle or process starts.
    pub fn start_block(&self) -> &[String] {
        &self.start_block
    }
    /// Blocks written after the spindle or process stops, before the program end.
    pub fn end_block(&self) -> &[String] {
        &self.end_block
    }
    /// How the machine cuts: a spindle (mills, routers) or a process that pierces (lasers,
    /// plasma tables, waterjets).
    pub fn cutter(&self) -> &Cutter {
        &self.cutter
    }
    /// The spindle of a mill or router; `None` for the other kinds.
    pub fn spindle(&self) -> Option<&Spindle> {
        match &self.cutter {
            Cutter::Spindle(s) => Some(s),
            Cutter::Process(_) => None,
        }
    }
    /// The process of a laser, plasma table or waterjet; `None` for mills and routers.
    pub fn process(&self) -> Option<&Process> {
        match &self.cutter {
            Cutter::Process(p) => Some(p),
            Cutter::Spindle(_) => None,
        }
    }
    /// The kerf width in **millimetres** (converted from the profile's units), for the kinds that
    /// have one (laser, plasma, waterjet); `None` for mills and routers, whose tool diameter the
    /// user gives.
    pub fn kerf_width(&self) -> Option<f64> {
        self.process().map(|p| self.units.to_mm(p.kerf_width))
    }
    /// Cut depth to use when the user gives none, in the profile's units (positive), for mills
    /// and routers. Lasers, plasma tables and waterjets cut through and have no depth: 0.
    pub fn default_depth(&self) -> f64 {
        self.spindle().map_or(0.0, |s| s.default_depth)
    }
    /// Default cutting feed, profile units per minute.
    pub fn cut_feed(&self) -> f64 {
        self.cut_feed
    }
    /// Default feed for moves down into the work: the plunge of a mill or router, the move from
    /// pierce height to cut height of the other kinds; profile units per minute.
    pub fn plunge_feed(&self) -> f64 {
        self.plunge_feed
    }
    /// The highest feed a program may ask for, profile units per minute.
    pub fn max_feed(&self) -> f64 {
        self.max_feed
    }
    /// The rapid (G0) rate, profile units per minute (for time estimates; the machine sets its
    /// own rapid rate).
    pub fn rapid_feed(&self) -> f64 {
        self.rapid_feed
    }
    /// The axes' acceleration, profile units per second squared (for time estimates).
    pub fn acceleration(&self) -> f64 {
        self.acceleration
    }
    /// Height that clears clamps, fixtures and tipped parts, profile units above the work zero.
    pub fn safe_height(&self) -> f64 {
        self.safe_height
    }
    /// The travel envelope, profile units relative to the work zero.
    pub fn travel(&self) -> &TravelEnvelope {
        &self.travel
    }
}

/// The largest difference between an arc's start and end radius, in `units`: 0.002 mm (G21) or
/// 0.0002 in (G20) (NISTIR 6556 §3.5.3.2).
pub fn radius_rule(units: ProgramUnits) -> f64 {
    match units {
        ProgramUnits::Millimetres => 0.002,
        ProgramUnits::Inches => 0.0002,
    }
}

pub(crate) fn format_limit(units: ProgramUnits) -> &'static str {
    match units {
        ProgramUnits::Millimetres => "0.002",
        ProgramUnits::Inches => "0.0002",
    }
}
