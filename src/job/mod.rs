//! The whole job as one pure function: DXF bytes and settings in; the program, the preview and
//! the report out. No files are touched here: the command layer reads the inputs and writes the
//! outputs.

pub mod features;
pub mod listing;

use crate::chain::{self, ChainError, ChainOptions, HoleShape};
use crate::check;
use crate::fit::{self, FitError};
use crate::geom::{Ellipse, Point};
use crate::jobfile::{CutKind, JobFile, LeadShape};
use crate::plan::{self, Direction, LeadKind, LeadOptions, PlanError, PlanOptions, TabOptions};
use crate::post::{self, MachineProfile, PostError, ProgramSettings};
use crate::preview::{self, PreviewInput};
use crate::read::{self, ReadError, ReadOptions, Units};
use crate::report::{self, FitSummary, Report, ReportInput, SolvedInfo};
use crate::settings::defaults;
use features::{FeatureInputs, SolvedFeature};
use listing::SolveListing;
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
    pub gap_tolerance: f64,
    /// Edge margin for bays when neither the job file nor its feature states one (mm).
    pub margin: f64,
    /// Cutter diameter (mm).
    pub tool_diameter: f64,
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
}

impl JobSettings {
    /// The command line's defaults for the drawing `file_name` cut with a tool (or kerf) of
    /// `tool_diameter` mm: no edge margin, 0.01 mm tolerance, the profile's depth in one pass, a
    /// helical entry no steeper than 3°, climb milling, the profile's leads, no tabs, no
    /// finishing pass, arcs, two-sided tolerance, every bay's largest ellipse.
    pub fn new(file_name: &str, tool_diameter: f64) -> Self {
        JobSettings {
            file_name: file_name.to_string(),
            units: None,
            bay_layer: chain::DEFAULT_BAY_LAYER.to_string(),
            gap_tolerance: chain::DEFAULT_GAP_TOLERANCE,
            margin: defaults::MARGIN_MM,
            tool_diameter,
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

/// Everything the job produces.
#[derive(Debug, Clone, PartialEq)]
pub struct JobOutput {
    pub program: String,
    pub preview: String,
    pub report: Report,
}

/// Why the job stopped; every message names the drawing.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum JobError {
    #[error(transparent)]
    Read(#[from] ReadError),
    #[error("{file}: {error}")]
    Chain { file: String, error: ChainError },
    #[error("{file}: {error}")]
    Plan { file: String, error: PlanError },
    #[error("{file}: {error}")]
    Fit { file: String, error: FitError },
    #[error("{file}: {error}")]
    Post { file: String, error: PostError },
    #[error(
        "{file}: a tolerance of {tolerance} mm is too fine for the machine profile's {decimals} \
         decimals: rounding alone moves a point by up to {rounding:.6} mm. Use a tolerance of at \
         least twice that, or a profile with more decimals"
    )]
    ToleranceTooFine {
        file: String,
        tolerance: f64,
        rounding: f64,
        decimals: usize,
    },
    #[error("{file}: the edge margin must be zero or a positive number of mm (got {margin})")]
    BadMargin { file: String, margin: f64 },
    #[error(
        "{file}: nothing to cut: the drawing has no bays on layer \"{bay_layer}\", no holes and no \
         outline, and no job file names a feature. Check the layer names (--bay-layer) and that \
         the contours are closed"
    )]
    NothingToCut { file: String, bay_layer: String },
    #[error("{file}: {count} feature(s) could not be solved, so nothing was cut:\n{list}")]
    Unsolved {
        file: String,
        count: usize,
        list: String,
    },
    #[error(
        "{file}: the written program could not be read back by the checker ({problem}); this is a \
         bug, please report it with the drawing"
    )]
    ReadBack { file: String, problem: String },
    #[error(
        "{file}: program line {line} ({part} of \"{feature}\") brings the tool centre to \
         ({x:.4}, {y:.4}) mm: {problem}. This is a bug, please report it with the drawing; \
         nothing was written"
    )]
    OffScrap {
        file: String,
        feature: String,
        part: String,
        line: usize,
        x: f64,
        y: f64,
        problem: String,
    },
    #[error(
        "{file}: a finishing allowance ({allowance} mm) applies to mills and routers only: a \
         {machine} cuts through in one pass. Leave out --finish-allowance"
    )]
    FinishCutsThrough {
        file: String,
        allowance: f64,
        machine: String,
    },
    #[error(
        "{file}: feature \"{feature}\" is a pocket, but a {machine} cuts through the sheet and \
         cannot clear a pocket to a depth. Cut it as a hole (cut = \"hole\") on this machine, or \
         use a mill or router profile for the pocket"
    )]
    PocketCutsThrough {
        file: String,
        feature: String,
        machine: String,
    },
    #[error("{file}: tabs on the outline: {problem}")]
    BadTabs { file: String, problem: String },
}

/// The drawing read and sorted, and every feature solved.
struct Solved {
    drawing: read::Drawing,
    part: crate::chain::Part,
    features: Vec<SolvedFeature>,
    /// Bays the job file does not mention.
    unused_bays: Vec<String>,
}

fn read_and_solve(dxf: &[u8], s: &JobSettings) -> Result<Solved, JobError> {
    let file = || s.file_name.clone();
    if !(s.margin >= 0.0 && s.margin.is_finite()) {
        return Err(JobError::BadMargin {
            file: file(),
            margin: s.margin,
        });
    }
    let drawing = read::read_dxf(
        dxf,
        &ReadOptions {
            file_name: &s.file_name,
            units: s.units,
        },
    )?;
    let bay_layer = s
        .job
        .as_ref()
        .and_then(|j| j.bay_layer.clone())
        .unwrap_or_else(|| s.bay_layer.clone());
    let part = chain::build_part(
        &drawing,
        &ChainOptions {
            gap_tolerance: s.gap_tolerance,
            bay_layer: bay_layer.clone(),
            construction_layers: s
                .job
                .as_ref()
                .map(JobFile::construction_layers)
                .unwrap_or_default(),
        },
    )
    .map_err(|error| JobError::Chain {
        file: file(),
        error,
    })?;
    let (specs, default_margin) = match &s.job {
        Some(job) => (job.features.clone(), job.margin.unwrap_or(s.margin)),
        None => (features::default_specs(&part), s.margin),
    };
    if specs.is_empty() && part.holes.is_empty() && part.outline.is_none() {
        return Err(JobError::NothingToCut {
            file: file(),
            bay_layer,
        });
    }
    let features = features::solve_features(
        &specs,
        &FeatureInputs {
            part: &part,
            drawing: &drawing,
            csv_points: &s.csv_points,
            default_margin,
        },
    );
    let unused_bays = part
        .bays
        .iter()
        .filter(|b| !features.iter().any(|f| f.bay.as_ref() == Some(&b.name)))
        .map(|b| b.name.clone())
        .collect();
    Ok(Solved {
        drawing,
        part,
        features,
        unused_bays,
    })
}

/// Solves every feature without cutting anything: what `conicut solve` lists.
pub fn solve_job(dxf: &[u8], s: &JobSettings) -> Result<SolveListing, JobError> {
    let solved = read_and_solve(dxf, s)?;
    let mut warnings = solved.part.warnings.clone();
    warnings.extend(unused_warnings(&solved.unused_bays));
    Ok(listing::build(
        &s.file_name,
        solved.drawing.units.symbol(),
        &solved.features,
        warnings,
        solved.drawing.notes.clone(),
    ))
}

fn unused_warnings(bays: &[String]) -> Vec<String> {
    bays.iter()
        .map(|b| format!("{b} is not named in the job file, so it is not cut"))
        .collect()
}

/// The leads to use: the command line first, then the job file's lead keys, the rest from the
/// profile.
fn resolve_leads(r: &LeadRequest, job: Option<&JobFile>, profile: &MachineProfile) -> LeadOptions {
    let base = profile.lead_options();
    let file = job.map(|j| j.leads).unwrap_or_default();
    let file_kind = file.shape.map(|s| match s {
        LeadShape::Straight => LeadKind::Straight,
        LeadShape::Line => LeadKind::Line,
        LeadShape::Arc => LeadKind::Arc,
        LeadShape::LineArc => LeadKind::LineArc,
    });
    LeadOptions {
        kind: r.kind.or(file_kind).unwrap_or(base.kind),
        length: r.length.or(file.length).unwrap_or(base.length),
        radius: r.radius.or(file.radius).unwrap_or(base.radius),
        overcut: r.overcut.or(file.overcut).unwrap_or(base.overcut),
        lead_out: r.lead_out.or(file.lead_out).unwrap_or(base.lead_out),
    }
}

/// Tab width on a mill or router when none is given (mm): router tabs are a few mm long (common
/// practice, docs/sources.md P4.3).
pub const MILL_TAB_WIDTH: f64 = 4.0;
/// Tab height above the floor of the cut on a mill or router when none is given (mm): about
/// 1–3 mm (common practice, §4.3).
pub const MILL_TAB_HEIGHT: f64 = 1.0;
/// Micro-joint (gap) width on a laser, plasma table or waterjet when none is given (mm): laser
/// sheet bridges are about 0.2–1 mm wide (common practice, §4.3).
pub const THERMAL_TAB_WIDTH: f64 = 0.5;

/// The tabs to use: what the user gave, width and height by kind of machine otherwise. Refuses a
/// request with both or neither of count and spacing, a count below 1, a spacing or width that
/// is not a positive number of mm, a mill or router tab height outside (0, cut depth), and a
/// height on the kinds that cut through (their tabs are gaps).
fn resolve_tabs(
    t: &TabRequest,
    profile: &MachineProfile,
    s: &JobSettings,
) -> Result<TabOptions, JobError> {
    let bad = |problem: String| JobError::BadTabs {
        file: s.file_name.clone(),
        problem,
    };
    let spacing = match (t.count, t.spacing) {
        (Some(_), Some(_)) => {
            return Err(bad(
                "give either a count (--tabs) or a spacing (--tab-spacing), not both".into(),
            ));
        }
        (None, None) => {
            return Err(bad(
                "give a count (--tabs N) or a spacing along the outline (--tab-spacing MM)".into(),
            ));
        }
        (Some(0), None) => return Err(bad("the count must be at least 1 (got 0)".into())),
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
        THERMAL_TAB_WIDTH
    } else {
        MILL_TAB_WIDTH
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
        let depth = s
            .depth
            .unwrap_or_else(|| profile.units().to_mm(profile.default_depth()));
        let h = t.height.unwrap_or(MILL_TAB_HEIGHT);
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
/// pass: a finishing allowance is refused ([`JobError::FinishCutsThrough`]). They always cut in
/// the usual direction for thermal cutting (outline clockwise, holes counter-clockwise: the
/// squarer side of a plasma kerf, on the right of travel with the usual swirl, falls on the part;
/// docs/sources.md P4.1): conventional milling is a milling matter, so a request for it is
/// ignored with the warning returned here rather than refused (the program is still right).
fn mill_only_settings(
    s: &JobSettings,
    profile: &MachineProfile,
) -> Result<(Direction, Option<String>), JobError> {
    if profile.spindle().is_some() {
        return Ok((s.direction, None));
    }
    if let Some(allowance) = s.finish_allowance {
        return Err(JobError::FinishCutsThrough {
            file: s.file_name.clone(),
            allowance,
            machine: profile.kind().to_string(),
        });
    }
    let warning = (s.direction == Direction::Conventional).then(|| {
        format!(
            "the conventional direction applies to mills and routers only and was ignored: the \
             {} cuts in the usual direction (outline clockwise, holes counter-clockwise)",
            profile.kind()
        )
    });
    Ok((Direction::Climb, warning))
}

/// Runs the whole job.
pub fn run_job(
    dxf: &[u8],
    profile: &MachineProfile,
    s: &JobSettings,
) -> Result<JobOutput, JobError> {
    let file = || s.file_name.clone();
    let solved = read_and_solve(dxf, s)?;
    // Laser, plasma and waterjet cut through the sheet: a pocket cannot be cleared to a depth.
    if profile.kerf_width().is_some()
        && let Some(f) = solved.features.iter().find(|f| f.cut == CutKind::Pocket)
    {
        return Err(JobError::PocketCutsThrough {
            file: file(),
            feature: f.name.clone(),
            machine: profile.kind().to_string(),
        });
    }
    let failures: Vec<String> = solved
        .features
        .iter()
        .filter_map(|f| {
            f.outcome
                .as_ref()
                .err()
                .map(|e| format!("  - {} ({}): {}", f.name, f.source, e.reason))
        })
        .collect();
    if !failures.is_empty() {
        return Err(JobError::Unsolved {
            file: file(),
            count: failures.len(),
            list: failures.join("\n"),
        });
    }
    let part = &solved.part;
    let mut to_cut = Vec::new();
    let mut infos = Vec::new();
    for f in &solved.features {
        let Ok(sol) = &f.outcome else { continue };
        to_cut.push(plan::Opening {
            name: f.name.clone(),
            ellipse: sol.ellipse,
            side: match f.cut {
                CutKind::Boss => plan::CutSide::Outside,
                CutKind::Hole | CutKind::Pocket => plan::CutSide::Inside,
            },
            pocket: f.cut == CutKind::Pocket,
        });
        infos.push(SolvedInfo {
            name: f.name.clone(),
            ellipse: sol.ellipse,
            source: f.source.clone(),
            rule: f.rule.clone(),
            chosen_because: sol.reason.clone(),
            candidates: sol.candidates.len(),
            margin_mm: f.margin_mm,
            residual: sol.candidates[sol.chosen].residual,
            fit: f.fit.map(|q| FitSummary {
                points: q.points,
                rms_residual_mm: q.rms_residual_mm,
                max_residual_mm: q.max_residual_mm,
            }),
        });
    }
    let tabs = match &s.tabs {
        Some(t) => Some(resolve_tabs(t, profile, s)?),
        None => None,
    };
    let (direction, direction_warning) = mill_only_settings(s, profile)?;
    let plan = plan::plan_cuts(
        part,
        &to_cut,
        &PlanOptions {
            tool_diameter: s.tool_diameter,
            leads: resolve_leads(&s.leads, s.job.as_ref(), profile),
            direction,
            tabs,
            finish_allowance: s.finish_allowance,
            pocket_stepover: s
                .pocket_stepover
                .unwrap_or_else(|| defaults::pocket_stepover(s.tool_diameter)),
            pierce_clearance: profile.pierce_clearance(),
        },
    )
    .map_err(|error| JobError::Plan {
        file: file(),
        error,
    })?;
    // Tolerance budget: the program's coordinates are rounded to the profile's decimals, which
    // moves a point by at most half a step on each axis (√2/2 steps in all). An arc's end points
    // and centre are rounded and the centre moved onto the bisector of the rounded ends, which
    // keeps the written arc within 2√2 steps of the exact one (the writer's property test,
    // tests/post_arcs.rs). The fit gets the rest; the deviation is then measured again on the
    // program as written, read back by the checker.
    let lines_only = s.lines_only || profile.arc_form() == post::ArcForm::LinesOnly;
    let units = profile.units();
    let step = units.to_mm(10f64.powi(-(profile.xy_decimals() as i32)));
    let rounding = if lines_only { 0.5 } else { 2.0 } * step * std::f64::consts::SQRT_2;
    if !(s.tolerance.is_finite() && s.tolerance >= 2.0 * rounding) {
        return Err(JobError::ToleranceTooFine {
            file: file(),
            tolerance: s.tolerance,
            rounding,
            decimals: profile.xy_decimals(),
        });
    }
    let fit_options = fit::FitOptions {
        tolerance: s.tolerance - rounding,
        moves: if lines_only {
            fit::MoveKind::Lines
        } else {
            fit::MoveKind::Arcs
        },
        scrap_side_only: s.scrap_side_only,
    };
    let mut cuts = fit::fit_plan(&plan, &fit_options).map_err(|error| JobError::Fit {
        file: file(),
        error,
    })?;
    for cut in &mut cuts {
        cut.tolerance = s.tolerance;
    }
    // Laser, plasma and waterjet cut through: no depth.
    let cuts_through = profile.kerf_width().is_some();
    let depth = if cuts_through {
        0.0
    } else {
        s.depth
            .unwrap_or_else(|| profile.units().to_mm(profile.default_depth()))
    };
    let program_settings = ProgramSettings {
        title: format!("elliptical openings for {}", s.file_name),
        source: s.file_name.clone(),
        tool_diameter: s.tool_diameter,
        depth,
        tolerance: s.tolerance,
        cut_feed: None,
        plunge_feed: None,
        spindle_speed: None,
        stepdown: s.stepdown,
        ramp_angle_deg: s.ramp_angle_deg,
        // A helix is written as arcs: not for straight moves only.
        helical_entry: s.helical_entry && !lines_only,
        tab_height: tabs.map_or(0.0, |t| t.height),
    };
    let post_error = |error| JobError::Post {
        file: file(),
        error,
    };
    let program = post::write_program(&cuts, profile, &program_settings).map_err(post_error)?;
    // Read the program back with the independent checker: every cut found by its number in the
    // writer's index comment, measured against its exact path, held to the tolerance (and the
    // scrap side), and every move off the contour kept off the finished part (`check::verify`).
    let rules = check::VerifyRules {
        tolerance: s.tolerance,
        rounding,
        scrap_side_only: s.scrap_side_only,
        tool_radius: s.tool_diameter / 2.0,
        pierce_clearance: profile.pierce_clearance(),
        skip_above_stock: profile.spindle().is_some(),
    };
    let verified = check::verify(&program, &plan.cuts, &rules).map_err(|found| {
        let read_back = |problem: String| JobError::ReadBack {
            file: file(),
            problem,
        };
        match found.0.into_iter().next() {
            Some(check::Finding::ToleranceExceeded {
                feature,
                measured,
                tolerance,
                ..
            }) => JobError::Fit {
                file: file(),
                error: FitError::ToleranceExceeded {
                    feature,
                    measured,
                    tolerance,
                },
            },
            Some(check::Finding::OffScrap {
                feature,
                part,
                line,
                x,
                y,
                problem,
            }) => JobError::OffScrap {
                file: file(),
                feature,
                part,
                line,
                x,
                y,
                problem,
            },
            Some(other) => read_back(other.to_string()),
            None => read_back("the checker found nothing and failed".into()),
        }
    })?;
    for (cut, read_back) in cuts.iter_mut().zip(&verified.cuts) {
        cut.measured_deviation = read_back.both_ways;
        cut.part_side_deviation = read_back.part_side;
    }
    let mut ellipses: Vec<(String, Ellipse)> =
        to_cut.iter().map(|o| (o.name.clone(), o.ellipse)).collect();
    let ellipse_holes: Vec<(String, Ellipse)> = part
        .holes
        .iter()
        .filter_map(|h| match &h.shape {
            HoleShape::Ellipse(e) => Some((h.name.clone(), *e)),
            HoleShape::Contour(_) => None,
        })
        .collect();
    ellipses.extend(ellipse_holes.iter().cloned());
    let preview = preview::preview_svg(&PreviewInput {
        title: &s.file_name,
        part,
        ellipses: &ellipses,
        cuts: &cuts,
        tool_diameter: s.tool_diameter,
    });
    let mut warnings = part.warnings.clone();
    warnings.extend(unused_warnings(&solved.unused_bays));
    warnings.extend(plan.warnings.iter().cloned());
    warnings.extend(direction_warning);
    let report = report::build_report(ReportInput {
        drawing: &s.file_name,
        drawing_units: solved.drawing.units.symbol(),
        machine: profile.name(),
        machine_kind: profile.kind().as_str(),
        tool_diameter: s.tool_diameter,
        cut_depth: depth,
        tolerance: s.tolerance,
        solved: &infos,
        ellipse_holes: &ellipse_holes,
        cuts: &cuts,
        warnings,
        notes: solved.drawing.notes.clone(),
        program_bounds: verified.bounds,
        largest_arc_radius_mismatch: verified.largest_arc_radius_mismatch,
        tab_height: tabs
            .filter(|t| t.height > 0.0 && !cuts_through)
            .map(|t| t.height),
    });
    Ok(JobOutput {
        program,
        preview,
        report,
    })
}
