//! The checks on a profile's values: each failure names the key, its line, what is wrong and
//! what to do.

use super::ProfileError;
use super::raw::{PROCESS_KEYS, RawProfile, SPINDLE_KEYS, on_off_keys};
use crate::plan::{LeadKind, LeadOptions};
use crate::post::{
    ArcForm, Cutter, MAX_DECIMALS, MachineKind, Process, ProgramUnits, Spindle, format_limit,
};
use crate::settings::toml_text::find_key_line;

/// The longest start or end block line a profile may hold (the program line limit is 256,
/// NISTIR 6556 §3.3; the rest is left for a line number).
const MAX_BLOCK_LINE: usize = 200;

pub(super) struct Checker<'a> {
    pub(super) text: &'a str,
    pub(super) file: &'a str,
}

impl Checker<'_> {
    pub(super) fn fail(&self, key: &str, problem: String, hint: &str) -> ProfileError {
        ProfileError {
            file: self.file.to_string(),
            line: find_key_line(self.text, key),
            key: Some(key.to_string()),
            problem,
            hint: hint.to_string(),
        }
    }

    /// A kind-specific key that must be present.
    pub(super) fn need<T>(
        &self,
        value: Option<T>,
        key: &str,
        kind: MachineKind,
    ) -> Result<T, ProfileError> {
        value.ok_or_else(|| ProfileError {
            file: self.file.to_string(),
            line: None,
            key: Some(key.to_string()),
            problem: format!("missing key `{key}`, which a {kind} profile needs"),
            hint: "add it; machine-profiles/ holds a commented example for each kind of machine"
                .into(),
        })
    }

    pub(super) fn positive(&self, key: &str, value: f64) -> Result<f64, ProfileError> {
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

    pub(super) fn not_negative(
        &self,
        key: &str,
        value: f64,
        hint: &str,
    ) -> Result<f64, ProfileError> {
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
    pub(super) fn words(&self, key: &str, line: &str) -> Result<String, ProfileError> {
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

/// Checks the keys of the profile's kind of machine, refuses those of the other kinds, and
/// builds its [`Cutter`].
pub(super) fn check_cutter(raw: &RawProfile, c: &Checker) -> Result<Cutter, ProfileError> {
    refuse_foreign_keys(raw, c)?;
    let kind = raw.kind;
    let own_on_off = on_off_keys(kind);
    let (on_key, off_key) = own_on_off.unwrap_or(("spindle_on", "spindle_off"));
    let (on, off) = raw.on_off(kind);
    let on = c.words(on_key, c.need(on, on_key, kind)?)?;
    let off = c.words(off_key, c.need(off, off_key, kind)?)?;

    match own_on_off {
        None => spindle(raw, c, on, off),
        Some(_) => process(raw, c, on, off),
    }
}

/// Refuses a key that belongs to another kind of machine.
fn refuse_foreign_keys(raw: &RawProfile, c: &Checker) -> Result<(), ProfileError> {
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
    Ok(())
}

/// A mill's or router's spindle keys.
fn spindle(raw: &RawProfile, c: &Checker, on: String, off: String) -> Result<Cutter, ProfileError> {
    let kind = raw.kind;
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

/// A laser's, plasma table's or waterjet's process keys.
fn process(raw: &RawProfile, c: &Checker, on: String, off: String) -> Result<Cutter, ProfileError> {
    let kind = raw.kind;
    let pierce_dwell = c.not_negative(
        "pierce_dwell",
        c.need(raw.pierce_dwell, "pierce_dwell", kind)?,
        "give the seconds to wait after switching on, from the process chart, or 0",
    )?;
    let pierce_height = c.positive(
        "pierce_height",
        c.need(raw.pierce_height, "pierce_height", kind)?,
    )?;
    let cut_height = c.positive("cut_height", c.need(raw.cut_height, "cut_height", kind)?)?;
    let kerf_width = c.positive("kerf_width", c.need(raw.kerf_width, "kerf_width", kind)?)?;
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

/// Reads the lead keys: the shape, lengths not negative (a line lead needs a length above 0, an
/// arc lead a radius above 0), converted to mm. Left out: a straight lead, no overcut, no
/// lead-out.
pub(super) fn check_leads(raw: &RawProfile, c: &Checker) -> Result<LeadOptions, ProfileError> {
    let kind = match raw.lead.as_deref() {
        None => LeadKind::Straight,
        Some(word) => word.parse::<LeadKind>().map_err(|bad| {
            c.fail(
                "lead",
                format!("\"{}\" is not a lead shape", bad.word),
                &format!("use {}", bad.allowed),
            )
        })?,
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
pub(super) fn check_block_line(line: &str) -> Result<(), String> {
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

/// The profile has a name.
pub(super) fn check_name(raw: &RawProfile, c: &Checker) -> Result<(), ProfileError> {
    if raw.name.trim().is_empty() {
        return Err(c.fail(
            "name",
            "the name is empty".into(),
            "give the profile a short name such as \"metric mill\"",
        ));
    }
    Ok(())
}

/// The program file's extension: `nc` unless given; 1–8 ASCII letters or digits (a leading dot
/// is dropped), so that it is a plain extension on every file system.
pub(super) fn check_extension(raw: &RawProfile, c: &Checker) -> Result<String, ProfileError> {
    let Some(given) = &raw.program_extension else {
        return Ok("nc".to_string());
    };
    let e = given.trim().trim_start_matches('.');
    if e.is_empty() || e.len() > 8 || !e.chars().all(|ch| ch.is_ascii_alphanumeric()) {
        return Err(c.fail(
            "program_extension",
            format!("\"{given}\" is not a plain file extension"),
            "give 1 to 8 letters or digits without the dot, such as \"nc\", \"ngc\" or \"tap\"",
        ));
    }
    // The other outputs' extensions: the program would take their names.
    if ["svg", "html", "json", "txt", "dxf"]
        .iter()
        .any(|o| e.eq_ignore_ascii_case(o))
    {
        return Err(c.fail(
            "program_extension",
            format!("\"{given}\" is the extension of another output (the preview, page, reports or drawing)"),
            "give another, such as \"nc\", \"ngc\" or \"tap\"",
        ));
    }
    Ok(e.to_string())
}

/// The arc form: centre offsets or lines; the radius form is refused.
pub(super) fn check_arc_form(raw: &RawProfile, c: &Checker) -> Result<ArcForm, ProfileError> {
    Ok(match raw.arc_form.trim() {
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
    })
}

/// The decimals for X Y, Z and feeds (defaults by units), within the limits and fine enough
/// for arcs.
pub(super) fn check_decimals(
    raw: &RawProfile,
    c: &Checker,
    arc_form: ArcForm,
) -> Result<(usize, usize, usize), ProfileError> {
    let (xy_default, z_default, feed_default) = match raw.units {
        ProgramUnits::Millimetres => (4, 3, 1),
        ProgramUnits::Inches => (5, 4, 2),
    };
    let xy_decimals = raw.xy_decimals.unwrap_or(xy_default);
    let z_decimals = raw.z_decimals.unwrap_or(z_default);
    let feed_decimals = raw.feed_decimals.unwrap_or(feed_default);
    // docs/sources.md P1.6: with fewer decimals the two radii of an arc cannot be
    // kept within 0.002 mm (0.0002 in) of each other.
    let min_arc_decimals = match raw.units {
        ProgramUnits::Millimetres => 3,
        ProgramUnits::Inches => 4,
    };
    for (key, value) in [
        ("xy_decimals", xy_decimals),
        ("z_decimals", z_decimals),
        ("feed_decimals", feed_decimals),
    ] {
        if value > MAX_DECIMALS {
            // The same range the smallest-count check below holds X and Y to.
            let least = if key == "xy_decimals" && arc_form == ArcForm::CentreOffsets {
                min_arc_decimals
            } else {
                0
            };
            return Err(c.fail(
                key,
                format!("{value} decimals is more than the {MAX_DECIMALS} allowed"),
                &format!(
                    "use {least} to {MAX_DECIMALS} (4 for mm and 5 for inch suit most controllers)"
                ),
            ));
        }
    }
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

    Ok((xy_decimals, z_decimals, feed_decimals))
}

/// Feeds and heights positive, feeds at most `max_feed`, `max_feed` at most the rapid rate.
pub(super) fn check_feeds(raw: &RawProfile, c: &Checker) -> Result<(), ProfileError> {
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

    Ok(())
}

/// Finite, ordered travel limits, and the safe height inside them.
pub(super) fn check_travel(raw: &RawProfile, c: &Checker) -> Result<(), ProfileError> {
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

    Ok(())
}

/// Start and end blocks of plain RS274 words.
pub(super) fn check_blocks(raw: &RawProfile, c: &Checker) -> Result<(), ProfileError> {
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

    Ok(())
}
