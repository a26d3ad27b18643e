//! Writes the fitted cuts as one RS274/NGC program for one machine profile.

use super::entries::helical;
use super::error::PostError;
use super::header::header;
use super::number::format_number;
use super::profile::{Cutter, MachineProfile};
use super::refusals::{check_cut, check_feed, check_settings};
use super::setup::{ProgramSettings, Resolved, WorkOffset, Written};
use super::writer::{Writer, sanitize, units_point};
use crate::fit::FittedCut;

/// The largest line number (NISTIR 6556 §3.3.1: at most five digits).
pub(super) const MAX_LINE_NUMBER: u32 = 99_999;

/// Writes `cuts` as one program for `profile`.
///
/// Shape (NISTIR 6556, RS274/NGC): a `%` line; a header of comments (title, source, generator
/// and version, units, tool or kerf, depth, tolerance, feeds, heights, the direction of travel
/// read from the cuts, on mills and routers the entry and any finishing pass, one line per
/// feature, the safety block for the profile's kind of machine ending with the precedence
/// statement); a modal
/// line `G21|G20 G90 G17 G94 G40`; the profile's start block; a rapid to the safe height; then:
///
/// * **mill, router**: the spindle on with `S` (and a `G4 P` dwell if the profile asks); per cut
///   and per pass ([`pass_depths`](super::pass_depths); one pass at the full depth for a finishing cut,
///   [`FittedCut::full_depth_only`]) a rapid over the plunge point and down to the retract height,
///   the entry into the pass's depth at the plunge point (a straight plunge without a ramp angle;
///   with one a helix, or a zig-zag ramp, see `Writer::enter`), then the runs of the cut at the
///   cut feed; a rapid back to the safe height; at the end the spindle off.
/// * **laser, plasma, waterjet**: per cut a rapid at the safe height over the pierce point
///   (the cut's plunge point), a rapid down to the pierce height, the process on, the pierce
///   dwell `G4 P`, a feed down to the cut height at the plunge feed, a feed move to the path's
///   start and along the path at the cut feed, the process off, and a rapid up to the safe
///   height. There is no cut depth.
///
/// Then the profile's end block, `M30` and `%`.
///
/// Lines are `G1 X Y`; arcs are `G2`/`G3 X Y I J` in centre format (see the `arcs` module: arcs of
/// half a turn or more split in two, the centre corrected on the bisector of the rounded end
/// points, the radius rule of NISTIR 6556 §3.5.3.2 verified on the written numbers). F is written
/// only when it changes. Moves that round to no movement are left out. Every number has fixed
/// decimals ([`format_number`]).
///
/// Refuses (with a message naming the feature, the coordinate and what to do): bad settings, arcs
/// for a lines-only profile, an arc that cannot keep the radius rule, any point outside the
/// profile's travel envelope (checked on the exact value in the profile's units, arcs by their
/// extremes), any feed above the profile's `max_feed` (lines and arcs use the cut feed), a
/// spindle speed above its `max_spindle_speed`.
pub fn write_program(
    cuts: &[FittedCut],
    profile: &MachineProfile,
    settings: &ProgramSettings,
) -> Result<String, PostError> {
    if cuts.is_empty() {
        return Err(PostError::NoCuts);
    }
    check_settings(settings, profile.cutter())?;
    let r = resolve(profile, settings)?;
    for cut in cuts {
        check_cut(cut, profile, &r)?;
    }
    let (body, written) = write_body(cuts, profile, settings, &r)?;
    let head = header(cuts, &written, profile, settings, &r);
    Ok(assemble(&head, &body))
}

/// The feeds and spindle speed of `settings` (or the profile's), refused above the profile's
/// limits, in the profile's units.
fn resolve(profile: &MachineProfile, settings: &ProgramSettings) -> Result<Resolved, PostError> {
    let units = profile.units();
    let cut_feed = settings
        .cut_feed
        .map_or(profile.cut_feed(), |f| units.from_mm(f));
    let plunge_feed = settings
        .plunge_feed
        .map_or(profile.plunge_feed(), |f| units.from_mm(f));
    check_feed(profile, "cut feed", cut_feed)?;
    let plunge_name = match profile.cutter() {
        Cutter::Spindle(_) => "plunge feed",
        Cutter::Process(_) => "feed down to the cut height",
    };
    check_feed(profile, plunge_name, plunge_feed)?;
    let mut spindle_speed = 0.0;
    if let Cutter::Spindle(s) = profile.cutter() {
        spindle_speed = settings.spindle_speed.unwrap_or(s.speed);
        if spindle_speed > s.max_speed {
            return Err(PostError::SpindleTooFast {
                value: format_number(spindle_speed, 0),
                max: format_number(s.max_speed, 0),
                profile: profile.name().to_string(),
            });
        }
    }
    Ok(Resolved {
        cut_feed,
        plunge_feed,
        spindle_speed,
        floor: -units.from_mm(settings.depth),
        tool_diameter: settings.tool_diameter,
        helical: helical(settings, profile),
    })
}

/// The program's blocks after the header: the opening, every cut, the closing; and what was
/// written for each cut.
fn write_body(
    cuts: &[FittedCut],
    profile: &MachineProfile,
    settings: &ProgramSettings,
    r: &Resolved,
) -> Result<(Vec<String>, Vec<Written>), PostError> {
    let mut w = Writer::new(profile);
    w.opening(r, settings.work_offset);
    let mut written = Vec::new();
    for (i, cut) in cuts.iter().enumerate() {
        w.heading(&format!(
            "cut {} of {}: {}",
            i + 1,
            cuts.len(),
            sanitize(&cut.name)
        ));
        written.push(w.cut(cut, settings, r)?);
    }
    w.closing();
    if w.line_number > MAX_LINE_NUMBER + 10 {
        return Err(PostError::TooManyLineNumbers);
    }
    Ok((w.lines, written))
}

/// The whole program text: `%`, the header, the body, `%`.
fn assemble(head: &[String], body: &[String]) -> String {
    let mut out = String::from("%\n");
    for line in head.iter().chain(body) {
        out.push_str(line);
        out.push('\n');
    }
    out.push_str("%\n");
    out
}

impl Writer<'_> {
    /// The modal line, the profile's start block, a rapid to the safe height, and on a mill or
    /// router the spindle on (and its delay).
    fn opening(&mut self, r: &Resolved, work_offset: Option<WorkOffset>) {
        let profile = self.profile;
        self.block(format!("{} G90 G17 G94 G40", profile.units().g_word()));
        let (start_block, replaced) = with_work_offset(profile.start_block(), work_offset);
        if let (Some(offset), false) = (work_offset, replaced) {
            self.block(offset.word());
        }
        for line in start_block {
            self.block(line);
        }
        self.rapid_z(profile.safe_height());
        if let Cutter::Spindle(s) = profile.cutter() {
            let speed = format_number(r.spindle_speed, 0);
            self.block(format!("{} S{speed}", s.on));
            self.dwell(s.delay);
            self.spindle = Some(speed);
        }
    }

    /// One cut from the safe height back to it: over the plunge point, then its passes (mill,
    /// router) or its pierce sequence (laser, plasma, waterjet).
    fn cut(
        &mut self,
        cut: &FittedCut,
        settings: &ProgramSettings,
        r: &Resolved,
    ) -> Result<Written, PostError> {
        let profile = self.profile;
        let safe = profile.safe_height();
        self.rapid_z(safe);
        self.rapid_xy(units_point(profile.units(), cut.plunge));
        if let Cutter::Spindle(s) = profile.cutter() {
            // A feature's own speed (or the job's again after one): S alone changes the speed
            // of the running spindle; the profile's spindle delay lets it settle.
            let speed = format_number(r.spindle_speed_of(cut), 0);
            if self.spindle.as_deref() != Some(speed.as_str()) {
                self.block(format!("S{speed}"));
                self.dwell(s.delay);
                self.spindle = Some(speed);
            }
        }
        let done = match profile.cutter() {
            Cutter::Spindle(s) => self.passes(cut, s, settings, r)?,
            Cutter::Process(p) => self.pierced(cut, p, r)?,
        };
        self.rapid_z(safe);
        Ok(done)
    }

    /// On a mill or router the spindle off; the profile's end block and `M30`.
    fn closing(&mut self) {
        let profile = self.profile;
        if let Cutter::Spindle(s) = profile.cutter() {
            self.block(s.off.clone());
        }
        for line in profile.end_block() {
            self.block(line.clone());
        }
        self.block("M30".to_string());
    }
}

/// The profile's start block with every G54–G59 word replaced by `offset` (when given), and
/// whether one was there to replace.
fn with_work_offset(block: &[String], offset: Option<WorkOffset>) -> (Vec<String>, bool) {
    let Some(offset) = offset else {
        return (block.to_vec(), false);
    };
    let mut replaced = false;
    let lines = block
        .iter()
        .map(|line| {
            let words: Vec<String> = line
                .split(' ')
                .map(|w| {
                    let is_offset = w.len() == 3
                        && w.starts_with(['G', 'g'])
                        && w[1..].parse::<u8>().is_ok_and(|n| (54..=59).contains(&n));
                    if is_offset {
                        replaced = true;
                        offset.word()
                    } else {
                        w.to_string()
                    }
                })
                .collect();
            words.join(" ")
        })
        .collect();
    (lines, replaced)
}
