//! The whole job as one pure function: DXF bytes and settings in; the program, the preview and
//! the report out. No files are touched here: the command layer reads the inputs and writes the
//! outputs.

use crate::chain::{self, ChainError, ChainOptions, HoleShape};
use crate::fit::{self, FitError};
use crate::geom::{Ellipse, Point};
use crate::plan::{self, PlanError, PlanOptions};
use crate::post::{self, MachineProfile, PostError, ProgramSettings};
use crate::preview::{self, PreviewInput};
use crate::read::{self, ReadError, ReadOptions, Units};
use crate::report::{self, Report, ReportInput};
use crate::solve::{self, SolveError};

/// What the user asked for.
#[derive(Debug, Clone, PartialEq)]
pub struct JobSettings {
    /// The drawing's file name, for messages and headers (not a path of this machine).
    pub file_name: String,
    /// Units to assume when the drawing states none (`--units`).
    pub units: Option<Units>,
    pub bay_layer: String,
    /// Largest gap closed when chaining pieces into contours (mm).
    pub gap_tolerance: f64,
    /// Edge margin: the bay's sides are moved inward by this much before solving (mm).
    pub margin: f64,
    /// Cutter diameter (mm).
    pub tool_diameter: f64,
    /// Largest distance between the emitted path and the exact curve (mm).
    pub tolerance: f64,
    /// Cut depth (mm, positive); `None` uses the machine profile's default.
    pub depth: Option<f64>,
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
    #[error("{file}: {source}")]
    Chain { file: String, source: ChainError },
    #[error("{file}: {source}")]
    Solve { file: String, source: SolveError },
    #[error("{file}: {source}")]
    Plan { file: String, source: PlanError },
    #[error("{file}: {source}")]
    Fit { file: String, source: FitError },
    #[error("{file}: {source}")]
    Post { file: String, source: PostError },
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
         outline. Check the layer names (--bay-layer) and that the contours are closed"
    )]
    NothingToCut { file: String, bay_layer: String },
}

/// Runs the whole job.
pub fn run_job(
    dxf: &[u8],
    profile: &MachineProfile,
    s: &JobSettings,
) -> Result<JobOutput, JobError> {
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
    let part = chain::build_part(
        &drawing,
        &ChainOptions {
            gap_tolerance: s.gap_tolerance,
            bay_layer: s.bay_layer.clone(),
        },
    )
    .map_err(|source| JobError::Chain {
        file: file(),
        source,
    })?;
    if part.bays.is_empty() && part.holes.is_empty() && part.outline.is_none() {
        return Err(JobError::NothingToCut {
            file: file(),
            bay_layer: s.bay_layer.clone(),
        });
    }
    let openings = part
        .bays
        .iter()
        .map(|b| solve::largest_tangent_ellipse(b, s.margin))
        .collect::<Result<Vec<_>, _>>()
        .map_err(|source| JobError::Solve {
            file: file(),
            source,
        })?;
    let plan = plan::plan_cuts(
        &part,
        &openings,
        &PlanOptions {
            tool_diameter: s.tool_diameter,
        },
    )
    .map_err(|source| JobError::Plan {
        file: file(),
        source,
    })?;
    // Tolerance budget: the program's coordinates are rounded to the profile's decimals, which
    // moves a point by at most half a step on each axis (√2/2 steps in all); the fit gets the
    // rest. The deviation is then measured again on the rounded points, as they are written.
    let units = profile.units();
    let step = units.to_mm(10f64.powi(-(profile.xy_decimals() as i32)));
    let rounding = 0.5 * step * std::f64::consts::SQRT_2;
    if !(s.tolerance.is_finite() && s.tolerance >= 2.0 * rounding) {
        return Err(JobError::ToleranceTooFine {
            file: file(),
            tolerance: s.tolerance,
            rounding,
            decimals: profile.xy_decimals(),
        });
    }
    let mut cuts =
        fit::fit_plan(&plan, s.tolerance - rounding).map_err(|source| JobError::Fit {
            file: file(),
            source,
        })?;
    let snap = |v: f64| {
        let written = post::format_number(units.from_mm(v), profile.xy_decimals());
        written.parse::<f64>().map(|w| units.to_mm(w)).unwrap_or(v)
    };
    for (cut, planned) in cuts.iter_mut().zip(&plan.cuts) {
        let written: Vec<Point> = cut
            .path
            .iter()
            .map(|p| Point::new(snap(p.x), snap(p.y)))
            .collect();
        cut.measured_deviation = fit::measure_deviation(&written, &planned.path);
        cut.tolerance = s.tolerance;
        if cut.measured_deviation > s.tolerance {
            return Err(JobError::Fit {
                file: file(),
                source: FitError::ToleranceExceeded {
                    feature: cut.name.clone(),
                    measured: cut.measured_deviation,
                    tolerance: s.tolerance,
                },
            });
        }
    }
    let depth = s
        .depth
        .unwrap_or_else(|| profile.units().to_mm(profile.default_depth()));
    let program = post::write_program(
        &cuts,
        profile,
        &ProgramSettings {
            title: format!("elliptical openings for {}", s.file_name),
            source: s.file_name.clone(),
            tool_diameter: s.tool_diameter,
            depth,
            tolerance: s.tolerance,
            cut_feed: None,
            plunge_feed: None,
            spindle_speed: None,
        },
    )
    .map_err(|source| JobError::Post {
        file: file(),
        source,
    })?;
    let mut ellipses: Vec<(String, Ellipse)> = openings
        .iter()
        .map(|o| (o.bay.clone(), o.ellipse))
        .collect();
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
        part: &part,
        ellipses: &ellipses,
        cuts: &cuts,
        tool_diameter: s.tool_diameter,
    });
    let mut warnings = part.warnings.clone();
    warnings.extend(plan.warnings.iter().cloned());
    let report = report::build_report(ReportInput {
        drawing: &s.file_name,
        drawing_units: drawing.units.symbol(),
        machine: profile.name(),
        tool_diameter: s.tool_diameter,
        cut_depth: depth,
        tolerance: s.tolerance,
        openings: &openings,
        ellipse_holes: &ellipse_holes,
        cuts: &cuts,
        warnings,
        notes: drawing.notes.clone(),
    });
    Ok(JobOutput {
        program,
        preview,
        report,
    })
}
