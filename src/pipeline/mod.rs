//! The whole job as one pure function: DXF bytes and settings in; the program, the preview and
//! the report out. No files are touched here: the command layer reads the inputs and writes the
//! outputs.

pub mod features;
pub mod listing;
pub mod office;

use crate::chain::{self, ChainError, ChainOptions, InnerShape};
use crate::check;
use crate::fit::{self, FitError};
use crate::geom::Ellipse;
use crate::plan::{self, PlanError};
use crate::post::{self, MachineProfile, PostError};
use crate::preview::{self, PreviewInput};
use crate::read::{self, ReadError, ReadOptions};
use crate::report::{self, FitSummary, Report, ReportInput, SolvedInfo};
use crate::settings::job_file::{CutKind, JobFile};
use crate::settings::{self, Machine, ResolvedJob, SettingsError};
pub use crate::settings::{JobSettings, LeadRequest, TabRequest};
use features::{FeatureInputs, SolvedFeature};
use listing::SolveListing;

/// Everything the job produces.
#[derive(Debug, Clone, PartialEq)]
pub struct JobOutput {
    pub program: String,
    pub preview: String,
    pub report: Report,
    /// The interactive page of the program (`--html`), when asked for.
    pub view: Option<String>,
}

/// Why the job stopped; every message names the drawing.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum JobError {
    /// The settings cannot run on this machine (see [`SettingsError`]).
    #[error("{file}: {error}")]
    Settings { file: String, error: SettingsError },
    #[error(transparent)]
    Read(#[from] ReadError),
    #[error("{file}: {error}")]
    Chain { file: String, error: ChainError },
    #[error("{file}: {error}")]
    Plan { file: String, error: PlanError },
    /// Openings through or outside the outline, or overlapping (see [`plan::check_layout`]).
    #[error("{file}: {error}; nothing was written")]
    Layout {
        file: String,
        error: plan::LayoutError,
    },
    #[error("{file}: {error}")]
    Fit { file: String, error: FitError },
    #[error("{file}: {error}")]
    Post { file: String, error: PostError },
    #[error("{file}: {error}")]
    Zero {
        file: String,
        error: plan::ZeroError,
    },
    #[error(
        "{file}: the layers to cut name {missing}, which the drawing does not have; its layers \
         are {known}. Check the spelling (--cut-layers, or cut_layers in the job file)"
    )]
    UnknownCutLayers {
        file: String,
        missing: String,
        known: String,
    },
    #[error(
        "{file}: the drawing has no layer \"{layer}\" to take the bays from (asked for by \
         {asked}); its layers are {known}. Check the spelling, or leave it out to use the \
         default layer \"{default}\"; nothing was written"
    )]
    UnknownBayLayer {
        file: String,
        layer: String,
        asked: &'static str,
        known: String,
        default: &'static str,
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
    /// A move off the contour brings the tool onto the finished part, as the checker read it
    /// back (`check::Finding::OffScrap`).
    #[error(
        "{file}: {finding}. This is a bug, please report it with the drawing; nothing was written"
    )]
    OffScrap {
        file: String,
        finding: check::Finding,
    },
    #[error(
        "{file}: {entity} reaches {reach} mm from the drawing's origin, farther than any \
         machine travels ({limit} mm): the drawing is scaled or its units are wrong. Check \
         $INSUNITS or --units and the drawing's scale"
    )]
    TooFar {
        file: String,
        /// `entity H (line N, layer L)`.
        entity: String,
        reach: String,
        limit: String,
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
}

/// How far from the drawing's origin any point may lie, mm (1000 km): past this no machine
/// travels, and the arithmetic of chaining and solving would lose every digit that matters (a
/// drawing scaled by mistake, or with units misread).
pub const MAX_REACH_MM: f64 = 1e9;

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
    if let Some((e, reach)) = drawing.farthest()
        && reach > MAX_REACH_MM
    {
        return Err(JobError::TooFar {
            file: file(),
            entity: format!("entity {} (line {}, layer {})", e.handle, e.line, e.layer),
            reach: if reach.is_finite() {
                format!("{reach:.3e}")
            } else {
                "an endless distance".into()
            },
            limit: format!("{MAX_REACH_MM:e}"),
        });
    }
    let layer_warnings = check_layer_names(&drawing, s)?;
    let from_job = s.job.as_ref().and_then(|j| j.bay_layer.clone());
    let asked = if from_job.is_some() {
        Some("the job file's bay_layer")
    } else if !s.bay_layer.eq_ignore_ascii_case(chain::DEFAULT_BAY_LAYER) {
        Some("--bay-layer")
    } else {
        None
    };
    let bay_layer = from_job.unwrap_or_else(|| s.bay_layer.clone());
    // A bay layer named by the user that the drawing lacks is a misspelling: refused, since the
    // bays would otherwise be cut as sharp-cornered holes. The default layer may be missing (a
    // drawing of holes and an outline only): that is a warning below.
    if let Some(asked) = asked {
        let names = layer_names(&drawing);
        if !names.iter().any(|n| n.eq_ignore_ascii_case(&bay_layer)) {
            return Err(JobError::UnknownBayLayer {
                file: file(),
                layer: bay_layer,
                asked,
                known: names.join(", "),
                default: chain::DEFAULT_BAY_LAYER,
            });
        }
    }
    let part = chain::build_part(
        &drawing,
        &ChainOptions {
            max_gap: s.max_gap,
            bay_layer: bay_layer.clone(),
            construction_layers: s
                .job
                .as_ref()
                .map(JobFile::construction_layers)
                .unwrap_or_default(),
            cut_layers: s.cut_layers(),
            skip_layers: s.skip_layers(),
        },
    )
    .map_err(|error| JobError::Chain {
        file: file(),
        error,
    })?;
    let mut part = part;
    part.warnings.extend(layer_warnings);
    if s.job.is_none() && part.bays.is_empty() {
        part.warnings.push(no_bays_warning(&drawing, &bay_layer));
    }
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
    let used: std::collections::HashSet<&str> =
        features.iter().filter_map(|f| f.bay.as_deref()).collect();
    let unused_bays = part
        .bays
        .iter()
        .filter(|b| !used.contains(b.name()))
        .map(|b| b.name().to_string())
        .collect();
    Ok(Solved {
        drawing,
        part,
        features,
        unused_bays,
    })
}

/// The drawing's layer names: its LAYER table's, then any others its entities use, each once
/// (compared ignoring case), in that order.
fn layer_names(drawing: &read::Drawing) -> Vec<String> {
    let mut seen = std::collections::HashSet::new();
    drawing
        .layers
        .iter()
        .map(|l| l.name.as_str())
        .chain(drawing.entities.iter().map(|e| e.layer.as_str()))
        .filter(|n| seen.insert(n.to_lowercase()))
        .map(str::to_string)
        .collect()
}

/// The warning for a drawing with no bays to solve (and no job file naming features).
fn no_bays_warning(drawing: &read::Drawing, bay_layer: &str) -> String {
    let names = layer_names(drawing);
    let has_layer = names.iter().any(|n| n.eq_ignore_ascii_case(bay_layer));
    let why = if has_layer {
        format!("layer \"{bay_layer}\" holds no closed loop of straight sides")
    } else {
        format!("the drawing has no layer \"{bay_layer}\"")
    };
    format!(
        "no bays were found ({why}), so no elliptical opening is cut, only the outline and the \
         drawn holes; name the layer that holds the bays with --bay-layer (the drawing's layers: \
         {})",
        names.join(", ")
    )
}

/// Refuses layers to cut that the drawing does not have (a misspelt name would cut nothing of
/// it); warns of layers to skip that it does not have.
fn check_layer_names(drawing: &read::Drawing, s: &JobSettings) -> Result<Vec<String>, JobError> {
    let names = layer_names(drawing);
    let known: std::collections::HashSet<String> = names.iter().map(|n| n.to_lowercase()).collect();
    let missing = |asked: &[String]| -> Vec<String> {
        asked
            .iter()
            .filter(|n| !known.contains(&n.to_lowercase()))
            .map(|n| format!("\"{n}\""))
            .collect()
    };
    if let Some(cut) = s.cut_layers() {
        let gone = missing(&cut);
        if !gone.is_empty() {
            return Err(JobError::UnknownCutLayers {
                file: s.file_name.clone(),
                missing: gone.join(", "),
                known: names.join(", "),
            });
        }
    }
    let gone = missing(&s.skip_layers());
    Ok(if gone.is_empty() {
        Vec::new()
    } else {
        vec![format!(
            "the layers to skip name {}, which the drawing does not have (its layers are {})",
            gone.join(", "),
            names.join(", ")
        )]
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
        all_notes(&solved),
    ))
}

/// The drawing's notes (what was read but not used), then the part's (what was read but not
/// cut).
fn all_notes(solved: &Solved) -> Vec<String> {
    let mut notes = solved.drawing.notes.clone();
    notes.extend(solved.part.notes.iter().cloned());
    notes
}

fn unused_warnings(bays: &[String]) -> Vec<String> {
    bays.iter()
        .map(|b| format!("{b} is not named in the job file, so it is not cut"))
        .collect()
}

/// Runs the whole job: resolves `s` against `machine` ([`settings::resolve`]), then
/// [`run_resolved`].
pub fn run_job(dxf: &[u8], machine: &Machine, s: &JobSettings) -> Result<JobOutput, JobError> {
    let resolved = resolve(s, machine)?;
    run_resolved(dxf, &machine.profile, s, &resolved)
}

/// The request resolved against the profile, or the refusal naming the drawing.
pub fn resolve(s: &JobSettings, machine: &Machine) -> Result<ResolvedJob, JobError> {
    settings::resolve(s, machine).map_err(|error| JobError::Settings {
        file: s.file_name.clone(),
        error,
    })
}

/// Runs the whole job with settings already resolved (`resolved` from [`resolve`] of `s`): read
/// and solve, plan, fit, write, read back, then the preview and the report.
pub fn run_resolved(
    dxf: &[u8],
    profile: &MachineProfile,
    s: &JobSettings,
    resolved: &ResolvedJob,
) -> Result<JobOutput, JobError> {
    run_resolved_watched(dxf, profile, s, resolved, &|_| {})
}

/// A step of the job, told to a watcher as it starts (for a progress display).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Step {
    /// Reading the drawing, chaining it and solving every feature.
    Solving,
    /// Planning this many features' cuts.
    Planning(usize),
    /// Fitting this many cuts.
    Fitting(usize),
    /// Writing the program.
    Writing,
    /// Reading the program back and checking this many cuts.
    Checking(usize),
    /// Drawing the preview and the report.
    Reporting,
}

impl Step {
    /// Every step, in order, for a display that counts them.
    pub const COUNT: usize = 6;

    /// The step's place in the order, from 0.
    pub fn index(self) -> usize {
        match self {
            Step::Solving => 0,
            Step::Planning(_) => 1,
            Step::Fitting(_) => 2,
            Step::Writing => 3,
            Step::Checking(_) => 4,
            Step::Reporting => 5,
        }
    }

    /// What the step does, in words: `fitting 1200 cuts`.
    pub fn describe(self) -> String {
        match self {
            Step::Solving => "reading and solving".into(),
            Step::Planning(n) => format!("planning {n} features"),
            Step::Fitting(n) => format!("fitting {n} cuts"),
            Step::Writing => "writing the program".into(),
            Step::Checking(n) => format!("checking {n} cuts"),
            Step::Reporting => "drawing the preview".into(),
        }
    }
}

/// [`run_resolved`], telling `watch` each [`Step`] as it starts.
pub fn run_resolved_watched(
    dxf: &[u8],
    profile: &MachineProfile,
    s: &JobSettings,
    resolved: &ResolvedJob,
    watch: &dyn Fn(Step),
) -> Result<JobOutput, JobError> {
    run_resolved_viewed(dxf, profile, s, resolved, watch, None)
}

/// [`run_resolved_watched`], and with `view_title` the interactive page of the program written
/// ([`check::view`]) headed by it.
pub fn run_resolved_viewed(
    dxf: &[u8],
    profile: &MachineProfile,
    s: &JobSettings,
    resolved: &ResolvedJob,
    watch: &dyn Fn(Step),
    view_title: Option<&str>,
) -> Result<JobOutput, JobError> {
    let file = || s.file_name.clone();
    let Planned {
        solved,
        to_cut,
        infos,
        zero,
        plan,
    } = plan_job(dxf, profile, s, resolved, watch)?;
    let mut program_settings = resolved.program.clone();
    program_settings.work_zero = Some(zero.words.clone());
    // The fit gets the tolerance less what rounding may take (`settings::ToleranceBudget`);
    // the checker then measures the program as written against the whole tolerance.
    watch(Step::Fitting(plan.cuts.len()));
    let mut cuts = fit::fit_plan(&plan, &resolved.fit).map_err(|error| JobError::Fit {
        file: file(),
        error,
    })?;
    for cut in &mut cuts {
        cut.tolerance = s.tolerance;
    }
    watch(Step::Writing);
    let program =
        post::write_program(&cuts, profile, &program_settings).map_err(|error| JobError::Post {
            file: file(),
            error,
        })?;
    watch(Step::Checking(plan.cuts.len()));
    let verified = read_back(&program, &plan.cuts, s, resolved, profile)?;
    // The same check `conicut check` runs, on what was written: anything it must refuse is a
    // bug here; its cycle time goes into the header and the report.
    let checked = check_written(&program, &plan.cuts, s, resolved, profile)?;
    let program = program.replacen(
        post::CYCLE_TIME_PLACEHOLDER,
        &format!(
            "estimated cycle time: {}, from the profile's feeds and acceleration",
            check::program::minutes(checked.cycle_time.total_s)
        ),
        1,
    );
    for (cut, read_back) in cuts.iter_mut().zip(&verified.cuts) {
        cut.measured_deviation = read_back.both_ways;
        cut.part_side_deviation = read_back.part_side;
    }
    watch(Step::Reporting);
    let (preview, report) = present(&Finished {
        s,
        resolved,
        profile,
        solved: &solved,
        to_cut: &to_cut,
        infos: &infos,
        plan: &plan,
        cuts: &cuts,
        verified: &verified,
        zero: &zero,
        cycle_time: checked.cycle_time,
    });
    let view = view_title.map(|title| {
        check::program::view_page(
            title,
            &program,
            &machine_rules(profile),
            &plan.cuts,
            &checked.findings,
        )
    });
    Ok(JobOutput {
        program,
        preview,
        report,
        view,
    })
}

/// The job planned: the drawing solved, the work zero placed, every cut's exact path.
struct Planned {
    solved: Solved,
    to_cut: Vec<plan::Opening>,
    infos: Vec<SolvedInfo>,
    zero: plan::PlacedZero,
    plan: plan::Plan,
}

/// Reads and solves the drawing, places the work zero and plans every cut.
fn plan_job(
    dxf: &[u8],
    profile: &MachineProfile,
    s: &JobSettings,
    resolved: &ResolvedJob,
    watch: &dyn Fn(Step),
) -> Result<Planned, JobError> {
    watch(Step::Solving);
    let mut solved = read_and_solve(dxf, s)?;
    refuse_unsolved(&solved, profile, &s.file_name)?;
    let (mut to_cut, mut infos) = openings(&solved.features);
    let zero = place_zero(s, &mut solved, &mut to_cut, &mut infos)?;
    if profile.spindle().is_none() {
        for f in solved
            .features
            .iter()
            .filter(|f| f.own.depth.is_some() || f.own.stepdown.is_some())
        {
            solved.part.warnings.push(format!(
                "{}: its own depth and stepdown apply to mills and routers only and were \
                 ignored: a {} cuts through",
                f.name,
                profile.kind()
            ));
        }
        for f in solved
            .features
            .iter()
            .filter(|f| f.own.spindle_speed.is_some())
        {
            solved.part.warnings.push(format!(
                "{}: its own spindle_speed applies to mills and routers only and was ignored: \
                 a {} has no spindle",
                f.name,
                profile.kind()
            ));
        }
    }
    watch(Step::Planning(
        to_cut.len() + solved.part.holes.len() + usize::from(solved.part.outline.is_some()),
    ));
    let twins = plan::check_layout(&solved.part, &to_cut).map_err(|error| JobError::Layout {
        file: s.file_name.clone(),
        error,
    })?;
    drop_twins(&twins, &mut solved, &mut to_cut, &mut infos);
    let plan =
        plan::plan_cuts(&solved.part, &to_cut, &resolved.plan).map_err(|error| JobError::Plan {
            file: s.file_name.clone(),
            error,
        })?;
    post::edges_in_travel(&plan.cuts, profile, resolved.tool_diameter / 2.0).map_err(|error| {
        JobError::Post {
            file: s.file_name.clone(),
            error,
        }
    })?;
    Ok(Planned {
        solved,
        to_cut,
        infos,
        zero,
        plan,
    })
}

/// Openings drawn twice are cut once: the later copies leave the cuts and the listing, and the
/// plan warns of each.
fn drop_twins(
    twins: &[plan::Twin],
    solved: &mut Solved,
    to_cut: &mut Vec<plan::Opening>,
    infos: &mut Vec<SolvedInfo>,
) {
    if twins.is_empty() {
        return;
    }
    let mut keep = vec![true; to_cut.len()];
    for t in twins {
        solved.part.warnings.push(t.warning(to_cut));
        keep[t.dropped] = false;
    }
    let mut k = keep.iter();
    to_cut.retain(|_| *k.next().unwrap_or(&true));
    let mut k = keep.iter();
    infos.retain(|_| *k.next().unwrap_or(&true));
}

/// `conicut check`: `program` (from anywhere) read on its own and held to the text rules, the
/// profile's limits and the cuts the drawing and job call for (planned again exactly as `plan`
/// would, with the same settings).
pub fn check_job(
    program: &str,
    dxf: &[u8],
    profile: &MachineProfile,
    s: &JobSettings,
    resolved: &ResolvedJob,
    pictures: &check::program::Pictures,
) -> Result<check::program::ProgramCheck, JobError> {
    let cuts = planned_cuts(dxf, profile, s, resolved)?;
    Ok(check::program::check_program(
        program,
        &machine_rules(profile),
        &cuts,
        &against_rules(s, resolved, profile, false),
        pictures,
    ))
}

/// The cuts `plan` would make of the drawing with these settings, each with its exact path:
/// what [`check_job`] holds a program to.
pub fn planned_cuts(
    dxf: &[u8],
    profile: &MachineProfile,
    s: &JobSettings,
    resolved: &ResolvedJob,
) -> Result<Vec<plan::PlannedCut>, JobError> {
    Ok(plan_job(dxf, profile, s, resolved, &|_| {})?.plan.cuts)
}

/// What the check holds the cutting moves to; `contours_measured` when the job's own read-back
/// has measured every contour already.
pub fn against_rules(
    s: &JobSettings,
    resolved: &ResolvedJob,
    profile: &MachineProfile,
    contours_measured: bool,
) -> check::against::AgainstRules {
    check::against::AgainstRules {
        tool_radius: resolved.tool_diameter / 2.0,
        tolerance: s.tolerance,
        thermal: profile.spindle().is_none(),
        contours_measured,
    }
}

/// `conicut check` on the program just written: must-fix findings are a bug (the job stops,
/// nothing is written), warnings go to the report.
fn check_written(
    program: &str,
    cuts: &[plan::PlannedCut],
    s: &JobSettings,
    resolved: &ResolvedJob,
    profile: &MachineProfile,
) -> Result<check::program::ProgramCheck, JobError> {
    // `read_back` (check::verify) has just measured every contour.
    let rules = against_rules(s, resolved, profile, true);
    let checked = check::program::check_program(
        program,
        &machine_rules(profile),
        cuts,
        &rules,
        &check::program::Pictures::default(),
    );
    let must: Vec<String> = checked
        .findings
        .iter()
        .filter(|f| f.severity == check::reader::Severity::MustFix)
        .map(|f| format!("line {}: {}", f.line, f.message))
        .collect();
    if !must.is_empty() {
        return Err(JobError::ReadBack {
            file: s.file_name.clone(),
            problem: format!(
                "the program as written fails the check ({}); this is a bug, please report it \
                 with the drawing",
                must.join("; ")
            ),
        });
    }
    Ok(checked)
}

/// The profile as the checker holds a program to it, in mm.
pub fn machine_rules(profile: &MachineProfile) -> check::program::MachineRules {
    let u = profile.units();
    let t = profile.travel();
    let words = |w: &str| vec![w.split_whitespace().map(str::to_string).collect::<Vec<_>>()];
    let (on_words, off_words) = match profile.cutter() {
        crate::post::Cutter::Spindle(sp) => (words(&sp.on), words(&sp.off)),
        crate::post::Cutter::Process(p) => (words(&p.on), words(&p.off)),
    };
    check::program::MachineRules {
        profile: profile.name().to_string(),
        travel: [
            [u.to_mm(t.x_min), u.to_mm(t.x_max)],
            [u.to_mm(t.y_min), u.to_mm(t.y_max)],
            [u.to_mm(t.z_min), u.to_mm(t.z_max)],
        ],
        max_feed: u.to_mm(profile.max_feed()),
        max_spindle_speed: profile.spindle().map(|sp| sp.max_speed),
        safe_height: u.to_mm(profile.safe_height()),
        pierce_dwell: profile.process().map(|p| p.pierce_dwell),
        dialect: check::reader::Dialect {
            dwell_in_ms: profile.dwell_unit() == crate::post::DwellUnit::Milliseconds,
            on_words,
            off_words,
        },
        acceleration: u.to_mm(profile.acceleration()),
        rapid_feed: u.to_mm(profile.rapid_feed()),
    }
}

/// What the job has made, for the preview and the report.
struct Finished<'a> {
    s: &'a JobSettings,
    resolved: &'a ResolvedJob,
    profile: &'a MachineProfile,
    solved: &'a Solved,
    to_cut: &'a [plan::Opening],
    infos: &'a [SolvedInfo],
    plan: &'a plan::Plan,
    cuts: &'a [fit::FittedCut],
    verified: &'a check::Verified,
    zero: &'a plan::PlacedZero,
    cycle_time: check::time::CycleTime,
}

/// The preview and the report of a finished job.
fn present(f: &Finished) -> (String, Report) {
    let (s, resolved, solved) = (f.s, f.resolved, f.solved);
    let ellipse_holes = ellipse_holes(&solved.part);
    let mut ellipses: Vec<(String, Ellipse)> = f
        .to_cut
        .iter()
        .map(|o| (o.name.clone(), o.ellipse))
        .collect();
    ellipses.extend(ellipse_holes.iter().cloned());
    let preview = preview::preview_svg_with(
        &PreviewInput {
            title: &s.file_name,
            part: &solved.part,
            ellipses: &ellipses,
            cuts: f.cuts,
            tool_diameter: resolved.tool_diameter,
            work_zero: &f.zero.words,
        },
        &preview::PreviewOptions {
            process: if resolved.cuts_through {
                preview::Process::CutThrough
            } else {
                preview::Process::Tool
            },
        },
    );
    let mut warnings = solved.part.warnings.clone();
    warnings.extend(unused_warnings(&solved.unused_bays));
    warnings.extend(f.plan.warnings.iter().cloned());
    warnings.extend(resolved.warnings.iter().cloned());
    let report = report::build_report(ReportInput {
        drawing: &s.file_name,
        drawing_units: solved.drawing.units.symbol(),
        machine: f.profile.name(),
        machine_kind: f.profile.kind().as_str(),
        tool_diameter: resolved.tool_diameter,
        cut_depth: resolved.depth,
        tolerance: s.tolerance,
        solved: f.infos,
        ellipse_holes: &ellipse_holes,
        cuts: f.cuts,
        warnings,
        notes: all_notes(solved),
        layers: &solved.part.layers,
        program_bounds: f.verified.bounds,
        largest_arc_radius_mismatch: f.verified.largest_arc_radius_mismatch,
        rapids: Some(f.verified.rapids),
        tab_height: resolved
            .plan
            .tabs
            .filter(|t| t.height > 0.0 && !resolved.cuts_through)
            .map(|t| t.height),
        work_zero: f.zero,
        cycle_time: Some(f.cycle_time),
    });
    (preview, report)
}

/// Places the work zero the user asked for on the part and moves everything to be cut (the
/// part and the solved ellipses) into program coordinates, X0 Y0 at that point (`plan::zero`).
fn place_zero(
    s: &JobSettings,
    solved: &mut Solved,
    to_cut: &mut [plan::Opening],
    infos: &mut [SolvedInfo],
) -> Result<plan::PlacedZero, JobError> {
    let ellipses: Vec<Ellipse> = to_cut.iter().map(|o| o.ellipse).collect();
    let zero = s
        .work_zero()
        .place(&solved.part, &ellipses)
        .map_err(|error| JobError::Zero {
            file: s.file_name.clone(),
            error,
        })?;
    let v = zero.shift;
    if v.x != 0.0 || v.y != 0.0 {
        solved.part = solved.part.translated(v);
        for o in to_cut.iter_mut() {
            o.ellipse = o.ellipse.translated(v);
        }
        for i in infos.iter_mut() {
            i.ellipse = i.ellipse.translated(v);
        }
    }
    Ok(zero)
}

/// Refuses a pocket on a kind that cuts through, and a job with features that could not be
/// solved (all of them listed).
fn refuse_unsolved(solved: &Solved, profile: &MachineProfile, file: &str) -> Result<(), JobError> {
    let file = || file.to_string();
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
    Ok(())
}

/// The openings to cut and what the report says of each, from the solved features.
fn openings(features: &[SolvedFeature]) -> (Vec<plan::Opening>, Vec<SolvedInfo>) {
    let mut to_cut = Vec::new();
    let mut infos = Vec::new();
    for f in features {
        let Ok(sol) = &f.outcome else { continue };
        to_cut.push(plan::Opening {
            name: f.name.clone(),
            ellipse: sol.ellipse(),
            side: match f.cut {
                CutKind::Boss => plan::CutSide::Outside,
                CutKind::Hole | CutKind::Pocket => plan::CutSide::Inside,
            },
            pocket: f.cut == CutKind::Pocket,
            own: f.own,
        });
        infos.push(SolvedInfo {
            name: f.name.clone(),
            ellipse: sol.ellipse(),
            source: f.source.clone(),
            rule: f.rule.clone(),
            chosen_because: sol.reason().to_string(),
            candidates: sol.candidates().len(),
            margin_mm: f.margin_mm,
            residual: sol.candidates()[sol.chosen()].residual,
            fit: f.fit.map(|q| FitSummary {
                points: q.points,
                geometric: q.geometric,
                rejected: q.rejected,
                rms_residual_mm: q.rms_residual_mm,
                max_residual_mm: q.max_residual_mm,
            }),
        });
    }
    (to_cut, infos)
}

/// The program read back by the independent checker: every cut found by its number in the
/// writer's index comment, measured against its exact path, held to the tolerance (and the
/// scrap side), and every move off the contour kept off the finished part (`check::verify`).
/// The first finding becomes the job's error.
fn read_back(
    program: &str,
    cuts: &[plan::PlannedCut],
    s: &JobSettings,
    resolved: &ResolvedJob,
    profile: &MachineProfile,
) -> Result<check::Verified, JobError> {
    let file = || s.file_name.clone();
    let rules = check::VerifyRules {
        tolerance: s.tolerance,
        rounding: resolved.budget.rounding,
        scrap_side_only: s.scrap_side_only,
        tool_radius: resolved.tool_diameter / 2.0,
        pierce_clearance: resolved.plan.pierce_clearance,
        skip_above_stock: profile.spindle().is_some(),
    };
    check::verify(program, cuts, &rules).map_err(|found| {
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
            Some(finding @ check::Finding::OffScrap { .. }) => JobError::OffScrap {
                file: file(),
                finding,
            },
            Some(other) => read_back(other.to_string()),
            None => read_back("the checker found nothing and failed".into()),
        }
    })
}

/// The drawn elliptical inner boundaries, by name, for the preview and the report.
fn ellipse_holes(part: &crate::chain::Part) -> Vec<(String, Ellipse)> {
    part.holes
        .iter()
        .filter_map(|h| match &h.shape {
            InnerShape::Ellipse(e) => Some((h.name.clone(), *e)),
            InnerShape::Contour(_) => None,
        })
        .collect()
}
