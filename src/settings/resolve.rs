//! The resolver: a request ([`JobSettings`]) and a machine profile turned into one resolved job,
//! each stage's own options in mm, every default taken from [`super::defaults`].
//!
//! Cost: constant per job (a handful of comparisons), whatever the number of features.

use super::defaults;
use super::job_file::JobFile;
use super::profile::Machine;
use super::request::{JobSettings, LeadRequest, TabRequest};
use crate::fit::{FitOptions, MoveKind};
use crate::plan::{Direction, LeadOptions, PlanOptions, TabOptions};
use crate::post::{ArcForm, MachineProfile, ProgramSettings};

/// What each stage runs with, resolved once.
#[derive(Debug, Clone, PartialEq)]
pub struct ResolvedJob {
    /// The cutter (mills, routers) or kerf (laser, plasma, waterjet) diameter, mm.
    pub tool_diameter: f64,
    /// Laser, plasma and waterjet cut through: no depth, no pockets, no finishing pass.
    pub cuts_through: bool,
    /// Cut depth, mm (0 for the kinds that cut through).
    pub depth: f64,
    /// The tolerance budget: what the fit may spend and what rounding takes.
    pub budget: ToleranceBudget,
    /// Stage 4's options.
    pub plan: PlanOptions,
    /// Stage 5's options.
    pub fit: FitOptions,
    /// Stage 6's options (the profile gives it its words).
    pub program: ProgramSettings,
    /// Requests ignored rather than refused (conventional milling, a depth, passes or an entry
    /// on a kind that cuts through) and settings worth a second look (a pass deeper than the
    /// tool is wide), for the report.
    pub warnings: Vec<String>,
}

/// How the tolerance is shared. The program's coordinates are rounded to the profile's decimals,
/// which moves a point by at most half a step on each axis (√2/2 steps in all). An arc's end
/// points and centre are rounded and the centre moved onto the bisector of the rounded ends,
/// which keeps the written arc within 2√2 steps of the exact one (the writer's property test,
/// tests/post_arcs.rs). The fit gets the rest; the checker then measures the program as
/// written against the whole tolerance.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ToleranceBudget {
    /// The user's tolerance, mm.
    pub tolerance: f64,
    /// What rounding the written numbers may take, mm.
    pub rounding: f64,
    /// Straight moves only (asked for, or the profile writes no arcs).
    pub lines_only: bool,
}

impl ToleranceBudget {
    /// What the fit may spend, mm.
    pub fn fit(&self) -> f64 {
        self.tolerance - self.rounding
    }
}

/// Why a request cannot run on this machine. The pipeline adds the drawing's name.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SettingsError {
    #[error(
        "give the cutter diameter with --tool-diameter (mm): the {kind} profile \"{name}\" has \
         no kerf width to fall back on"
    )]
    NoToolDiameter { kind: String, name: String },
    #[error(
        "a tolerance of {tolerance} mm is too fine for the machine profile's {decimals} \
         decimals: rounding alone moves a point by up to {rounding:.6} mm. Use a tolerance of at \
         least twice that, or a profile with more decimals"
    )]
    ToleranceTooFine {
        tolerance: f64,
        rounding: f64,
        decimals: usize,
    },
    #[error(
        "a finishing allowance ({allowance} mm) applies to mills and routers only: a {machine} \
         cuts through in one pass. Leave out --finish-allowance"
    )]
    FinishCutsThrough { allowance: f64, machine: String },
    #[error("tabs on the outline: {problem}")]
    BadTabs { problem: String },
    /// A number outside the range conicut can cut with ([`ranges`] states each).
    #[error("{setting} is {value} mm: {reason}. Give {range}")]
    OutOfRange {
        setting: &'static str,
        /// The value as the message shows it (exponent form when very large or small).
        value: String,
        range: String,
        reason: &'static str,
    },
}

/// The ranges every length setting is held to before anything is planned, with the reason for
/// each bound (the numbers are ours, chosen wide: they refuse only what no shop means).
pub mod ranges {
    /// The finest tool or kerf, mm: below any end mill or kerf made (the finest are about 0.1 mm,
    /// from memory).
    pub const MIN_TOOL_MM: f64 = 0.01;
    /// The coarsest tolerance, mm: a path allowed further from the curve than this is no longer
    /// a fit of it (common practice asks 0.001–0.1 mm).
    pub const MAX_TOLERANCE_MM: f64 = 1.0;
    /// The thinnest pass, mm.
    pub const MIN_STEPDOWN_MM: f64 = 0.01;
    /// The most passes one cut may take.
    pub const MAX_PASSES: f64 = 1000.0;
    /// The longest lead, lead radius or overcut, mm (common practice: a few mm).
    pub const MAX_LEAD_MM: f64 = 100.0;
    /// The most tabs on the outline.
    pub const MAX_TABS: usize = 1000;
    /// The closest tab spacing along the outline, mm.
    pub const MIN_TAB_SPACING_MM: f64 = 1.0;
}

/// Holds the request's lengths to [`ranges`].
fn check_ranges(
    s: &JobSettings,
    tool_diameter: f64,
    depth: f64,
    leads: &LeadOptions,
) -> Result<(), SettingsError> {
    use ranges::*;
    let out = |setting, value: f64, range: String, reason| {
        let value = if value != 0.0 && !(1e-3..1e6).contains(&value.abs()) {
            format!("{value:e}")
        } else {
            format!("{value}")
        };
        Err(SettingsError::OutOfRange {
            setting,
            value,
            range,
            reason,
        })
    };
    if tool_diameter.is_nan() || tool_diameter < MIN_TOOL_MM {
        return out(
            "the tool diameter (or kerf)",
            tool_diameter,
            format!("at least {MIN_TOOL_MM} mm with --tool-diameter (or --kerf)"),
            "no cutter or kerf is that narrow; check the number and its unit",
        );
    }
    if s.tolerance.is_nan() || s.tolerance <= 0.0 {
        return out(
            "the tolerance",
            s.tolerance,
            format!("a positive --tolerance, at most {MAX_TOLERANCE_MM} mm (0.01 is usual)"),
            "it is how far the path may stray from the exact curve, so it must be above zero",
        );
    }
    if s.tolerance > MAX_TOLERANCE_MM {
        return out(
            "the tolerance",
            s.tolerance,
            format!("--tolerance {MAX_TOLERANCE_MM} mm or less (0.01 is usual)"),
            "a path allowed to stray that far from the curve is no longer a fit of it",
        );
    }
    if let Some(step) = s.stepdown {
        if step.is_nan() || step < MIN_STEPDOWN_MM {
            return out(
                "the stepdown",
                step,
                format!("--stepdown of at least {MIN_STEPDOWN_MM} mm"),
                "passes that thin cut nothing a machine can hold and would take without end",
            );
        }
        if depth / step > MAX_PASSES {
            return out(
                "the stepdown",
                step,
                format!(
                    "--stepdown of at least {} mm for this depth of {depth} mm",
                    depth / MAX_PASSES
                ),
                "that would be more than 1000 passes per cut",
            );
        }
    }
    // A feature's own passes (job file), with the job's depth or stepdown where it has none.
    if let Some(job) = &s.job {
        for f in &job.features {
            let (Some(step), d) = (f.stepdown.or(s.stepdown), f.depth.unwrap_or(depth)) else {
                continue;
            };
            if d / step > MAX_PASSES {
                return out(
                    "the stepdown",
                    step,
                    format!(
                        "a stepdown of at least {} mm for feature \"{}\" (job file line {}), \
                         {d} mm deep",
                        d / MAX_PASSES,
                        f.name,
                        f.line
                    ),
                    "that would be more than 1000 passes for that feature",
                );
            }
        }
    }
    for (setting, value) in [
        ("the lead length", leads.length),
        ("the lead radius", leads.radius),
        ("the overcut", leads.overcut),
    ] {
        if value > MAX_LEAD_MM {
            return out(
                setting,
                value,
                format!(
                    "at most {MAX_LEAD_MM} mm (--lead-length, --lead-radius, --overcut, the job file's [leads] or the profile)"
                ),
                "leads and overcuts are a few mm; one that long leaves the part's scrap",
            );
        }
    }
    Ok(())
}

/// Resolves `s` against `profile`.
pub fn resolve(s: &JobSettings, machine: &Machine) -> Result<ResolvedJob, SettingsError> {
    let profile = &machine.profile;
    let tool_diameter = tool_diameter(s, profile)?;
    let cuts_through = profile.kerf_width().is_some();
    let depth = if cuts_through {
        0.0
    } else {
        requested_depth(s, profile)
    };
    let leads = resolve_leads(&s.leads, s.job.as_ref(), machine.defaults.leads);
    check_ranges(s, tool_diameter, depth, &leads)?;
    let budget = tolerance_budget(s, profile)?;
    let tabs = s
        .tabs
        .as_ref()
        .map(|t| resolve_tabs(t, profile, s))
        .transpose()?;
    let (direction, mut warnings) = mill_only_settings(s, profile)?;
    warnings.extend(deep_pass_warning(s, profile, tool_diameter, depth));
    let plan = PlanOptions {
        tool_diameter,
        leads,
        direction,
        tabs,
        finish_allowance: s.finish_allowance,
        pocket_stepover: s
            .pocket_stepover
            .unwrap_or_else(|| defaults::pocket_stepover(tool_diameter)),
        pierce_clearance: machine.defaults.pierce_clearance,
    };
    let fit = FitOptions {
        tolerance: budget.fit(),
        moves: if budget.lines_only {
            MoveKind::Lines
        } else {
            MoveKind::Arcs
        },
        scrap_side_only: s.scrap_side_only,
    };
    // A job file's value, when there is a job file and it gives one.
    let job =
        |f: fn(&crate::settings::job_file::JobFile) -> Option<f64>| s.job.as_ref().and_then(f);
    let program = ProgramSettings {
        title: format!("elliptical openings for {}", s.file_name),
        source: s.file_name.clone(),
        tool_diameter,
        depth,
        tolerance: s.tolerance,
        cut_feed: s.cut_feed.or(job(|j| j.feed)),
        plunge_feed: s.plunge_feed.or(job(|j| j.plunge_feed)),
        spindle_speed: s.spindle_speed.or(job(|j| j.spindle_speed)),
        stepdown: s.stepdown,
        ramp_angle_deg: s.ramp_angle_deg,
        // A helix is written as arcs: not for straight moves only.
        helical_entry: s.helical_entry && !budget.lines_only,
        tab_height: tabs.map_or(0.0, |t| t.height),
        // Placed on the part by the pipeline, once the part is read.
        work_zero: None,
        work_offset: s.work_offset(),
    };
    Ok(ResolvedJob {
        tool_diameter,
        cuts_through,
        depth,
        budget,
        plan,
        fit,
        program,
        warnings,
    })
}

/// The tool: the one asked for, else the profile's kerf, else the request's fallback (the
/// demo's end mill); a mill or router with none of them is refused.
fn tool_diameter(s: &JobSettings, profile: &MachineProfile) -> Result<f64, SettingsError> {
    s.tool_diameter
        .or(profile.kerf_width())
        .or(s.fallback_tool_diameter)
        .ok_or_else(|| SettingsError::NoToolDiameter {
            kind: profile.kind().to_string(),
            name: profile.name().to_string(),
        })
}

/// A mill's or router's depth: the one asked for, else the profile's default (in mm).
fn requested_depth(s: &JobSettings, profile: &MachineProfile) -> f64 {
    s.depth
        .unwrap_or_else(|| profile.units().to_mm(profile.default_depth()))
}

/// The tolerance budget (see [`ToleranceBudget`]); a tolerance under twice the rounding is
/// refused.
fn tolerance_budget(
    s: &JobSettings,
    profile: &MachineProfile,
) -> Result<ToleranceBudget, SettingsError> {
    let lines_only = s.lines_only || profile.arc_form() == ArcForm::LinesOnly;
    let step = profile
        .units()
        .to_mm(10f64.powi(-(profile.xy_decimals() as i32)));
    let rounding = if lines_only { 0.5 } else { 2.0 } * step * std::f64::consts::SQRT_2;
    if !(s.tolerance.is_finite() && s.tolerance >= 2.0 * rounding) {
        return Err(SettingsError::ToleranceTooFine {
            tolerance: s.tolerance,
            rounding,
            decimals: profile.xy_decimals(),
        });
    }
    Ok(ToleranceBudget {
        tolerance: s.tolerance,
        rounding,
        lines_only,
    })
}

/// The leads to use: the command line first, then the job file's lead keys, the rest from the
/// profile.
fn resolve_leads(r: &LeadRequest, job: Option<&JobFile>, base: LeadOptions) -> LeadOptions {
    let file = job.map(|j| j.leads).unwrap_or_default();
    LeadOptions {
        kind: r.kind.or(file.shape).unwrap_or(base.kind),
        length: r.length.or(file.length).unwrap_or(base.length),
        radius: r.radius.or(file.radius).unwrap_or(base.radius),
        overcut: r.overcut.or(file.overcut).unwrap_or(base.overcut),
        lead_out: r.lead_out.or(file.lead_out).unwrap_or(base.lead_out),
    }
}

/// The tabs to use: what the user gave, width and height by kind of machine otherwise. Refuses a
/// request with both or neither of count and spacing, a count below 1, a spacing or width that
/// is not a positive number of mm, a mill or router tab height outside (0, cut depth), and a
/// height on the kinds that cut through (their tabs are gaps).
fn resolve_tabs(
    t: &TabRequest,
    profile: &MachineProfile,
    s: &JobSettings,
) -> Result<TabOptions, SettingsError> {
    let bad = |problem: String| SettingsError::BadTabs { problem };
    let spacing = match (t.count, t.spacing) {
        (Some(_), Some(_)) => {
            return Err(bad(
                "give either a count (--tabs) or a spacing (--tab-spacing), not both".into(),
            ));
        }
        (None, None) if t.width.is_some() || t.height.is_some() => {
            return Err(bad(
                "--tab-width and --tab-height size tabs, but no tabs were asked for: \
                 add --tabs N or --tab-spacing MM"
                    .into(),
            ));
        }
        (None, None) => {
            return Err(bad(
                "give a count (--tabs N) or a spacing along the outline (--tab-spacing MM)".into(),
            ));
        }
        (Some(0), None) => return Err(bad("the count must be at least 1 (got 0)".into())),
        (Some(n), None) if n > ranges::MAX_TABS => {
            return Err(bad(format!(
                "{n} tabs are more than the {} an outline may take; give fewer (4 to 8 is usual)",
                ranges::MAX_TABS
            )));
        }
        (None, Some(sp)) if sp > 0.0 && sp < ranges::MIN_TAB_SPACING_MM => {
            return Err(bad(format!(
                "a spacing of {sp} mm would put the tabs on top of each other; give at least {} mm (a few hundred mm is usual)",
                ranges::MIN_TAB_SPACING_MM
            )));
        }
        (Some(_), None) => 0.0,
        (None, Some(sp)) if sp > 0.0 && sp.is_finite() => sp,
        (None, Some(sp)) => {
            return Err(bad(format!(
                "the spacing must be a positive number of mm (got {sp})"
            )));
        }
    };
    let cuts_through = profile.kerf_width().is_some();
    let width = t.width.unwrap_or(if cuts_through {
        defaults::THERMAL_TAB_WIDTH_MM
    } else {
        defaults::MILL_TAB_WIDTH_MM
    });
    if !(width > 0.0 && width.is_finite()) {
        return Err(bad(format!(
            "the width must be a positive number of mm (got {width})"
        )));
    }
    let height = if cuts_through {
        if let Some(h) = t.height {
            return Err(bad(format!(
                "a tab height ({h} mm) applies to mills and routers only: on a {} a tab is a gap \
                 in the cut. Leave the height out",
                profile.kind()
            )));
        }
        0.0
    } else {
        let depth = requested_depth(s, profile);
        let h = t.height.unwrap_or(defaults::MILL_TAB_HEIGHT_MM);
        if !(h > 0.0 && h < depth) {
            return Err(bad(format!(
                "the height must be above 0 mm and below the cut depth {depth} mm (got {h} mm); \
                 tabs are usually 1–3 mm high"
            )));
        }
        h
    };
    Ok(TabOptions {
        count: t.count,
        spacing,
        width,
        height,
    })
}

/// The settings only mills and routers act on. Laser, plasma and waterjet cut through in one
/// pass: a finishing allowance is refused ([`SettingsError::FinishCutsThrough`]); a depth,
/// passes, an entry or a ramp angle given for one (`JobSettings::milling_flags`) is ignored with
/// a warning naming each. They always cut in the usual direction for thermal cutting (outline
/// clockwise, holes counter-clockwise: the squarer side of a plasma kerf, on the right of travel
/// with the usual swirl, falls on the part; docs/sources.md P4.1): conventional milling is a
/// milling matter, so a request for it is ignored with a warning rather than refused (the
/// program is still right).
fn mill_only_settings(
    s: &JobSettings,
    profile: &MachineProfile,
) -> Result<(Direction, Vec<String>), SettingsError> {
    if profile.spindle().is_some() {
        return Ok((s.direction, Vec::new()));
    }
    if let Some(allowance) = s.finish_allowance {
        return Err(SettingsError::FinishCutsThrough {
            allowance,
            machine: profile.kind().to_string(),
        });
    }
    let mut warnings = Vec::new();
    if s.direction == Direction::Conventional {
        warnings.push(format!(
            "the conventional direction applies to mills and routers only and was ignored: the \
             {} cuts in the usual direction (outline clockwise, holes counter-clockwise)",
            profile.kind()
        ));
    }
    if !s.milling_flags.is_empty() {
        warnings.push(format!(
            "{} appl{} to mills and routers only and {} ignored: a {} cuts through the sheet in \
             one pass, pierced in the scrap",
            s.milling_flags.join(", "),
            if s.milling_flags.len() == 1 {
                "ies"
            } else {
                "y"
            },
            if s.milling_flags.len() == 1 {
                "was"
            } else {
                "were"
            },
            profile.kind()
        ));
    }
    Ok((Direction::Climb, warnings))
}

/// Common practice: a pass no deeper than the tool's diameter when slotting (a full-width cut,
/// as every contour's first pass is).
pub const MAX_PASS_PER_DIAMETER: f64 = 1.0;

/// A warning when a mill's or router's deepest pass is deeper than [`MAX_PASS_PER_DIAMETER`]
/// times the tool, naming `--stepdown`.
fn deep_pass_warning(
    s: &JobSettings,
    profile: &MachineProfile,
    tool_diameter: f64,
    depth: f64,
) -> Option<String> {
    // Mills and routers only.
    profile.spindle()?;
    let pass = s
        .stepdown
        .filter(|&st| st > 0.0 && st < depth)
        .unwrap_or(depth);
    (pass > MAX_PASS_PER_DIAMETER * tool_diameter).then(|| {
        format!(
            "each pass cuts {pass} mm deep with a {tool_diameter} mm tool; common practice is at \
             most {MAX_PASS_PER_DIAMETER} × the diameter per pass when slotting. Give a smaller \
             --stepdown (e.g. {}) unless the tool and machine are made for it",
            (MAX_PASS_PER_DIAMETER * tool_diameter * 0.5 * 1000.0).round() / 1000.0
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::plan::LeadKind;
    use crate::settings::BUNDLED_PROFILES;

    fn profile(stem: &str) -> Machine {
        let (file, text) = BUNDLED_PROFILES
            .iter()
            .find(|(f, _)| f.contains(stem))
            .expect("a bundled profile");
        Machine::from_toml(text, file).expect("the bundled profile loads")
    }

    #[test]
    fn the_tool_is_the_one_asked_for_then_the_kerf_then_the_fallback() {
        let (mill, laser) = (profile("metric-mill"), profile("laser"));
        let mut s = JobSettings::new("part.dxf", 8.0);
        assert_eq!(resolve(&s, &mill).unwrap().tool_diameter, 8.0);
        s.tool_diameter = None;
        assert!(matches!(
            resolve(&s, &mill),
            Err(SettingsError::NoToolDiameter { .. })
        ));
        s.fallback_tool_diameter = Some(defaults::DEMO_TOOL_DIAMETER_MM);
        assert_eq!(resolve(&s, &mill).unwrap().tool_diameter, 6.0);
        // machine-profiles/laser.toml gives a kerf of 0.2 mm (invented example values).
        assert_eq!(resolve(&s, &laser).unwrap().tool_diameter, 0.2);
    }

    #[test]
    fn the_budget_leaves_rounding_its_share() {
        // 4 decimals in mm: a step of 1e-4 mm; arcs keep within 2√2 steps, lines √2/2 steps.
        let mill = profile("metric-mill");
        let mut s = JobSettings::new("part.dxf", 6.0);
        let arcs = resolve(&s, &mill).unwrap();
        let step = 1e-4;
        assert!((arcs.budget.rounding - 2.0 * std::f64::consts::SQRT_2 * step).abs() < 1e-15);
        assert!((arcs.fit.tolerance - (0.01 - arcs.budget.rounding)).abs() < 1e-15);
        s.lines_only = true;
        let lines = resolve(&s, &mill).unwrap();
        assert!((lines.budget.rounding - 0.5 * std::f64::consts::SQRT_2 * step).abs() < 1e-15);
        assert_eq!(lines.fit.moves, MoveKind::Lines);
        assert!(!lines.program.helical_entry, "a helix is written as arcs");
        s.tolerance = 1e-4;
        assert!(matches!(
            resolve(&s, &mill),
            Err(SettingsError::ToleranceTooFine { decimals: 4, .. })
        ));
    }

    #[test]
    fn leads_come_from_the_command_line_then_the_job_file_then_the_profile() {
        let mill = profile("metric-mill");
        let mut s = JobSettings::new("part.dxf", 6.0);
        let base = resolve(&s, &mill).unwrap().plan.leads;
        assert_eq!(base, mill.defaults.leads);
        let mut job = crate::settings::job_file::parse_job_file(
            "units = \"mm\"\nlead = \"line\"\nlead_length = 7\n[[feature]]\nname = \"a\"\nbay = \"b\"\n",
            "job.toml",
        )
        .unwrap();
        job.leads.overcut = Some(1.5);
        s.job = Some(job);
        s.leads.length = Some(9.0);
        let leads = resolve(&s, &mill).unwrap().plan.leads;
        assert_eq!(leads.kind, LeadKind::Line);
        assert_eq!(leads.length, 9.0);
        assert_eq!(leads.overcut, 1.5);
        assert_eq!(leads.radius, base.radius);
    }

    #[test]
    fn tabs_default_by_kind_and_bad_requests_are_refused() {
        let (mill, laser) = (profile("metric-mill"), profile("laser"));
        let mut s = JobSettings::new("part.dxf", 6.0);
        s.tabs = Some(TabRequest {
            count: Some(4),
            ..TabRequest::default()
        });
        let t = resolve(&s, &mill).unwrap().plan.tabs.unwrap();
        assert_eq!(
            (t.width, t.height),
            (defaults::MILL_TAB_WIDTH_MM, defaults::MILL_TAB_HEIGHT_MM)
        );
        let t = resolve(&s, &laser).unwrap().plan.tabs.unwrap();
        assert_eq!((t.width, t.height), (defaults::THERMAL_TAB_WIDTH_MM, 0.0));
        s.tabs = Some(TabRequest {
            width: Some(3.0),
            ..TabRequest::default()
        });
        let e = resolve(&s, &mill).unwrap_err();
        assert!(e.to_string().contains("no tabs were asked for"), "{e}");
    }

    #[test]
    fn a_pass_deeper_than_the_tool_is_wide_is_a_warning() {
        let mill = profile("metric-mill");
        let mut s = JobSettings::new("part.dxf", 3.0);
        s.depth = Some(3.0);
        assert!(
            resolve(&s, &mill).unwrap().warnings.is_empty(),
            "3 mm with a 3 mm tool"
        );
        s.depth = Some(5.0);
        let w = resolve(&s, &mill).unwrap().warnings;
        assert!(w.iter().any(|w| w.contains("--stepdown")), "{w:?}");
        s.stepdown = Some(2.5);
        assert!(resolve(&s, &mill).unwrap().warnings.is_empty());
    }

    #[test]
    fn milling_only_requests_on_a_laser() {
        let laser = profile("laser");
        let mut s = JobSettings::new("part.dxf", 0.2);
        s.direction = Direction::Conventional;
        let r = resolve(&s, &laser).unwrap();
        assert_eq!(r.plan.direction, Direction::Climb);
        assert_eq!(r.warnings.len(), 1, "{:?}", r.warnings);
        assert!(r.cuts_through && r.depth == 0.0);
        s.milling_flags = vec!["--stepdown".into(), "--depth".into()];
        let r = resolve(&s, &laser).unwrap();
        assert!(
            r.warnings
                .iter()
                .any(|w| w.starts_with("--stepdown, --depth apply to mills and routers only")),
            "{:?}",
            r.warnings
        );
        s.finish_allowance = Some(0.3);
        assert!(matches!(
            resolve(&s, &laser),
            Err(SettingsError::FinishCutsThrough { .. })
        ));
    }

    #[test]
    fn pocket_stepover_defaults_to_a_fraction_of_the_tool() {
        let mill = profile("metric-mill");
        let r = resolve(&JobSettings::new("part.dxf", 5.0), &mill).unwrap();
        assert_eq!(r.plan.pocket_stepover, defaults::pocket_stepover(5.0));
    }
}
