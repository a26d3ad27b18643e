//! Writes the fitted cuts as one RS274/NGC program for one machine profile.

use super::arcs::{Piece, arc_extremes, arc_pieces};
use super::number::format_number;
use super::profile::{
    ArcForm, CommentStyle, Cutter, DwellUnit, MachineKind, MachineProfile, Process, Spindle, Units,
    radius_rule,
};
use super::safety::{PRECEDENCE, SAFETY_HEADING, cautions};
use crate::fit::FittedCut;
use crate::geom::Move;
use crate::geom::Point;
use crate::plan::{CutSide, FeatureKind};

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

/// Why a program was not written.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PostError {
    #[error("there are no cuts to write; check that the drawing holds bays, holes or an outline")]
    NoCuts,
    #[error(
        "feature \"{feature}\": its path holds arcs, but machine profile \"{profile}\" writes straight moves only (arc_form = \"lines\"). Fit the path with lines for this profile, or set arc_form = \"centre\" if the machine reads G2/G3 with I and J"
    )]
    ArcsNotAllowed { feature: String, profile: String },
    #[error(
        "feature \"{feature}\": an arc ending at {at} cannot be written with {decimals} decimals so that its start and end radii agree within {limit} {units} (NISTIR 6556 §3.5.3.2), even halved {splits} times (best difference {mismatch} {units}). Give the profile more xy_decimals, or fit the path with lines",
        limit = radius_rule(*.units),
        splits = super::arcs::MAX_SPLITS
    )]
    ArcRadiusMismatch {
        feature: String,
        /// The arc's end as written, e.g. `X12.345 Y6.780`.
        at: String,
        decimals: usize,
        /// The smallest radius difference found, in the program's units.
        mismatch: String,
        units: Units,
    },
    #[error("{setting} is {value}, which {problem}; {hint}")]
    BadSetting {
        setting: &'static str,
        value: f64,
        problem: &'static str,
        hint: &'static str,
    },
    #[error(
        "feature \"{feature}\": its path has {points} points; a closed path needs at least 2. This is a bug in the fitting stage; please report it with the drawing"
    )]
    EmptyPath { feature: String, points: usize },
    #[error(
        "feature \"{feature}\": a coordinate of {what} is not a finite number. This is a bug in an earlier stage; please report it with the drawing"
    )]
    NotFinite { feature: String, what: &'static str },
    #[error(
        "feature \"{feature}\": {what} would move {axis} to {value} {units}, outside the machine's travel {axis} {limits} {units}. Move the work zero, check the drawing's units and the depth, or use a profile for a larger machine"
    )]
    OutsideEnvelope {
        feature: String,
        what: &'static str,
        axis: char,
        value: String,
        /// The allowed range, e.g. `-10.0000 .. 400.0000`.
        limits: String,
        units: Units,
    },
    #[error(
        "the {which} of {value} {units}/min is above the largest feed {max} {units}/min that profile \"{profile}\" allows. Give a lower feed, or correct max_feed in the profile if the machine can go faster"
    )]
    FeedTooHigh {
        which: &'static str,
        value: String,
        max: String,
        units: Units,
        profile: String,
    },
    #[error(
        "the spindle speed of {value} rpm is above the largest speed {max} rpm that profile \"{profile}\" allows. Give a lower speed, or correct max_spindle_speed in the profile"
    )]
    SpindleTooFast {
        value: String,
        max: String,
        profile: String,
    },
    #[error(
        "the program needs more than 99999 line numbers (NISTIR 6556 §3.3.1 allows 5 digits); set line_numbers = false in the profile or use a coarser tolerance"
    )]
    TooManyLineNumbers,
}

/// Longest comment text per line; longer text wraps onto further comment lines.
const COMMENT_WIDTH: usize = 100;

/// The largest line number (NISTIR 6556 §3.3.1: at most five digits).
const MAX_LINE_NUMBER: u32 = 99_999;

/// Feeds, heights and speeds of one program, resolved from the settings and the profile, in the
/// profile's units.
struct Resolved {
    cut_feed: f64,
    plunge_feed: f64,
    /// Spindle speed (rpm); mills and routers only.
    spindle_speed: f64,
    /// The floor of a mill or router cut (negative); unused by the other kinds.
    floor: f64,
    /// The tool diameter (mm), for the helix's reach.
    tool_diameter: f64,
    /// Whether entries may be helical.
    helical: bool,
}

/// What was written for one cut, for the header.
#[derive(Debug, Clone, Copy, Default)]
struct Written {
    lines: usize,
    arcs: usize,
}

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
///   and per pass ([`pass_depths`]; one pass at the full depth for a finishing cut,
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
    let r = Resolved {
        cut_feed,
        plunge_feed,
        spindle_speed,
        floor: -units.from_mm(settings.depth),
        tool_diameter: settings.tool_diameter,
        helical: helical(settings, profile),
    };
    for cut in cuts {
        check_cut(cut, profile, &r)?;
    }

    let mut w = Writer::new(profile);
    let mut written = Vec::new();
    w.block(format!("{} G90 G17 G94 G40", units.g_word()));
    for line in profile.start_block() {
        w.block(line.clone());
    }
    let safe = profile.safe_height();
    w.rapid_z(safe);
    if let Cutter::Spindle(s) = profile.cutter() {
        w.block(format!("{} S{}", s.on, format_number(spindle_speed, 0)));
        w.dwell(s.delay);
    }
    for (i, cut) in cuts.iter().enumerate() {
        w.comment(&format!(
            "cut {} of {}: {}",
            i + 1,
            cuts.len(),
            sanitize(&cut.name)
        ));
        w.rapid_z(safe);
        w.rapid_xy(units_point(units, cut.plunge));
        let done = match profile.cutter() {
            Cutter::Spindle(s) => {
                let floors = if cut.full_depth_only {
                    vec![settings.depth]
                } else {
                    pass_depths(settings.depth, settings.stepdown)
                };
                let tab_top = -units.from_mm(settings.depth - settings.tab_height);
                let mut done = Written::default();
                let mut z_prev = 0.0;
                let passes = floors.len();
                for (k, depth) in floors.into_iter().enumerate() {
                    let z = -units.from_mm(depth);
                    if passes > 1 {
                        w.comment(&format!("pass {} of {passes}", k + 1));
                    }
                    w.rapid_z(s.retract_height);
                    w.rapid_xy(units_point(units, cut.plunge));
                    // Down to the top of the stock, or to the floor the last pass left around
                    // the plunge point, then into the new depth.
                    if settings.ramp_angle_deg.is_some() {
                        w.feed_z(z_prev, plunge_feed);
                    }
                    let consumed = w.enter(cut, settings, z_prev, z, plunge_feed)?;
                    let tabs = if cut.tabs.is_empty() || z >= tab_top {
                        None
                    } else {
                        Some((tab_top, z))
                    };
                    done = w.cut_runs(cut, consumed, cut_feed, tabs)?;
                    z_prev = z;
                }
                w.rapid_z(s.retract_height);
                done
            }
            Cutter::Process(p) => {
                w.rapid_z(p.pierce_height);
                w.block(p.on.clone());
                w.dwell(p.pierce_dwell);
                w.feed_z(p.cut_height, plunge_feed);
                let gaps = (!cut.tabs.is_empty()).then_some(p);
                let done = w.cut_runs_process(cut, cut_feed, plunge_feed, gaps)?;
                w.block(p.off.clone());
                done
            }
        };
        w.rapid_z(safe);
        written.push(done);
    }
    if let Cutter::Spindle(s) = profile.cutter() {
        w.block(s.off.clone());
    }
    for line in profile.end_block() {
        w.block(line.clone());
    }
    w.block("M30".to_string());
    if w.line_number > MAX_LINE_NUMBER + 10 {
        return Err(PostError::TooManyLineNumbers);
    }

    let mut out = String::from("%\n");
    for line in header(cuts, &written, profile, settings, &r) {
        out.push_str(&line);
        out.push('\n');
    }
    for line in &w.lines {
        out.push_str(line);
        out.push('\n');
    }
    out.push_str("%\n");
    Ok(out)
}

fn check_settings(s: &ProgramSettings, cutter: &Cutter) -> Result<(), PostError> {
    let positive = |setting, value: f64, hint| {
        if value.is_finite() && value > 0.0 {
            Ok(())
        } else {
            Err(PostError::BadSetting {
                setting,
                value,
                problem: "is not a positive number",
                hint,
            })
        }
    };
    match cutter {
        Cutter::Spindle(_) => {
            positive(
                "the tool diameter",
                s.tool_diameter,
                "give the cutter's diameter in mm",
            )?;
            positive(
                "the cut depth",
                s.depth,
                "give the depth below the work zero as a positive number of mm",
            )?;
            if let Some(f) = s.spindle_speed {
                positive("the spindle speed", f, "give the speed in rpm")?;
            }
            if let Some(a) = s.ramp_angle_deg
                && !(a > 0.0 && a <= 45.0)
            {
                return Err(PostError::BadSetting {
                    setting: "the ramp angle",
                    value: a,
                    problem: "is not between 0 and 45 degrees",
                    hint: "give the ramp angle in degrees, e.g. 3",
                });
            }
            if let Some(f) = s.stepdown {
                positive(
                    "the stepdown",
                    f,
                    "give the depth of each pass as a positive number of mm",
                )?;
            }
        }
        Cutter::Process(_) => positive(
            "the kerf width",
            s.tool_diameter,
            "give the kerf width in mm, or leave it to the machine profile",
        )?,
    }
    positive(
        "the tolerance",
        s.tolerance,
        "give the tolerance in mm, e.g. 0.01",
    )?;
    if let Some(f) = s.cut_feed {
        positive("the cut feed", f, "give the feed in mm/min")?;
    }
    if let Some(f) = s.plunge_feed {
        positive("the plunge feed", f, "give the feed in mm/min")?;
    }
    Ok(())
}

fn check_feed(profile: &MachineProfile, which: &'static str, feed: f64) -> Result<(), PostError> {
    if feed > profile.max_feed() {
        let d = profile.feed_decimals();
        return Err(PostError::FeedTooHigh {
            which,
            value: format_number(feed, d),
            max: format_number(profile.max_feed(), d),
            units: profile.units(),
            profile: profile.name().to_string(),
        });
    }
    Ok(())
}

/// Checks a cut before anything is written: arcs allowed, every number finite, every position
/// it visits (arcs by their extremes) inside the travel envelope, in the profile's units.
fn check_cut(cut: &FittedCut, profile: &MachineProfile, r: &Resolved) -> Result<(), PostError> {
    if cut.moves.is_empty() {
        return Err(PostError::EmptyPath {
            feature: cut.name.clone(),
            points: cut.moves.len() + 1,
        });
    }
    // Every run of the cut from where it starts: the clearing and lead-in from the plunge
    // point, the contour and overcut from the start, the lead-out from the overcut's end.
    let runs: [(Point, &[Move]); 5] = [
        (cut.plunge, &cut.clearing),
        (cut.lead_in_start(), &cut.lead_in),
        (cut.start, &cut.moves),
        (cut.start, &cut.overcut),
        (cut.lead_out_start(), &cut.lead_out),
    ];
    let has_arcs = runs
        .iter()
        .any(|(_, run)| run.iter().any(|m| matches!(m, Move::Arc { .. })));
    if has_arcs && profile.arc_form() == ArcForm::LinesOnly {
        return Err(PostError::ArcsNotAllowed {
            feature: cut.name.clone(),
            profile: profile.name().to_string(),
        });
    }
    if !cut.plunge.is_finite() {
        return Err(PostError::NotFinite {
            feature: cut.name.clone(),
            what: "the plunge point",
        });
    }
    let all_finite = runs.iter().all(|(from, run)| {
        from.is_finite()
            && run.iter().all(|m| match m {
                Move::Arc { to, center, .. } => to.is_finite() && center.is_finite(),
                Move::Line { to } => to.is_finite(),
            })
    });
    if !all_finite {
        return Err(PostError::NotFinite {
            feature: cut.name.clone(),
            what: "the path",
        });
    }
    let units = profile.units();
    let check = |what: &'static str, axis: char, value: f64| {
        let (min, max) = profile.travel().limits(axis);
        if value < min || value > max {
            let d = if axis == 'Z' {
                profile.z_decimals()
            } else {
                profile.xy_decimals()
            };
            return Err(PostError::OutsideEnvelope {
                feature: cut.name.clone(),
                what,
                axis,
                value: format_number(value, d),
                limits: format!("{} .. {}", format_number(min, d), format_number(max, d)),
                units,
            });
        }
        Ok(())
    };
    check("the safe height", 'Z', profile.safe_height())?;
    match profile.cutter() {
        Cutter::Spindle(s) => {
            check("the retract height", 'Z', s.retract_height)?;
            check("the cut depth", 'Z', r.floor)?;
        }
        Cutter::Process(p) => {
            check("the pierce height", 'Z', p.pierce_height)?;
            check("the cut height", 'Z', p.cut_height)?;
        }
    }
    let plunge = units_point(units, cut.plunge);
    let entry = match profile.cutter() {
        Cutter::Spindle(_) => "the plunge point",
        Cutter::Process(_) => "the pierce point",
    };
    check(entry, 'X', plunge.x)?;
    check(entry, 'Y', plunge.y)?;
    for (start, run) in runs {
        let mut from = units_point(units, start);
        check("the tool path", 'X', from.x)?;
        check("the tool path", 'Y', from.y)?;
        for m in run {
            let (what, points) = match *m {
                Move::Line { to } => ("the tool path", vec![units_point(units, to)]),
                Move::Arc { to, center, ccw } => (
                    "an arc of the tool path",
                    arc_extremes(
                        from,
                        units_point(units, to),
                        units_point(units, center),
                        ccw,
                    ),
                ),
            };
            for q in &points {
                check(what, 'X', q.x)?;
                check(what, 'Y', q.y)?;
            }
            from = units_point(units, m.end());
        }
    }
    // A helical entry reaches one helix radius round the plunge point.
    let helix = helix_radius(r.tool_diameter);
    if profile.spindle().is_some() && r.helical && cut.entry_room >= helix {
        let reach = units.from_mm(helix);
        for (dx, dy) in [(reach, 0.0), (-reach, 0.0), (0.0, reach), (0.0, -reach)] {
            check("the helical entry", 'X', plunge.x + dx)?;
            check("the helical entry", 'Y', plunge.y + dy)?;
        }
    }
    Ok(())
}

fn units_point(units: Units, p: Point) -> Point {
    Point::new(units.from_mm(p.x), units.from_mm(p.y))
}

/// The program body, with modal state so that F and repeated positions are not written again.
struct Writer<'p> {
    profile: &'p MachineProfile,
    lines: Vec<String>,
    line_number: u32,
    /// Last written X and Y as text, and as the controller reads them.
    xy: Option<(String, String, Point)>,
    /// Last written Z, as text.
    z: Option<String>,
    feed: Option<String>,
}

impl<'p> Writer<'p> {
    fn new(profile: &'p MachineProfile) -> Self {
        Writer {
            profile,
            lines: Vec::new(),
            line_number: 10,
            xy: None,
            z: None,
            feed: None,
        }
    }

    fn block(&mut self, words: String) {
        if self.profile.line_numbers() {
            self.lines.push(format!("N{} {words}", self.line_number));
            self.line_number += 10;
        } else {
            self.lines.push(words);
        }
    }

    fn comment(&mut self, text: &str) {
        for line in wrap(text, COMMENT_WIDTH) {
            self.lines
                .push(comment_line(self.profile.comment_style(), &line));
        }
    }

    fn feed_word(&mut self, feed: f64) -> String {
        let f = format_number(feed, self.profile.feed_decimals());
        if self.feed.as_deref() == Some(f.as_str()) {
            String::new()
        } else {
            self.feed = Some(f.clone());
            format!(" F{f}")
        }
    }

    /// `G4 P` for `seconds` in the profile's dwell unit; nothing for no dwell.
    fn dwell(&mut self, seconds: f64) {
        if seconds > 0.0 {
            self.block(format!(
                "G4 P{}",
                dwell_value(self.profile.dwell_unit(), seconds)
            ));
        }
    }

    fn rapid_z(&mut self, z: f64) {
        let z = format_number(z, self.profile.z_decimals());
        if self.z.as_deref() != Some(z.as_str()) {
            self.block(format!("G0 Z{z}"));
            self.z = Some(z);
        }
    }

    fn feed_z(&mut self, z: f64, feed: f64) {
        let z = format_number(z, self.profile.z_decimals());
        if self.z.as_deref() != Some(z.as_str()) {
            let f = self.feed_word(feed);
            self.block(format!("G1 Z{z}{f}"));
            self.z = Some(z);
        }
    }

    /// Where the controller is, as it read the last X and Y (`None` before any).
    fn position(&self) -> Option<Point> {
        self.xy.as_ref().map(|(_, _, p)| *p)
    }

    fn at(&self, x: &str, y: &str) -> bool {
        self.xy
            .as_ref()
            .is_some_and(|(wx, wy, _)| wx == x && wy == y)
    }

    fn written_xy(&self, p: Point) -> (String, String, Point) {
        let d = self.profile.xy_decimals();
        let (x, y) = (format_number(p.x, d), format_number(p.y, d));
        let back = Point::new(x.parse().unwrap_or(p.x), y.parse().unwrap_or(p.y));
        (x, y, back)
    }

    fn rapid_xy(&mut self, p: Point) {
        let (x, y, back) = self.written_xy(p);
        if !self.at(&x, &y) {
            self.block(format!("G0 X{x} Y{y}"));
            self.xy = Some((x, y, back));
        }
    }

    /// A feed move to `p`; returns whether a move was written (false when it rounds to no move).
    fn feed_xy(&mut self, p: Point, feed: f64) -> bool {
        let (x, y, back) = self.written_xy(p);
        self.feed_move(x, y, back, None, feed, None)
    }

    /// A run of feed moves from wherever the tool is (`from`, the run's exact start in mm),
    /// lines as `G1`, arcs as `G2`/`G3` in centre format. With `z`, the run descends linearly
    /// from the first to the second height (a ramp leg), each written block carrying its Z.
    /// Returns what was written.
    fn run(
        &mut self,
        feature: &str,
        from: Point,
        moves: &[Move],
        feed: f64,
        z: Option<(f64, f64)>,
    ) -> Result<Written, PostError> {
        let units = self.profile.units();
        let mut done = Written::default();
        let mut from = units_point(units, from);
        let count = moves.len().max(1) as f64;
        for (k, m) in moves.iter().enumerate() {
            let to = units_point(units, m.end());
            // The height at share `share` of this move, for a ramp leg.
            let z_at = |share: f64| z.map(|(z0, z1)| z0 + (z1 - z0) * (k as f64 + share) / count);
            match *m {
                Move::Line { .. } => {
                    let (x, y, back) = self.written_xy(to);
                    if self.feed_move(x, y, back, z_at(1.0), feed, None) {
                        done.lines += 1;
                    }
                }
                Move::Arc { center, ccw, .. } => {
                    let centre = units_point(units, center);
                    let written_start = self.position().unwrap_or(from);
                    let d = self.profile.xy_decimals();
                    let rule = radius_rule(units);
                    let pieces = arc_pieces(written_start, from, to, centre, ccw, d, rule)
                        .map_err(|broken| {
                            let (x, y, _) = self.written_xy(to);
                            PostError::ArcRadiusMismatch {
                                feature: feature.to_string(),
                                at: format!("X{x} Y{y}"),
                                decimals: d,
                                mismatch: format_number(broken.mismatch, d + 1),
                                units,
                            }
                        })?;
                    let n = pieces.len().max(1) as f64;
                    for (p, piece) in pieces.into_iter().enumerate() {
                        let zp = z_at((p + 1) as f64 / n);
                        match piece {
                            Piece::Line { x, y, end } => {
                                if self.feed_move(x, y, end, zp, feed, None) {
                                    done.lines += 1;
                                }
                            }
                            Piece::Arc {
                                x,
                                y,
                                i,
                                j,
                                ccw,
                                end,
                            } => {
                                let g = if ccw { "G3" } else { "G2" };
                                self.feed_move(x, y, end, zp, feed, Some((g, i, j)));
                                done.arcs += 1;
                            }
                        }
                    }
                }
            }
            from = to;
        }
        Ok(done)
    }

    /// One feed block to the written `x`, `y` (read back as `end`), descending to `z` if given,
    /// as `G1`, or as the arc `(G2|G3, I, J)`. A straight move that rounds to no movement and
    /// changes no height is left out; returns whether a block was written.
    fn feed_move(
        &mut self,
        x: String,
        y: String,
        end: Point,
        z: Option<f64>,
        feed: f64,
        arc: Option<(&str, String, String)>,
    ) -> bool {
        let zw = z.map(|v| format_number(v, self.profile.z_decimals()));
        let z_changes = zw.is_some() && zw != self.z;
        if arc.is_none() && self.at(&x, &y) && !z_changes {
            return false;
        }
        let z_word = zw
            .as_ref()
            .filter(|_| z_changes)
            .map_or(String::new(), |v| format!(" Z{v}"));
        let f = self.feed_word(feed);
        match arc {
            Some((g, i, j)) => self.block(format!("{g} X{x} Y{y}{z_word} I{i} J{j}{f}")),
            None => self.block(format!("G1 X{x} Y{y}{z_word}{f}")),
        }
        self.xy = Some((x, y, end));
        if z_changes {
            self.z = zw;
        }
        true
    }

    /// Into the material on a mill or router, at the plunge point, from `z_from` (where the tool
    /// is) down to `z_to`: straight down without a ramp angle; with one, a helix about the plunge
    /// point where the cut leaves room for it, otherwise a zig-zag along the first entry move
    /// (the first clearing move or the first lead-in move), never steeper than the angle. When
    /// that move is shorter than one output step and the plunge point is the contour's start (a
    /// path entered on itself), the zig-zag runs along the contour's first move instead, an even
    /// number of legs so that it ends at the start; only a cut with neither plunges straight.
    /// Returns how many entry moves the zig-zag has already made (0 or 1).
    fn enter(
        &mut self,
        cut: &FittedCut,
        settings: &ProgramSettings,
        z_from: f64,
        z_to: f64,
        feed: f64,
    ) -> Result<usize, PostError> {
        let Some(angle) = settings.ramp_angle_deg else {
            self.feed_z(z_to, feed);
            return Ok(0);
        };
        let units = self.profile.units();
        let drop = z_from - z_to;
        if drop <= 0.0 {
            return Ok(0);
        }
        let slope = angle.to_radians().tan();
        if helical(settings, self.profile) {
            let radius = helix_radius(settings.tool_diameter);
            if cut.entry_room >= radius {
                self.helix(cut, radius, z_from, z_to, slope, feed)?;
                return Ok(0);
            }
        }
        // A move shorter than one output step cannot carry a ramp.
        let step = 10f64.powi(-(self.profile.xy_decimals() as i32));
        let usable = |from: Point, m: &Move| units.from_mm(m.length(from)) >= step;
        let first = cut.clearing.first().or(cut.lead_in.first()).copied();
        if let Some(first) = first.filter(|m| usable(cut.plunge, m)) {
            // An odd number of legs ends at the move's end: forward, back, forward, ...
            self.zig_zag(cut, cut.plunge, first, z_from, z_to, slope, feed, true)?;
            return Ok(1);
        }
        // The tool stands on the contour's start with nothing to cut before it.
        let half_step = 0.5 * units.to_mm(step);
        let at_start = cut.clearing.is_empty()
            && cut.plunge.distance(cut.start) <= half_step
            && crate::geom::moves::total_length(cut.plunge, &cut.lead_in) <= half_step;
        match cut.moves.first().copied() {
            Some(first) if at_start && usable(cut.start, &first) => {
                // An even number of legs ends back at the contour's start.
                self.zig_zag(cut, cut.start, first, z_from, z_to, slope, feed, false)?;
            }
            _ => self.feed_z(z_to, feed),
        }
        Ok(0)
    }

    /// Back and forth along the move `m` from `from`, descending from `z_from` to `z_to` no
    /// steeper than `slope` along the move (each leg drops at most `slope` × its length): an odd
    /// number of legs, ending at the move's end, when `end_at_far_end`, else an even number,
    /// ending back at `from`.
    #[allow(clippy::too_many_arguments)]
    fn zig_zag(
        &mut self,
        cut: &FittedCut,
        from: Point,
        m: Move,
        z_from: f64,
        z_to: f64,
        slope: f64,
        feed: f64,
        end_at_far_end: bool,
    ) -> Result<(), PostError> {
        let units = self.profile.units();
        let length = units.from_mm(m.length(from));
        let drop = z_from - z_to;
        let mut legs = (drop / slope / length).ceil().max(1.0) as usize;
        if legs.is_multiple_of(2) == end_at_far_end {
            legs += 1;
        }
        let back = crate::geom::moves::reversed(from, &[m]).1;
        for k in 0..legs {
            let z0 = z_from - drop * k as f64 / legs as f64;
            let z1 = z_from - drop * (k + 1) as f64 / legs as f64;
            if k % 2 == 0 {
                self.run(&cut.name, from, &[m], feed, Some((z0, z1)))?;
            } else {
                self.run(&cut.name, m.end(), &back, feed, Some((z0, z1)))?;
            }
        }
        Ok(())
    }

    /// A helical entry about the plunge point: out to the helix at `radius` (mm), round it in
    /// half-turn arcs descending no steeper than `slope` along the arc to `z_to`, once more round
    /// at the floor, and back to the plunge point. It turns the way the cut does: counter-
    /// clockwise for a climb cut (the bore's wall on the right of travel: climb milling with a
    /// clockwise spindle), clockwise for a conventional one.
    fn helix(
        &mut self,
        cut: &FittedCut,
        radius: f64,
        z_from: f64,
        z_to: f64,
        slope: f64,
        feed: f64,
    ) -> Result<(), PostError> {
        let units = self.profile.units();
        let c = cut.plunge;
        let east = Point::new(c.x + radius, c.y);
        let west = Point::new(c.x - radius, c.y);
        let ccw = cut.scrap_left;
        let half_turn = units.from_mm(std::f64::consts::PI * radius);
        let drop = z_from - z_to;
        let halves = (drop / slope / half_turn).ceil().max(1.0) as usize;
        self.feed_xy(units_point(units, east), feed);
        let mut at = east;
        for k in 0..halves {
            let to = if at == east { west } else { east };
            let z0 = z_from - drop * k as f64 / halves as f64;
            let z1 = z_from - drop * (k + 1) as f64 / halves as f64;
            let arc = Move::Arc { to, center: c, ccw };
            self.run(&cut.name, at, &[arc], feed, Some((z0, z1)))?;
            at = to;
        }
        // Once round at the floor to clear the helix's bottom, then back to the centre.
        for _ in 0..2 {
            let to = if at == east { west } else { east };
            let arc = Move::Arc { to, center: c, ccw };
            self.run(&cut.name, at, &[arc], feed, None)?;
            at = to;
        }
        self.feed_xy(units_point(units, c), feed);
        Ok(())
    }

    /// The runs of a cut at one depth on a mill or router: the clearing and the lead-in (less the
    /// `skip` entry moves the ramp already made), the contour (rising to the tab top over each
    /// tab when `tabs` gives the tab top and the floor), the overcut and the lead-out, each after
    /// a comment naming it. Returns what the contour took.
    fn cut_runs(
        &mut self,
        cut: &FittedCut,
        skip: usize,
        feed: f64,
        tabs: Option<(f64, f64)>,
    ) -> Result<Written, PostError> {
        let name = &cut.name;
        let skip_clearing = skip.min(cut.clearing.len());
        let skip_lead = skip - skip_clearing;
        if cut.clearing.len() > skip_clearing {
            self.comment("clearing");
            let from = if skip_clearing == 0 {
                cut.plunge
            } else {
                cut.clearing[skip_clearing - 1].end()
            };
            self.run(name, from, &cut.clearing[skip_clearing..], feed, None)?;
        }
        if cut.lead_in.len() > skip_lead {
            self.comment("lead-in");
            let from = if skip_lead == 0 {
                cut.lead_in_start()
            } else {
                cut.lead_in[skip_lead - 1].end()
            };
            self.run(name, from, &cut.lead_in[skip_lead..], feed, None)?;
        }
        self.comment("contour");
        let done = match tabs {
            None => self.run(name, cut.start, &cut.moves, feed, None)?,
            Some((top, floor)) => {
                let mut done = Written::default();
                let (pieces, inside) = tab_pieces(cut);
                let mut from = cut.start;
                for (piece, in_tab) in pieces.iter().zip(inside) {
                    if in_tab {
                        self.feed_z(top, feed);
                    }
                    let w = self.run(name, from, piece, feed, None)?;
                    done.lines += w.lines;
                    done.arcs += w.arcs;
                    if in_tab {
                        self.feed_z(floor, feed);
                    }
                    from = piece.last().map_or(from, Move::end);
                }
                done
            }
        };
        self.leave(cut, feed)?;
        Ok(done)
    }

    /// The overcut and the lead-out, each after a comment naming it.
    fn leave(&mut self, cut: &FittedCut, feed: f64) -> Result<(), PostError> {
        if !cut.overcut.is_empty() {
            self.comment("overcut");
            self.run(&cut.name, cut.start, &cut.overcut, feed, None)?;
        }
        if !cut.lead_out.is_empty() {
            self.comment("lead-out");
            self.run(&cut.name, cut.lead_out_start(), &cut.lead_out, feed, None)?;
        }
        Ok(())
    }

    /// The runs of a cut on a laser, plasma table or waterjet, the process already on at the
    /// pierce point: the lead-in, the contour (with `gaps`, the process off over each tab, moved
    /// across at the pierce height and pierced again after it), the overcut and the lead-out.
    fn cut_runs_process(
        &mut self,
        cut: &FittedCut,
        feed: f64,
        down_feed: f64,
        gaps: Option<&Process>,
    ) -> Result<Written, PostError> {
        let name = &cut.name;
        if !cut.lead_in.is_empty() {
            self.comment("lead-in");
            self.run(name, cut.lead_in_start(), &cut.lead_in, feed, None)?;
        }
        self.comment("contour");
        let done = match gaps {
            None => self.run(name, cut.start, &cut.moves, feed, None)?,
            Some(p) => {
                let mut done = Written::default();
                let (pieces, inside) = tab_pieces(cut);
                let mut from = cut.start;
                for (piece, in_tab) in pieces.iter().zip(inside) {
                    if in_tab {
                        self.block(p.off.clone());
                        self.rapid_z(p.pierce_height);
                    }
                    let w = self.run(name, from, piece, feed, None)?;
                    done.lines += w.lines;
                    done.arcs += w.arcs;
                    if in_tab {
                        self.block(p.on.clone());
                        self.dwell(p.pierce_dwell);
                        self.feed_z(p.cut_height, down_feed);
                    }
                    from = piece.last().map_or(from, Move::end);
                }
                done
            }
        };
        self.leave(cut, feed)?;
        Ok(done)
    }
}

/// Whether entries may be helical: asked for, with a ramp angle, and the profile writes arcs (a
/// helix is a run of arcs).
fn helical(settings: &ProgramSettings, profile: &MachineProfile) -> bool {
    settings.helical_entry
        && settings.ramp_angle_deg.is_some()
        && profile.arc_form() != ArcForm::LinesOnly
}

/// The radius of a helical entry's path (mm) for a tool of diameter `d`: a quarter of the
/// diameter, so that the helix cuts a bore of 1.5 d and leaves no core under a tool that does not
/// cut at its centre (common practice: helix diameter at least half the tool's,
/// docs/sources.md P4.3).
pub fn helix_radius(d: f64) -> f64 {
    0.25 * d
}

/// The contour of `cut` cut at its tab spans: the pieces in order, and for each whether it lies
/// over a tab.
fn tab_pieces(cut: &FittedCut) -> (Vec<Vec<Move>>, Vec<bool>) {
    let at: Vec<f64> = cut.tabs.iter().flat_map(|&(a, b)| [a, b]).collect();
    let pieces = crate::geom::moves::split_at(cut.start, &cut.moves, &at);
    // Piece k starts at the k-th cut; odd cuts open a tab, even ones close it. A cut at the
    // very start or end of the run makes no piece, so walk the lengths instead of counting.
    let mut inside = Vec::with_capacity(pieces.len());
    let mut from = cut.start;
    let mut walked = 0.0;
    for piece in &pieces {
        let len = crate::geom::moves::total_length(from, piece);
        let mid = walked + 0.5 * len;
        inside.push(cut.tabs.iter().any(|&(a, b)| mid > a && mid < b));
        walked += len;
        from = piece.last().map_or(from, Move::end);
    }
    (pieces, inside)
}

/// A dwell of `seconds` as the `P` value in `unit`: seconds with 2 decimals, milliseconds
/// with none.
fn dwell_value(unit: DwellUnit, seconds: f64) -> String {
    match unit {
        DwellUnit::Seconds => format_number(seconds, 2),
        DwellUnit::Milliseconds => format_number(1000.0 * seconds, 0),
    }
}

/// One comment line in the profile's style.
fn comment_line(style: CommentStyle, text: &str) -> String {
    match style {
        CommentStyle::Parentheses => format!("({text})"),
        CommentStyle::Semicolon => format!("; {text}"),
    }
}

/// The header comment lines.
fn header(
    cuts: &[FittedCut],
    written: &[Written],
    profile: &MachineProfile,
    s: &ProgramSettings,
    r: &Resolved,
) -> Vec<String> {
    let units = profile.units();
    let u = units.as_str();
    let xy = |mm: f64| format_number(units.from_mm(mm), profile.xy_decimals());
    let z = |v: f64| format_number(v, profile.z_decimals());
    let fd = |f: f64| format_number(f, profile.feed_decimals());
    let mut text = vec![
        format!("title: {}", sanitize(&s.title)),
        format!("source drawing: {}", sanitize(&s.source)),
        format!("generated by conicut {}", env!("CARGO_PKG_VERSION")),
        format!(
            "machine profile: {}, kind {}",
            sanitize(profile.name()),
            profile.kind()
        ),
        format!("units: {u}, {}, feeds in {u}/min", units.g_word()),
    ];
    match profile.cutter() {
        Cutter::Spindle(sp) => text.extend(spindle_lines(sp, s, r, profile, &xy, &z, &fd)),
        Cutter::Process(p) => text.extend(process_lines(p, s, r, profile, &xy, &z, &fd)),
    }
    text.extend(direction_lines(cuts, profile, s, &xy));
    text.push(format!("features: {}", cuts.len()));
    for (i, (cut, w)) in cuts.iter().zip(written).enumerate() {
        let arcs = if w.arcs > 0 {
            format!(": {} lines and {} arcs", w.lines, w.arcs)
        } else {
            String::new()
        };
        let pass = if cut.allowance > 0.0 {
            format!(", roughing, leaves {} {u}", xy(cut.allowance))
        } else if cut.full_depth_only && profile.spindle().is_some() {
            ", finishing, once at full depth".to_string()
        } else {
            String::new()
        };
        text.push(format!(
            "{} {}: {}, {}{pass}, {} feed moves{arcs}, fitted deviation {} {u}",
            i + 1,
            sanitize(&cut.name),
            kind_word(cut.kind),
            side_word(cut.side, profile.kind()),
            w.lines + w.arcs,
            xy(cut.measured_deviation)
        ));
    }
    text.push(SAFETY_HEADING.to_string());
    text.extend(cautions(profile.kind(), units.g_word(), u));
    text.push(PRECEDENCE.to_string());
    let style = profile.comment_style();
    text.iter()
        .flat_map(|t| wrap(&sanitize(t), COMMENT_WIDTH))
        .map(|t| comment_line(style, &t))
        .collect()
}

/// The header lines on the direction of travel (every kind) and, on mills and routers, the entry
/// and the finishing pass. The direction is read from the cuts themselves (each one's scrap side),
/// so the line states what the program does.
fn direction_lines(
    cuts: &[FittedCut],
    profile: &MachineProfile,
    s: &ProgramSettings,
    xy: &dyn Fn(f64) -> String,
) -> Vec<String> {
    let u = profile.units().as_str();
    let climb = cuts.iter().filter(|c| c.scrap_left).count();
    let conventional = cuts.len() - climb;
    let mut out = Vec::new();
    out.push(match (profile.spindle().is_some(), climb, conventional) {
        (true, _, 0) => "direction: climb, spindle M3: holes and pockets counter-clockwise, \
                         outline and bosses clockwise"
            .to_string(),
        (true, 0, _) => "direction: conventional, spindle M3: holes and pockets clockwise, \
                         outline and bosses counter-clockwise"
            .to_string(),
        (false, _, 0) => "direction: holes counter-clockwise, outline clockwise, the part on the \
                          right of travel"
            .to_string(),
        (_, climb, conventional) => format!(
            "direction: {climb} cuts climb, the part on the right of travel; {conventional} \
             conventional, the part on the left"
        ),
    });
    if profile.spindle().is_none() {
        return out;
    }
    out.push(match s.ramp_angle_deg {
        None => {
            "entry: straight plunge at the plunge feed, for centre-cutting tools only".to_string()
        }
        Some(a) if helical(s, profile) => format!(
            "entry: helix of radius {} {u} about the plunge point, no steeper than {} degrees \
             along the arc, where the cut leaves room for it; a zig-zag ramp no steeper than {} \
             degrees elsewhere",
            xy(helix_radius(s.tool_diameter)),
            format_number(a, 2),
            format_number(a, 2)
        ),
        Some(a) => format!(
            "entry: zig-zag ramp along the first entry move, no steeper than {} degrees",
            format_number(a, 2)
        ),
    });
    let allowance = cuts.iter().map(|c| c.allowance).fold(0.0, f64::max);
    let finishing = cuts.iter().filter(|c| c.full_depth_only).count();
    if allowance > 0.0 {
        out.push(format!(
            "finishing pass: the roughing cuts leave {} {u} of radial stock; {finishing} \
             finishing cuts then run once at the full depth",
            xy(allowance)
        ));
    } else if finishing > 0 {
        out.push(format!(
            "finishing pass: {finishing} cuts run once at the full depth"
        ));
    }
    out
}

fn spindle_lines(
    sp: &Spindle,
    s: &ProgramSettings,
    r: &Resolved,
    profile: &MachineProfile,
    xy: &dyn Fn(f64) -> String,
    z: &dyn Fn(f64) -> String,
    fd: &dyn Fn(f64) -> String,
) -> Vec<String> {
    let u = profile.units().as_str();
    vec![
        format!(
            "tool diameter {} {u}, cut depth {} {u}{}, tolerance {} {u}",
            xy(s.tool_diameter),
            format_number(-r.floor, profile.z_decimals()),
            match pass_depths(s.depth, s.stepdown).len() {
                1 => String::new(),
                n => format!(" in {n} passes"),
            },
            xy(s.tolerance)
        ),
        format!(
            "cut feed {}, plunge feed {}, spindle {} rpm",
            fd(r.cut_feed),
            fd(r.plunge_feed),
            format_number(r.spindle_speed, 0)
        ),
        format!(
            "safe height {}, retract height {} {u}",
            z(profile.safe_height()),
            z(sp.retract_height)
        ),
    ]
}

fn process_lines(
    p: &Process,
    s: &ProgramSettings,
    r: &Resolved,
    profile: &MachineProfile,
    xy: &dyn Fn(f64) -> String,
    z: &dyn Fn(f64) -> String,
    fd: &dyn Fn(f64) -> String,
) -> Vec<String> {
    let units = profile.units();
    let u = units.as_str();
    let profile_kerf = format_number(p.kerf_width, profile.xy_decimals());
    let used = xy(s.tool_diameter);
    let note = if used == profile_kerf {
        String::new()
    } else {
        format!("; the profile's kerf width is {profile_kerf} {u}")
    };
    vec![
        format!("kerf width the paths allow for {used} {u}{note}"),
        format!("tolerance {} {u}; cut through, no depth", xy(s.tolerance)),
        format!(
            "cut feed {}, feed from pierce height to cut height {}, pierce dwell {} s",
            fd(r.cut_feed),
            fd(r.plunge_feed),
            format_number(p.pierce_dwell, 2)
        ),
        format!(
            "safe height {}, pierce height {}, cut height {} {u}",
            z(profile.safe_height()),
            z(p.pierce_height),
            z(p.cut_height)
        ),
    ]
}

fn kind_word(kind: FeatureKind) -> &'static str {
    match kind {
        FeatureKind::Opening => "elliptical opening",
        FeatureKind::Boss => "elliptical boss",
        FeatureKind::Hole => "hole",
        FeatureKind::Outline => "outline",
        FeatureKind::Pocket => "elliptical pocket",
    }
}

fn side_word(side: CutSide, kind: MachineKind) -> &'static str {
    let kerf = !matches!(kind, MachineKind::Mill | MachineKind::Router);
    match (side, kerf) {
        (CutSide::Inside, false) => "tool inside",
        (CutSide::Outside, false) => "tool outside",
        (CutSide::Inside, true) => "kerf inside",
        (CutSide::Outside, true) => "kerf outside",
    }
}

/// Makes user text safe inside a `( )` comment (NISTIR 6556 §3.3.4: no nested parentheses,
/// printable characters only): parentheses become `[ ]`, other characters outside printable
/// ASCII become `?`, runs of white space become one space.
pub fn sanitize(text: &str) -> String {
    let mapped: String = text
        .chars()
        .map(|c| match c {
            '(' => '[',
            ')' => ']',
            c if c.is_whitespace() => ' ',
            c if c.is_ascii_graphic() => c,
            _ => '?',
        })
        .collect();
    mapped.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// Splits `text` into pieces of at most `width` characters, at spaces where possible.
fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = Vec::new();
    let mut current = String::new();
    for word in text.split(' ').filter(|w| !w.is_empty()) {
        let mut word = word.to_string();
        while word.len() > width {
            if !current.is_empty() {
                lines.push(std::mem::take(&mut current));
            }
            let rest = word.split_off(width);
            lines.push(word);
            word = rest;
        }
        if !current.is_empty() && current.len() + 1 + word.len() > width {
            lines.push(std::mem::take(&mut current));
        }
        if !current.is_empty() {
            current.push(' ');
        }
        current.push_str(&word);
    }
    if !current.is_empty() || lines.is_empty() {
        lines.push(current);
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sanitize_removes_comment_breakers() {
        assert_eq!(sanitize("plate (rev B)\tØ40"), "plate [rev B] ?40");
        assert_eq!(sanitize("  a \n b  "), "a b");
    }

    #[test]
    fn wrap_keeps_lines_short_and_loses_no_words() {
        let text = "word ".repeat(60) + &"x".repeat(250);
        let lines = wrap(&text, 100);
        assert!(lines.iter().all(|l| l.len() <= 100));
        assert_eq!(
            lines.join(" ").split(' ').filter(|w| *w == "word").count(),
            60
        );
        assert_eq!(lines.concat().matches('x').count(), 250);
        assert_eq!(wrap("", 10), vec![String::new()]);
    }
}
