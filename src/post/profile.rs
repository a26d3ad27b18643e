//! Machine profiles: what one kind of machine needs written into its programs, read from TOML.
//!
//! # Units
//!
//! Every length, height, feed and travel limit in a profile is in the profile's own `units`
//! (`mm` or `in`; feeds per minute). conicut works in millimetres inside and converts to the
//! profile's units only when it writes the program.
//!
//! # Keys
//!
//! `machine-profiles/` holds a complete, commented example for each kind of machine
//! (`metric-mill.toml`, `inch-router.toml`, `laser.toml`, `plasma.toml`, `waterjet.toml`). Unknown
//! keys are refused so that a misspelt key does not silently fall back to a default, and so are
//! keys of another kind of machine (a `pierce_height` in a mill profile, a `spindle_on` in a
//! laser profile).
//!
//! | key | kinds | meaning |
//! |---|---|---|
//! | `name`, `kind`, `units` | all | a short name; `mill`, `router`, `laser`, `plasma`, `waterjet`; `mm` or `in` |
//! | `arc_form` | all | `centre` (G2/G3 with I, J) or `lines` (G1 only) |
//! | `xy_decimals`, `z_decimals`, `feed_decimals` | all | digits after the point (defaults 4, 3, 1 in mm; 5, 4, 2 in inch) |
//! | `line_numbers` | all | `N10`, `N20`, … on every block (default false) |
//! | `comment_style` | all | `parentheses` (default, NISTIR 6556 §3.3.4) or `semicolon` |
//! | `dwell_unit` | all | `seconds` (default, NISTIR 6556 §3.5.4) or `milliseconds` for `G4 P` |
//! | `start_block`, `end_block` | all | blocks after the modal line, and before `M30` |
//! | `spindle_on`, `spindle_off`, `spindle_speed`, `max_spindle_speed`, `spindle_delay` | mill, router | spindle words, rpm, seconds |
//! | `retract_height`, `default_depth` | mill, router | plunge start height; depth when the user gives none |
//! | `beam_on`/`beam_off`, `torch_on`/`torch_off`, `jet_on`/`jet_off` | laser, plasma, waterjet | the words that switch the process |
//! | `pierce_dwell`, `pierce_height`, `cut_height`, `kerf_width` | laser, plasma, waterjet | seconds; heights above the sheet; the kerf |
//! | `cut_feed`, `plunge_feed`, `max_feed`, `rapid_feed`, `acceleration` | all | per minute; acceleration per second squared |
//! | `safe_height`, `[travel]` | all | clearance height; the envelope `x_min` … `z_max` |
//! | `lead` | all | the lead-in's shape: `straight` (default), `line`, `arc` or `line-arc` |
//! | `lead_length`, `lead_radius` | all | the lead's straight part and arc radius (a line lead needs a length above 0, an arc lead a radius above 0; mills and routers: an arc wider than the tool, NISTIR 6556 App. B.3.1) |
//! | `overcut`, `lead_out` | all | how far past the start the path is cut again (default 0); whether to leave by the mirrored lead (default: true unless the lead is straight) |
//! | `pierce_clearance` | laser, plasma, waterjet | the pierce point's least distance from every finished edge: one kerf plus the pierce crater (default 0: the kerf's half-width only) |
//!
//! Lead keys left out give the behaviour of earlier versions: a straight move from the plunge or
//! pierce point, no overcut, no lead-out. The bundled profiles set them (common practice,
//! docs/sources.md P4.3).

use crate::plan::{LeadKind, LeadOptions};
use serde::Deserialize;
use std::fmt;

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

/// The length unit of a program.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
pub enum Units {
    #[serde(rename = "mm")]
    Millimetres,
    #[serde(rename = "in")]
    Inches,
}

impl Units {
    /// The unit as written in a profile and in program comments.
    pub fn as_str(self) -> &'static str {
        match self {
            Units::Millimetres => "mm",
            Units::Inches => "in",
        }
    }

    /// The RS274/NGC units word (NISTIR 6556 §3.5.7).
    pub fn g_word(self) -> &'static str {
        match self {
            Units::Millimetres => "G21",
            Units::Inches => "G20",
        }
    }

    /// Converts a length in millimetres to this unit.
    pub fn from_mm(self, mm: f64) -> f64 {
        match self {
            Units::Millimetres => mm,
            Units::Inches => mm / MM_PER_INCH,
        }
    }

    /// Converts a length in this unit to millimetres.
    pub fn to_mm(self, value: f64) -> f64 {
        match self {
            Units::Millimetres => value,
            Units::Inches => value * MM_PER_INCH,
        }
    }
}

impl fmt::Display for Units {
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

/// A machine profile as written in TOML, before its values are checked. Keys that belong to one
/// kind of machine are optional here and checked against the kind afterwards.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawProfile {
    name: String,
    kind: MachineKind,
    units: Units,
    arc_form: String,
    xy_decimals: Option<usize>,
    z_decimals: Option<usize>,
    feed_decimals: Option<usize>,
    #[serde(default)]
    line_numbers: bool,
    #[serde(default)]
    comment_style: CommentStyle,
    #[serde(default)]
    dwell_unit: DwellUnit,
    #[serde(default)]
    start_block: Vec<String>,
    #[serde(default)]
    end_block: Vec<String>,
    // Mills and routers.
    spindle_on: Option<String>,
    spindle_off: Option<String>,
    spindle_speed: Option<f64>,
    max_spindle_speed: Option<f64>,
    spindle_delay: Option<f64>,
    retract_height: Option<f64>,
    default_depth: Option<f64>,
    // Lasers, plasma tables and waterjets.
    beam_on: Option<String>,
    beam_off: Option<String>,
    torch_on: Option<String>,
    torch_off: Option<String>,
    jet_on: Option<String>,
    jet_off: Option<String>,
    pierce_dwell: Option<f64>,
    pierce_height: Option<f64>,
    cut_height: Option<f64>,
    kerf_width: Option<f64>,
    pierce_clearance: Option<f64>,
    // Leads, every kind (optional).
    lead: Option<String>,
    lead_length: Option<f64>,
    lead_radius: Option<f64>,
    overcut: Option<f64>,
    lead_out: Option<bool>,
    // Every kind.
    cut_feed: f64,
    plunge_feed: f64,
    max_feed: f64,
    rapid_feed: f64,
    acceleration: f64,
    safe_height: f64,
    travel: TravelEnvelope,
}

/// A checked machine profile. Build one with [`MachineProfile::from_toml`]; every value has been
/// validated (positive feeds, ordered heights and limits, sensible decimals, clean blocks, the
/// keys of its kind of machine and no others).
#[derive(Debug, Clone, PartialEq)]
pub struct MachineProfile {
    name: String,
    kind: MachineKind,
    units: Units,
    arc_form: ArcForm,
    xy_decimals: usize,
    z_decimals: usize,
    feed_decimals: usize,
    line_numbers: bool,
    comment_style: CommentStyle,
    dwell_unit: DwellUnit,
    start_block: Vec<String>,
    end_block: Vec<String>,
    cutter: Cutter,
    cut_feed: f64,
    plunge_feed: f64,
    max_feed: f64,
    rapid_feed: f64,
    acceleration: f64,
    safe_height: f64,
    travel: TravelEnvelope,
    /// Lead defaults, in mm.
    leads: LeadOptions,
    /// Cut-through kinds: the pierce point's least distance from the finished edges, in mm.
    pierce_clearance: Option<f64>,
}

/// The generic metric mill profile shipped in `machine-profiles/metric-mill.toml`.
pub const METRIC_MILL_TOML: &str = include_str!("../../machine-profiles/metric-mill.toml");

/// The profiles shipped in `machine-profiles/`: file name (relative to the crate) and text. All
/// their values are invented examples (each file says so).
pub const BUNDLED_PROFILES: [(&str, &str); 5] = [
    ("machine-profiles/metric-mill.toml", METRIC_MILL_TOML),
    (
        "machine-profiles/inch-router.toml",
        include_str!("../../machine-profiles/inch-router.toml"),
    ),
    (
        "machine-profiles/laser.toml",
        include_str!("../../machine-profiles/laser.toml"),
    ),
    (
        "machine-profiles/plasma.toml",
        include_str!("../../machine-profiles/plasma.toml"),
    ),
    (
        "machine-profiles/waterjet.toml",
        include_str!("../../machine-profiles/waterjet.toml"),
    ),
];

/// The most decimals a profile may ask for.
pub const MAX_DECIMALS: usize = 6;

/// The longest start or end block line a profile may hold (the program line limit is 256,
/// NISTIR 6556 §3.3; the rest is left for a line number).
const MAX_BLOCK_LINE: usize = 200;

/// Keys only mills and routers take.
const SPINDLE_KEYS: [&str; 7] = [
    "spindle_on",
    "spindle_off",
    "spindle_speed",
    "max_spindle_speed",
    "spindle_delay",
    "retract_height",
    "default_depth",
];

/// Keys only lasers, plasma tables and waterjets take (the on/off pair depends on the kind).
const PROCESS_KEYS: [&str; 11] = [
    "beam_on",
    "beam_off",
    "torch_on",
    "torch_off",
    "jet_on",
    "jet_off",
    "pierce_dwell",
    "pierce_height",
    "cut_height",
    "kerf_width",
    "pierce_clearance",
];

/// The keys that switch the process on and off for a kind of machine that pierces.
fn on_off_keys(kind: MachineKind) -> Option<(&'static str, &'static str)> {
    match kind {
        MachineKind::Laser => Some(("beam_on", "beam_off")),
        MachineKind::Plasma => Some(("torch_on", "torch_off")),
        MachineKind::Waterjet => Some(("jet_on", "jet_off")),
        MachineKind::Mill | MachineKind::Router => None,
    }
}

impl RawProfile {
    /// Whether the optional, kind-specific `key` is set.
    fn has(&self, key: &str) -> bool {
        match key {
            "spindle_on" => self.spindle_on.is_some(),
            "spindle_off" => self.spindle_off.is_some(),
            "spindle_speed" => self.spindle_speed.is_some(),
            "max_spindle_speed" => self.max_spindle_speed.is_some(),
            "spindle_delay" => self.spindle_delay.is_some(),
            "retract_height" => self.retract_height.is_some(),
            "default_depth" => self.default_depth.is_some(),
            "beam_on" => self.beam_on.is_some(),
            "beam_off" => self.beam_off.is_some(),
            "torch_on" => self.torch_on.is_some(),
            "torch_off" => self.torch_off.is_some(),
            "jet_on" => self.jet_on.is_some(),
            "jet_off" => self.jet_off.is_some(),
            "pierce_dwell" => self.pierce_dwell.is_some(),
            "pierce_height" => self.pierce_height.is_some(),
            "cut_height" => self.cut_height.is_some(),
            "kerf_width" => self.kerf_width.is_some(),
            "pierce_clearance" => self.pierce_clearance.is_some(),
            _ => false,
        }
    }

    fn on_off(&self, kind: MachineKind) -> (Option<&String>, Option<&String>) {
        match kind {
            MachineKind::Laser => (self.beam_on.as_ref(), self.beam_off.as_ref()),
            MachineKind::Plasma => (self.torch_on.as_ref(), self.torch_off.as_ref()),
            MachineKind::Waterjet => (self.jet_on.as_ref(), self.jet_off.as_ref()),
            MachineKind::Mill | MachineKind::Router => {
                (self.spindle_on.as_ref(), self.spindle_off.as_ref())
            }
        }
    }
}

/// Makes [`ProfileError`]s for one profile text.
struct Checker<'a> {
    text: &'a str,
    file: &'a str,
}

impl Checker<'_> {
    fn fail(&self, key: &str, problem: String, hint: &str) -> ProfileError {
        ProfileError {
            file: self.file.to_string(),
            line: find_key_line(self.text, key),
            key: Some(key.to_string()),
            problem,
            hint: hint.to_string(),
        }
    }

    /// A kind-specific key that must be present.
    fn need<T>(&self, value: Option<T>, key: &str, kind: MachineKind) -> Result<T, ProfileError> {
        value.ok_or_else(|| ProfileError {
            file: self.file.to_string(),
            line: None,
            key: Some(key.to_string()),
            problem: format!("missing key `{key}`, which a {kind} profile needs"),
            hint: "add it; machine-profiles/ holds a commented example for each kind of machine"
                .into(),
        })
    }

    fn positive(&self, key: &str, value: f64) -> Result<f64, ProfileError> {
        if value.is_finite() && value > 0.0 {
            Ok(value)
        } else {
            Err(self.fail(
                key,
                format!("{value} is not a positive number"),
                "give a value greater than zero",
            ))
        }
    }

    fn not_negative(&self, key: &str, value: f64, hint: &str) -> Result<f64, ProfileError> {
        if value.is_finite() && value >= 0.0 {
            Ok(value)
        } else {
            Err(self.fail(
                key,
                format!("{value} is not zero or a positive number"),
                hint,
            ))
        }
    }

    /// An on or off block: not empty, plain RS274 words.
    fn words(&self, key: &str, line: &str) -> Result<String, ProfileError> {
        if line.trim().is_empty() {
            return Err(self.fail(
                key,
                "the block is empty".into(),
                "give the words, e.g. M3 to switch on or M5 to switch off",
            ));
        }
        check_block_line(line).map_err(|p| self.fail(key, p, "write plain RS274 words"))?;
        Ok(line.trim().to_string())
    }
}

impl MachineProfile {
    /// Reads and checks a profile. `file_name` is used only in messages.
    ///
    /// Errors name the file, the line and the key, say what is wrong and what to do.
    pub fn from_toml(text: &str, file_name: &str) -> Result<Self, ProfileError> {
        let raw: RawProfile =
            toml::from_str(text).map_err(|e| from_toml_error(&e, text, file_name))?;
        let c = Checker {
            text,
            file: file_name,
        };

        if raw.name.trim().is_empty() {
            return Err(c.fail(
                "name",
                "the name is empty".into(),
                "give the profile a short name such as \"metric mill\"",
            ));
        }
        let arc_form = match raw.arc_form.trim() {
            "centre" | "center" => ArcForm::CentreOffsets,
            "lines" => ArcForm::LinesOnly,
            "radius" => {
                return Err(c.fail(
                    "arc_form",
                    "the radius form (R) is not written: NISTIR 6556 §3.5.3.1 warns that it \
                     magnifies rounding near half and full turns"
                        .into(),
                    "use \"centre\" (G2/G3 with I and J) or \"lines\" (G1 only)",
                ));
            }
            other => {
                return Err(c.fail(
                    "arc_form",
                    format!("\"{other}\" is not an arc form"),
                    "use \"centre\" (G2/G3 with I and J) or \"lines\" (G1 only)",
                ));
            }
        };
        let (xy_default, z_default, feed_default) = match raw.units {
            Units::Millimetres => (4, 3, 1),
            Units::Inches => (5, 4, 2),
        };
        let xy_decimals = raw.xy_decimals.unwrap_or(xy_default);
        let z_decimals = raw.z_decimals.unwrap_or(z_default);
        let feed_decimals = raw.feed_decimals.unwrap_or(feed_default);
        for (key, value) in [
            ("xy_decimals", xy_decimals),
            ("z_decimals", z_decimals),
            ("feed_decimals", feed_decimals),
        ] {
            if value > MAX_DECIMALS {
                return Err(c.fail(
                    key,
                    format!("{value} decimals is more than the {MAX_DECIMALS} allowed"),
                    "use 0 to 6 (4 for mm and 5 for inch suit most controllers)",
                ));
            }
        }
        // docs/sources.md P1.6: with fewer decimals the two radii of an arc cannot be
        // kept within 0.002 mm (0.0002 in) of each other.
        let min_arc_decimals = match raw.units {
            Units::Millimetres => 3,
            Units::Inches => 4,
        };
        if arc_form == ArcForm::CentreOffsets && xy_decimals < min_arc_decimals {
            return Err(c.fail(
                "xy_decimals",
                format!(
                    "{xy_decimals} decimals in {} cannot keep an arc's start and end radii within \
                     the {} {} that NISTIR 6556 §3.5.3.2 allows",
                    raw.units,
                    format_limit(raw.units),
                    raw.units
                ),
                &format!("use at least {min_arc_decimals} decimals, or arc_form = \"lines\""),
            ));
        }

        for (key, value) in [
            ("cut_feed", raw.cut_feed),
            ("plunge_feed", raw.plunge_feed),
            ("max_feed", raw.max_feed),
            ("rapid_feed", raw.rapid_feed),
            ("acceleration", raw.acceleration),
            ("safe_height", raw.safe_height),
        ] {
            c.positive(key, value)?;
        }
        for (key, value) in [("cut_feed", raw.cut_feed), ("plunge_feed", raw.plunge_feed)] {
            if value > raw.max_feed {
                return Err(c.fail(
                    key,
                    format!("{value} is above max_feed {}", raw.max_feed),
                    "lower the feed or correct max_feed",
                ));
            }
        }
        if raw.max_feed > raw.rapid_feed {
            return Err(c.fail(
                "max_feed",
                format!(
                    "max_feed {} is above the rapid rate rapid_feed {}",
                    raw.max_feed, raw.rapid_feed
                ),
                "the rapid rate is the machine's fastest; correct one of the two",
            ));
        }

        let t = raw.travel;
        for (axis, lo, hi) in [
            ("x", t.x_min, t.x_max),
            ("y", t.y_min, t.y_max),
            ("z", t.z_min, t.z_max),
        ] {
            let key = format!("travel.{axis}_min");
            if !(lo.is_finite() && hi.is_finite()) {
                return Err(c.fail(
                    &key,
                    "a travel limit is not a finite number".into(),
                    "give finite numbers",
                ));
            }
            if lo >= hi {
                return Err(c.fail(
                    &key,
                    format!("{axis}_min {lo} is not below {axis}_max {hi}"),
                    "the travel minimum must be smaller than the maximum",
                ));
            }
        }
        if raw.safe_height > t.z_max {
            return Err(c.fail(
                "safe_height",
                format!(
                    "safe_height {} is above the travel limit z_max {}",
                    raw.safe_height, t.z_max
                ),
                "lower safe_height or correct travel.z_max",
            ));
        }

        let cutter = check_cutter(&raw, &c)?;
        let leads = check_leads(&raw, &c)?;
        let pierce_clearance = match cutter {
            Cutter::Process(_) => Some(raw.units.to_mm(c.not_negative(
                "pierce_clearance",
                raw.pierce_clearance.unwrap_or(0.0),
                "give the pierce point's least distance from the finished edge: one kerf plus \
                 the pierce crater, or 0",
            )?)),
            Cutter::Spindle(_) => None,
        };

        for (key, lines) in [
            ("start_block", &raw.start_block),
            ("end_block", &raw.end_block),
        ] {
            for line in lines {
                check_block_line(line).map_err(|p| {
                    c.fail(
                        key,
                        format!("line \"{line}\": {p}"),
                        "write plain RS274 words, one block per string",
                    )
                })?;
            }
        }

        Ok(MachineProfile {
            name: raw.name.trim().to_string(),
            kind: raw.kind,
            units: raw.units,
            arc_form,
            xy_decimals,
            z_decimals,
            feed_decimals,
            line_numbers: raw.line_numbers,
            comment_style: raw.comment_style,
            dwell_unit: raw.dwell_unit,
            start_block: raw
                .start_block
                .iter()
                .map(|s| s.trim().to_string())
                .collect(),
            end_block: raw.end_block.iter().map(|s| s.trim().to_string()).collect(),
            cutter,
            cut_feed: raw.cut_feed,
            plunge_feed: raw.plunge_feed,
            max_feed: raw.max_feed,
            rapid_feed: raw.rapid_feed,
            acceleration: raw.acceleration,
            safe_height: raw.safe_height,
            travel: raw.travel,
            leads,
            pierce_clearance,
        })
    }

    /// The generic metric mill shipped with conicut (`machine-profiles/metric-mill.toml`).
    pub fn metric_mill() -> Result<Self, ProfileError> {
        Self::from_toml(METRIC_MILL_TOML, "machine-profiles/metric-mill.toml")
    }

    pub fn name(&self) -> &str {
        &self.name
    }
    pub fn kind(&self) -> MachineKind {
        self.kind
    }
    pub fn units(&self) -> Units {
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
    /// The lead-in, overcut and lead-out used when the user gives none, in **millimetres**
    /// (converted from the profile's units).
    pub fn lead_options(&self) -> LeadOptions {
        self.leads
    }
    /// Laser, plasma and waterjet: the pierce point's least distance from every finished edge,
    /// in **millimetres** (0 when the profile gives none); `None` for mills and routers.
    pub fn pierce_clearance(&self) -> Option<f64> {
        self.pierce_clearance
    }
}

/// The largest difference between an arc's start and end radius, in `units`: 0.002 mm (G21) or
/// 0.0002 in (G20) (NISTIR 6556 §3.5.3.2).
pub fn radius_rule(units: Units) -> f64 {
    match units {
        Units::Millimetres => 0.002,
        Units::Inches => 0.0002,
    }
}

fn format_limit(units: Units) -> &'static str {
    match units {
        Units::Millimetres => "0.002",
        Units::Inches => "0.0002",
    }
}

/// Checks the keys of the profile's kind of machine, refuses those of the other kinds, and
/// builds its [`Cutter`].
fn check_cutter(raw: &RawProfile, c: &Checker) -> Result<Cutter, ProfileError> {
    let kind = raw.kind;
    let own_on_off = on_off_keys(kind);
    let foreign: Vec<&str> = match own_on_off {
        None => PROCESS_KEYS.to_vec(),
        Some((on, off)) => SPINDLE_KEYS
            .iter()
            .chain(PROCESS_KEYS.iter().take(6))
            .copied()
            .filter(|k| *k != on && *k != off)
            .collect(),
    };
    if let Some(key) = foreign.into_iter().find(|k| raw.has(k)) {
        let belongs = if SPINDLE_KEYS.contains(&key) {
            "mill and router profiles".to_string()
        } else {
            let owner = [
                MachineKind::Laser,
                MachineKind::Plasma,
                MachineKind::Waterjet,
            ]
            .into_iter()
            .find(|k| on_off_keys(*k).is_some_and(|(on, off)| on == key || off == key));
            match owner {
                Some(k) => format!("{k} profiles"),
                None => "laser, plasma and waterjet profiles".to_string(),
            }
        };
        let hint = match own_on_off {
            Some((on, off)) => format!("remove it; a {kind} profile uses {on} and {off}"),
            None => "remove it".to_string(),
        };
        return Err(c.fail(
            key,
            format!("`{key}` is a key for {belongs}, and this is a {kind} profile"),
            &hint,
        ));
    }

    let (on_key, off_key) = own_on_off.unwrap_or(("spindle_on", "spindle_off"));
    let (on, off) = raw.on_off(kind);
    let on = c.words(on_key, c.need(on, on_key, kind)?)?;
    let off = c.words(off_key, c.need(off, off_key, kind)?)?;

    match own_on_off {
        None => {
            let speed = c.positive(
                "spindle_speed",
                c.need(raw.spindle_speed, "spindle_speed", kind)?,
            )?;
            let max_speed = c.positive(
                "max_spindle_speed",
                c.need(raw.max_spindle_speed, "max_spindle_speed", kind)?,
            )?;
            let delay = c.not_negative(
                "spindle_delay",
                raw.spindle_delay.unwrap_or(0.0),
                "give the seconds to wait for the spindle to reach speed, or 0",
            )?;
            let retract_height = c.positive(
                "retract_height",
                c.need(raw.retract_height, "retract_height", kind)?,
            )?;
            let default_depth = c.positive(
                "default_depth",
                c.need(raw.default_depth, "default_depth", kind)?,
            )?;
            if speed > max_speed {
                return Err(c.fail(
                    "spindle_speed",
                    format!(
                        "the default spindle speed {speed} rpm is above max_spindle_speed {max_speed} rpm"
                    ),
                    "lower spindle_speed or correct max_spindle_speed",
                ));
            }
            if retract_height > raw.safe_height {
                return Err(c.fail(
                    "retract_height",
                    format!(
                        "retract_height {retract_height} is above safe_height {}",
                        raw.safe_height
                    ),
                    "retract_height is just above the stock; safe_height clears the clamps and must be the larger",
                ));
            }
            Ok(Cutter::Spindle(Spindle {
                on,
                off,
                speed,
                max_speed,
                delay,
                retract_height,
                default_depth,
            }))
        }
        Some(_) => {
            let pierce_dwell = c.not_negative(
                "pierce_dwell",
                c.need(raw.pierce_dwell, "pierce_dwell", kind)?,
                "give the seconds to wait after switching on, from the process chart, or 0",
            )?;
            let pierce_height = c.positive(
                "pierce_height",
                c.need(raw.pierce_height, "pierce_height", kind)?,
            )?;
            let cut_height =
                c.positive("cut_height", c.need(raw.cut_height, "cut_height", kind)?)?;
            let kerf_width =
                c.positive("kerf_width", c.need(raw.kerf_width, "kerf_width", kind)?)?;
            if cut_height > pierce_height {
                return Err(c.fail(
                    "cut_height",
                    format!("cut_height {cut_height} is above pierce_height {pierce_height}"),
                    "the process pierces from higher up and then moves down to cut; make pierce_height the larger",
                ));
            }
            if pierce_height > raw.safe_height {
                return Err(c.fail(
                    "pierce_height",
                    format!(
                        "pierce_height {pierce_height} is above safe_height {}",
                        raw.safe_height
                    ),
                    "safe_height clears tipped parts and clamps and must be the larger",
                ));
            }
            Ok(Cutter::Process(Process {
                on,
                off,
                pierce_dwell,
                pierce_height,
                cut_height,
                kerf_width,
            }))
        }
    }
}

/// Reads the lead keys: the shape, lengths not negative (a line lead needs a length above 0, an
/// arc lead a radius above 0), converted to mm. Left out: a straight lead, no overcut, no
/// lead-out.
fn check_leads(raw: &RawProfile, c: &Checker) -> Result<LeadOptions, ProfileError> {
    let kind = match raw.lead.as_deref().map(str::trim) {
        None | Some("straight") => LeadKind::Straight,
        Some("line") => LeadKind::Line,
        Some("arc") => LeadKind::Arc,
        Some("line-arc") => LeadKind::LineArc,
        Some(other) => {
            return Err(c.fail(
                "lead",
                format!("\"{other}\" is not a lead shape"),
                "use \"straight\", \"line\", \"arc\" or \"line-arc\"",
            ));
        }
    };
    let hint = "give zero or a positive length";
    let length = c.not_negative("lead_length", raw.lead_length.unwrap_or(0.0), hint)?;
    let radius = c.not_negative("lead_radius", raw.lead_radius.unwrap_or(0.0), hint)?;
    let overcut = c.not_negative("overcut", raw.overcut.unwrap_or(0.0), hint)?;
    if matches!(kind, LeadKind::Line | LeadKind::LineArc) && length <= 0.0 {
        return Err(c.fail(
            if raw.lead_length.is_some() {
                "lead_length"
            } else {
                "lead"
            },
            "a line or line-arc lead needs a straight part: lead_length is missing or 0".into(),
            "set lead_length above 0, or choose lead = \"arc\"",
        ));
    }
    if matches!(kind, LeadKind::Arc | LeadKind::LineArc) && radius <= 0.0 {
        return Err(c.fail(
            if raw.lead_radius.is_some() {
                "lead_radius"
            } else {
                "lead"
            },
            "an arc or line-arc lead needs an arc: lead_radius is missing or 0".into(),
            "set lead_radius above 0, or choose lead = \"line\"",
        ));
    }
    let units = raw.units;
    Ok(LeadOptions {
        kind,
        length: units.to_mm(length),
        radius: units.to_mm(radius),
        overcut: units.to_mm(overcut),
        lead_out: raw.lead_out.unwrap_or(kind != LeadKind::Straight),
    })
}

/// Checks one line of a start or end block: printable ASCII, no `%`, no nested or unclosed
/// comments (NISTIR 6556 §3.3.4), not too long, and no program end (conicut writes M30 itself).
fn check_block_line(line: &str) -> Result<(), String> {
    if line.len() > MAX_BLOCK_LINE {
        return Err(format!("longer than {MAX_BLOCK_LINE} characters"));
    }
    if let Some(c) = line.chars().find(|c| !(c.is_ascii_graphic() || *c == ' ')) {
        return Err(format!(
            "holds the character {c:?}; only printable ASCII is allowed"
        ));
    }
    if line.contains('%') {
        return Err("holds '%', which marks the start and end of the tape".into());
    }
    let mut depth = 0;
    let mut words = String::new();
    for c in line.chars() {
        match c {
            '(' if depth == 0 => depth = 1,
            '(' => return Err("holds a nested comment".into()),
            ')' if depth == 1 => depth = 0,
            ')' => return Err("holds ')' without '('".into()),
            _ if depth == 0 => words.push(c.to_ascii_uppercase()),
            _ => {}
        }
    }
    if depth != 0 {
        return Err("holds a comment that is not closed on the line".into());
    }
    let compact: String = words.chars().filter(|c| !c.is_whitespace()).collect();
    let bytes = compact.as_bytes();
    for (i, &c) in bytes.iter().enumerate() {
        if c != b'M' {
            continue;
        }
        let digits: String = compact[i + 1..]
            .chars()
            .take_while(|c| c.is_ascii_digit())
            .collect();
        if let Ok(n) = digits.parse::<u32>()
            && (n == 2 || n == 30)
        {
            return Err(format!(
                "holds the program end M{n}; conicut writes M30 at the end itself"
            ));
        }
    }
    Ok(())
}

/// What is wrong with a profile, and where.
#[derive(Debug, Clone, PartialEq)]
pub struct ProfileError {
    /// The file name given to [`MachineProfile::from_toml`].
    pub file: String,
    /// 1-based line of the problem, when known.
    pub line: Option<usize>,
    /// The key at fault, when known (`travel.x_min` for keys inside `[travel]`).
    pub key: Option<String>,
    pub problem: String,
    /// What to do about it.
    pub hint: String,
}

impl fmt::Display for ProfileError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "machine profile {}", self.file)?;
        if let Some(line) = self.line {
            write!(f, ", line {line}")?;
        }
        if let Some(key) = &self.key {
            write!(f, ", key `{key}`")?;
        }
        write!(f, ": {}", self.problem)?;
        if !self.hint.is_empty() {
            write!(f, "; {}", self.hint)?;
        }
        Ok(())
    }
}

impl std::error::Error for ProfileError {}

/// Turns a TOML or serde error into a [`ProfileError`], using the error's span for the line and
/// the message or the line's text for the key.
fn from_toml_error(e: &toml::de::Error, text: &str, file_name: &str) -> ProfileError {
    let message = e.message().trim().to_string();
    let line = e.span().map(|span| line_of_offset(text, span.start));
    let quoted = message.split('`').nth(1).map(str::to_string);
    if message.starts_with("missing field") {
        // The span of a missing key covers its whole table, so no line is given.
        let table = line.map(|l| table_of_line(text, l)).unwrap_or_default();
        return ProfileError {
            file: file_name.to_string(),
            line: None,
            key: quoted.map(|k| {
                if table.is_empty() {
                    k
                } else {
                    format!("{table}.{k}")
                }
            }),
            problem: message,
            hint:
                "add the key; machine-profiles/ holds a commented example for each kind of machine"
                    .into(),
        };
    }
    let (key, hint) = if message.starts_with("unknown field") {
        (
            quoted,
            "check the spelling; the example for your kind of machine in machine-profiles/ lists every key",
        )
    } else if message.starts_with("unknown variant") {
        (
            line.and_then(|l| key_on_line(text, l)),
            "use one of the values the message lists",
        )
    } else {
        (
            line.and_then(|l| key_on_line(text, l)),
            "fix the value or the TOML syntax on that line",
        )
    };
    ProfileError {
        file: file_name.to_string(),
        line,
        key: key.map(|k| qualify_key(text, line, &k)),
        problem: message,
        hint: hint.to_string(),
    }
}

/// 1-based line number of a byte offset.
fn line_of_offset(text: &str, offset: usize) -> usize {
    text.as_bytes()[..offset.min(text.len())]
        .iter()
        .filter(|&&b| b == b'\n')
        .count()
        + 1
}

/// The key assigned on a 1-based line (`key = value`), if any.
fn key_on_line(text: &str, line: usize) -> Option<String> {
    let l = text.lines().nth(line.checked_sub(1)?)?;
    let (key, _) = l.split_once('=')?;
    let key = key.trim().trim_matches('"');
    (!key.is_empty() && !key.starts_with('[')).then(|| key.to_string())
}

/// The table (e.g. `travel`) that a 1-based line belongs to; empty for the root table.
fn table_of_line(text: &str, line: usize) -> String {
    let mut table = String::new();
    for l in text.lines().take(line) {
        let t = l.trim();
        if t.starts_with('[') {
            table = t.trim_matches(|c| c == '[' || c == ']').trim().to_string();
        }
    }
    table
}

fn qualify_key(text: &str, line: Option<usize>, key: &str) -> String {
    match line.map(|l| table_of_line(text, l)) {
        Some(table) if !table.is_empty() && !key.contains('.') => format!("{table}.{key}"),
        _ => key.to_string(),
    }
}

/// The 1-based line on which `key` is set: a root key such as `cut_feed`, or a dotted key such
/// as `travel.x_min` for a key inside a table.
fn find_key_line(text: &str, key: &str) -> Option<usize> {
    let (wanted_table, key) = key.rsplit_once('.').unwrap_or(("", key));
    let mut table = String::new();
    for (i, l) in text.lines().enumerate() {
        let t = l.trim();
        if t.starts_with('[') {
            table = t.trim_matches(|c| c == '[' || c == ']').trim().to_string();
            continue;
        }
        if table != wanted_table {
            continue;
        }
        if let Some((k, _)) = t.split_once('=')
            && k.trim().trim_matches('"') == key
        {
            return Some(i + 1);
        }
    }
    None
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shipped_metric_mill_profile_loads() {
        let p = MachineProfile::metric_mill().unwrap();
        assert_eq!(p.kind(), MachineKind::Mill);
        assert_eq!(p.units(), Units::Millimetres);
        // docs/sources.md P1.6: 4 decimals for X Y and 3 for Z in mm.
        assert_eq!((p.xy_decimals(), p.z_decimals()), (4, 3));
        let s = p.spindle().expect("a mill has a spindle");
        assert!(s.retract_height < p.safe_height());
        assert_eq!(p.kerf_width(), None);
    }

    #[test]
    fn inch_defaults_follow_the_precision_table() {
        // docs/sources.md P1.6: 5 decimals for X Y and 4 for Z in inch.
        let text = METRIC_MILL_TOML
            .replace("units = \"mm\"", "units = \"in\"")
            .lines()
            .filter(|l| !l.starts_with("xy_decimals") && !l.starts_with("z_decimals"))
            .collect::<Vec<_>>()
            .join("\n");
        let p = MachineProfile::from_toml(&text, "inch.toml").unwrap();
        assert_eq!((p.xy_decimals(), p.z_decimals()), (5, 4));
    }

    #[test]
    fn block_lines_are_checked() {
        assert!(check_block_line("G54 (work offset)").is_ok());
        assert!(check_block_line("M3").is_ok());
        assert!(check_block_line("G0 X0 (a (b))").is_err());
        assert!(check_block_line("G0 X0 (open").is_err());
        assert!(check_block_line("M30").is_err());
        assert!(check_block_line("m 2").is_err());
        assert!(check_block_line("M300").is_ok());
        assert!(check_block_line("%").is_err());
        assert!(check_block_line("G0\tX1").is_err());
    }

    #[test]
    fn key_lines_are_found_in_the_right_table() {
        let text = "name = \"a\"\n[travel]\nx_min = 1\n";
        assert_eq!(find_key_line(text, "travel.x_min"), Some(3));
        assert_eq!(find_key_line(text, "x_min"), None);
        assert_eq!(find_key_line(text, "name"), Some(1));
        assert_eq!(find_key_line(text, "cut_feed"), None);
        assert_eq!(qualify_key(text, Some(3), "x_min"), "travel.x_min");
    }
}
