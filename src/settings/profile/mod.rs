//! Reading a machine profile from TOML (see `machine-profiles/` for an example of each kind).
//!
//! # ProgramUnits
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
//! | `program_extension` | all | the program file's extension: 1–8 letters or digits, no dot (default `nc`) |
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

mod checks;
mod raw;

use crate::plan::LeadOptions;
use crate::post::{Cutter, MachineProfile};
use crate::settings::toml_text::{key_on_line, line_of_offset, qualify_key, table_of_line};
use checks::{
    Checker, check_arc_form, check_blocks, check_cutter, check_decimals, check_extension,
    check_feeds, check_leads, check_name, check_travel,
};
use raw::RawProfile;
use std::fmt;

/// The generic metric mill profile shipped in `machine-profiles/metric-mill.toml`.
pub const METRIC_MILL_TOML: &str = include_str!("../../../machine-profiles/metric-mill.toml");

/// The profiles shipped in `machine-profiles/`: file name (relative to the crate) and text. All
/// their values are invented examples (each file says so).
pub const BUNDLED_PROFILES: [(&str, &str); 5] = [
    ("machine-profiles/metric-mill.toml", METRIC_MILL_TOML),
    (
        "machine-profiles/inch-router.toml",
        include_str!("../../../machine-profiles/inch-router.toml"),
    ),
    (
        "machine-profiles/laser.toml",
        include_str!("../../../machine-profiles/laser.toml"),
    ),
    (
        "machine-profiles/plasma.toml",
        include_str!("../../../machine-profiles/plasma.toml"),
    ),
    (
        "machine-profiles/waterjet.toml",
        include_str!("../../../machine-profiles/waterjet.toml"),
    ),
];

/// A machine profile as read: the words and limits the post stage writes with, and the defaults
/// the resolver gives the planner when the job does not say.
#[derive(Debug, Clone, PartialEq)]
pub struct Machine {
    pub profile: MachineProfile,
    pub defaults: MachineDefaults,
}

/// The profile's defaults for the planner, in **millimetres** (converted from the profile's
/// units); the resolver is their only reader.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct MachineDefaults {
    /// The lead-in, overcut and lead-out used when neither the command line nor the job file
    /// gives one.
    pub leads: LeadOptions,
    /// Laser, plasma and waterjet: the pierce point's least distance from every finished edge
    /// (0 when the profile gives none); `None` for mills and routers.
    pub pierce_clearance: Option<f64>,
}

impl Machine {
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
        check_name(&raw, &c)?;
        let arc_form = check_arc_form(&raw, &c)?;
        let (xy_decimals, z_decimals, feed_decimals) = check_decimals(&raw, &c, arc_form)?;
        check_feeds(&raw, &c)?;
        check_travel(&raw, &c)?;
        let cutter = check_cutter(&raw, &c)?;
        let leads = check_leads(&raw, &c)?;
        let pierce_clearance = check_pierce_clearance(&raw, &c, &cutter)?;
        check_blocks(&raw, &c)?;
        let profile = MachineProfile {
            name: raw.name.trim().to_string(),
            kind: raw.kind,
            units: raw.units,
            arc_form,
            xy_decimals,
            z_decimals,
            feed_decimals,
            line_numbers: raw.line_numbers,
            program_extension: check_extension(&raw, &c)?,
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
        };
        Ok(Machine {
            profile,
            defaults: MachineDefaults {
                leads,
                pierce_clearance,
            },
        })
    }

    /// The generic metric mill shipped with conicut (`machine-profiles/metric-mill.toml`).
    pub fn metric_mill() -> Result<Self, ProfileError> {
        Self::from_toml(METRIC_MILL_TOML, "machine-profiles/metric-mill.toml")
    }
}

impl MachineProfile {
    /// Reads and checks a profile ([`Machine::from_toml`]) and keeps what the post stage uses.
    pub fn from_toml(text: &str, file_name: &str) -> Result<Self, ProfileError> {
        Machine::from_toml(text, file_name).map(|m| m.profile)
    }

    /// The generic metric mill's words and limits ([`Machine::metric_mill`]).
    pub fn metric_mill() -> Result<Self, ProfileError> {
        Machine::metric_mill().map(|m| m.profile)
    }
}

/// Cut-through kinds: the pierce point's least distance from the finished edges in mm
/// (default 0); `None` for a spindle.
fn check_pierce_clearance(
    raw: &RawProfile,
    c: &Checker,
    cutter: &Cutter,
) -> Result<Option<f64>, ProfileError> {
    Ok(match cutter {
        Cutter::Process(_) => Some(raw.units.to_mm(c.not_negative(
            "pierce_clearance",
            raw.pierce_clearance.unwrap_or(0.0),
            "give the pierce point's least distance from the finished edge: one kerf plus the \
             pierce crater, or 0",
        )?)),
        Cutter::Spindle(_) => None,
    })
}

/// What is wrong with a profile, and where.
#[derive(Debug, Clone, PartialEq)]
pub struct ProfileError {
    /// The file name given to [`Machine::from_toml`].
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

/// The TOML library's names of Rust types in a message, said in the user's words (`expected
/// usize` is "expected a whole number, 0 or more").
fn in_plain_words(message: &str) -> String {
    let mut m = message.to_string();
    for (rust, plain) in [
        ("usize", "a whole number, 0 or more"),
        ("u64", "a whole number, 0 or more"),
        ("u32", "a whole number, 0 or more"),
        ("u16", "a whole number, 0 or more"),
        ("u8", "a whole number, 0 or more"),
        ("i64", "a whole number"),
        ("i32", "a whole number"),
        ("f64", "a number"),
        ("f32", "a number"),
    ] {
        m = m.replace(&format!("expected {rust}"), &format!("expected {plain}"));
    }
    m.replace("integer `", "the whole number `")
        .replace("invalid type: string", "the text")
        .replace("invalid type: ", "")
        .replace("invalid value: ", "")
}

/// Turns a TOML or serde error into a [`ProfileError`], using the error's span for the line and
/// the message or the line's text for the key.
fn from_toml_error(e: &toml::de::Error, text: &str, file_name: &str) -> ProfileError {
    let message = in_plain_words(e.message().trim());
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::post::{MachineKind, ProgramUnits};
    use checks::check_block_line;

    #[test]
    fn shipped_metric_mill_profile_loads() {
        let p = MachineProfile::metric_mill().unwrap();
        assert_eq!(p.kind(), MachineKind::Mill);
        assert_eq!(p.units(), ProgramUnits::Millimetres);
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
}
