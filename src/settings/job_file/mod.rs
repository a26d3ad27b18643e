//! Job files: which ellipse the shop wants for each feature of a drawing, in TOML.
//!
//! [`parse_job_file`] is pure: it takes the file's text and name and returns a [`JobFile`] with
//! every coordinate and size already in millimetres. It reads no other file: a `fit_csv` path is
//! returned as written (relative to the job file) for the command layer to read, and DXF layers
//! are returned by name.
//!
//! # Schema
//!
//! ```toml
//! units = "mm"                  # required: mm or in (cm, m, ft also accepted). Every coordinate
//!                               # and size in this file is in this unit; nothing is guessed.
//! margin = 4.0                  # optional: default edge margin for bay features (≥ 0)
//! bay_layer = "OPENING-BAYS"    # optional: the DXF layer holding the bays
//! cut_layers = ["PLATE"]        # optional: cut only these layers' geometry (bays as always)
//! skip_layers = ["DIMS"]        # optional: never cut these layers' geometry
//! feed = 1200.0                # optional: cutting feed, file units per minute
//! plunge_feed = 300.0           # optional: feed down into the work, file units per minute
//! spindle_speed = 18000         # optional: rpm (mills and routers)
//! zero = "lower-left"           # optional: the program's X0 Y0: drawing | lower-left |
//!                               # lower-right | upper-left | upper-right | centre (of the
//!                               # outline's box), or a drawing point [x, y]; default drawing
//! work_offset = "G55"           # optional: G54 … G59; default the machine profile's
//! lead = "line-arc"             # optional, every cut: straight | line | arc | line-arc
//! lead_length = 2.0             # optional: the lead's straight part (≥ 0)
//! lead_radius = 1.5             # optional: the lead's arc radius (> 0)
//! overcut = 0.5                 # optional: cut this far past the start again (≥ 0)
//! lead_out = true               # optional: leave by a lead-out (the lead-in mirrored)
//!
//! [[feature]]                   # one table per feature, in the order they are listed
//! name = "lightening hole A"    # required, unique (compared without regard to case)
//! bay = "bay 2"                 # a bay feature: the bay by name …
//! # inside = [96.0, 70.0]       # … or by a point inside it (exactly one of bay / inside)
//! rule = "largest"              # which ellipse of the bay; default "largest" (rules below)
//! margin = 3.0                  # optional: edge margin for this bay, overrides the default
//! cut = "hole"                  # hole | boss | pocket; default hole
//! depth = 1.5                   # optional (mills, routers): this feature's depth, and
//! stepdown = 0.5                # its pass depth, overriding the job's
//! feed = 300.0                  # optional: this feature's cutting feed, file units per minute
//! plunge_feed = 80.0            # optional: and its feed down into the work
//! spindle_speed = 12000         # optional (mills, routers): this feature's rpm
//!
//! [[feature]]
//! name = "probed oval"
//! through = [[0.0, 0.0], [10.0, 0.0], [5.0, 8.0]]   # points the conic passes through
//! touching = [[[0.0, -1.0], [10.0, -1.0]]]           # lines it touches, each by two points on it
//! # through_layer = "PROBE"    # … or every POINT entity on this DXF layer
//! # touching_layer = "GUIDES"  # … or every LINE entity on this DXF layer
//! choose = 2                    # which solution to cut when several are ellipses (1-based)
//!
//! [[feature]]
//! name = "scanned opening"
//! fit_csv = "scan.csv"          # least-squares fit to the x,y points of a CSV file …
//! # fit_layer = "SCAN"          # … or to the POINT entities on a DXF layer
//! # fit = "algebraic"           # the direct fit instead of the geometric (orthogonal) one
//! # reject_outliers = true      # drop points far from the fit (3 scaled MADs) and fit again
//! ```
//!
//! Each feature has exactly one **source**: a bay (`bay` or `inside`), constraints
//! (`through`/`through_layer` and `touching`/`touching_layer`), or a fit (`fit_csv` or
//! `fit_layer`).
//!
//! **Rules** (bay features only), each with the key that carries its value:
//!
//! | `rule` | value key | picks |
//! |---|---|---|
//! | `largest` | none | the largest ellipse touching every side (three sides: the Steiner inellipse; five sides: the only one) |
//! | `largest-inside` | none | the largest ellipse that fits inside (it touches three, four or five sides; any convex bay) |
//! | `roundest` | none | the member of least eccentricity |
//! | `area` | `area` | the member of this area (square units of the file) |
//! | `semi-axes-squared` | `semi_axes_squared` | the member with `a² + b²` equal to this (square units) |
//! | `semi-major` | `semi_major` | the member with this semi-major axis |
//! | `semi-minor` | `semi_minor` | the member with this semi-minor axis |
//! | `centre-near` | `centre = [x, y]` | the member whose centre is nearest this point (three sides: the ellipse with exactly this centre) |
//!
//! Sizes must be positive; margins zero or positive. A constraints feature takes exactly five
//! constraints, points plus lines (`through` with 3 points and `touching` with 2 lines, say); when
//! one of the two comes from a layer, the points or lines given in the file must number at most
//! four, and the command layer checks the total once it has read the layer. `choose` belongs to
//! constraints features only; `rule`, the value keys and `margin` to bay features only; a fit
//! feature takes none of them. `cut` belongs to every feature.
//!
//! # Errors
//!
//! Every refusal is a [`JobFileError`] naming the file, the line and the key (a missing key is
//! reported at the line of its `[[feature]]` header, or with no line for the top of the file), what
//! is wrong and what to do. Unknown keys are refused, never ignored: a misspelt key would
//! otherwise silently fall back to a default.
//!
//! # Units
//!
//! Lengths and coordinates are multiplied by [`Units::mm_per_unit`] (25.4 for inches, exact),
//! areas and `semi_axes_squared` by its square (645.16 for inches).

mod context;
mod feature;
mod keys;
mod parse;

use crate::geom::Point;
use crate::plan::{LeadKind, WorkZero};
use crate::post::WorkOffset;
use crate::read::Units;

pub use crate::solve::Rule;
pub use parse::parse_job_file;

/// The longest feature name, in characters: the program's cut heading `(cut K of N: NAME)`
/// stays one line well within the 256 characters a program line may hold (NISTIR 6556, from
/// memory).
pub const MAX_NAME_CHARS: usize = 200;

/// A parsed job file, every length in mm.
#[derive(Debug, Clone, PartialEq)]
pub struct JobFile {
    /// The unit the file was written in (its values have been converted to mm).
    pub units: Units,
    /// The default edge margin for bay features (mm, ≥ 0), if the file gives one.
    pub margin: Option<f64>,
    /// The DXF layer holding the bays, if the file names one.
    pub bay_layer: Option<String>,
    /// `cut_layers`: only these layers' geometry is cut, if the file says (the command line's
    /// `--cut-layers` wins).
    pub cut_layers: Option<Vec<String>>,
    /// `skip_layers`: these layers' geometry is never cut, if the file says (the command
    /// line's `--skip-layers` wins).
    pub skip_layers: Option<Vec<String>>,
    /// `feed`: the cutting feed (converted to mm/min), if the file gives one.
    pub feed: Option<f64>,
    /// `plunge_feed`: the feed down into the work (mm/min), if the file gives one.
    pub plunge_feed: Option<f64>,
    /// `spindle_speed`: rpm, if the file gives one.
    pub spindle_speed: Option<f64>,
    /// `zero`: which drawing point becomes the program's X0 Y0, if the file says (the command
    /// line's `--zero` wins).
    pub zero: Option<WorkZero>,
    /// `work_offset`: G54 … G59, if the file says (the command line's `--work-offset` wins).
    pub work_offset: Option<WorkOffset>,
    /// Leads for every cut of the job, where the file gives them (mm); the command line
    /// overrides them and the machine profile fills in the rest.
    pub leads: LeadSpec,
    /// The features, in the order of the file.
    pub features: Vec<FeatureSpec>,
}

/// The lead keys of a job file, each `None` when the file does not give it (lengths in mm).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct LeadSpec {
    /// `lead`: the lead-in's shape.
    pub shape: Option<LeadKind>,
    /// `lead_length`: the straight part (mm, ≥ 0).
    pub length: Option<f64>,
    /// `lead_radius`: the arc's radius (mm, > 0).
    pub radius: Option<f64>,
    /// `overcut`: how far past the start the path is cut again (mm, ≥ 0).
    pub overcut: Option<f64>,
    /// `lead_out`: whether to leave by a lead-out.
    pub lead_out: Option<bool>,
}

impl JobFile {
    /// The edge margin for `feature`: its own, else the file's default (mm); `None` when neither
    /// gives one (the command layer's default applies).
    pub fn margin_for(&self, feature: &FeatureSpec) -> Option<f64> {
        feature.margin.or(self.margin)
    }

    /// The drawing layers the features take points and lines from: construction geometry,
    /// neither cut nor a bay.
    pub fn construction_layers(&self) -> Vec<String> {
        let mut out = Vec::new();
        for f in &self.features {
            match &f.source {
                FeatureSource::Constraints {
                    through, touching, ..
                } => {
                    if let PointSource::Layer(l) = through {
                        out.push(l.clone());
                    }
                    if let LineSource::Layer(l) = touching {
                        out.push(l.clone());
                    }
                }
                FeatureSource::Fit {
                    points: FitPoints::Layer(l),
                    ..
                } => out.push(l.clone()),
                _ => {}
            }
        }
        out
    }
}

/// One feature of the job: which ellipse to make and how to cut it.
#[derive(Debug, Clone, PartialEq)]
pub struct FeatureSpec {
    /// The feature's name, unique in the file.
    pub name: String,
    /// The 1-based line of the feature's `[[feature]]` header, for messages.
    pub line: usize,
    pub source: FeatureSource,
    pub cut: CutKind,
    /// This bay's edge margin (mm, ≥ 0), overriding the file's default; only bay features have one.
    pub margin: Option<f64>,
    /// `depth`: this feature's cut depth (mm, > 0; mills and routers), overriding the job's.
    pub depth: Option<f64>,
    /// `stepdown`: this feature's pass depth (mm, > 0; mills and routers), overriding the job's.
    pub stepdown: Option<f64>,
    /// `feed`: this feature's cutting feed (mm/min), overriding the job's.
    pub feed: Option<f64>,
    /// `plunge_feed`: this feature's feed down into the work (mm/min), overriding the job's.
    pub plunge_feed: Option<f64>,
    /// `spindle_speed`: this feature's spindle speed (rpm, > 0; mills and routers), overriding
    /// the job's.
    pub spindle_speed: Option<f64>,
}

/// Where a feature's ellipse comes from.
#[derive(Debug, Clone, PartialEq)]
pub enum FeatureSource {
    /// One ellipse of a bay of the drawing, picked by a rule.
    Bay { select: BaySelect, rule: Rule },
    /// The conics through the given points and touching the given lines, five constraints in
    /// all; `choose` picks one (1-based, in the order `conicut solve` lists them) when several are
    /// ellipses.
    Constraints {
        through: PointSource,
        touching: LineSource,
        choose: Option<usize>,
    },
    /// A least-squares ellipse fit to measured points: the geometric fit unless `method` says
    /// algebraic; outliers rejected when `reject_outliers` is set.
    Fit {
        points: FitPoints,
        method: FitMethod,
        reject_outliers: bool,
    },
}

/// Which bay of the drawing.
#[derive(Debug, Clone, PartialEq)]
pub enum BaySelect {
    /// By its name, e.g. `bay 2`.
    Name(String),
    /// The bay containing this point (mm).
    Inside(Point),
}

/// Points a conic passes through.
#[derive(Debug, Clone, PartialEq)]
pub enum PointSource {
    /// Given in the job file (mm); possibly none.
    Given(Vec<Point>),
    /// Every POINT entity on this DXF layer.
    Layer(String),
}

/// Lines a conic touches.
#[derive(Debug, Clone, PartialEq)]
pub enum LineSource {
    /// Given in the job file, each by two distinct points on it (mm); possibly none.
    Given(Vec<(Point, Point)>),
    /// Every LINE entity on this DXF layer.
    Layer(String),
}

/// The measured points of a fit feature.
#[derive(Debug, Clone, PartialEq)]
pub enum FitPoints {
    /// A CSV file of `x, y` lines (see [`crate::read::parse_points_csv`]), its path as written in
    /// the job file (relative to the job file's folder). Its values are in the job file's units.
    Csv(String),
    /// The POINT entities on this DXF layer.
    Layer(String),
}

/// Which least-squares ellipse a fit feature cuts (both are listed by `conicut solve`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum FitMethod {
    /// The least sum of squared orthogonal distances (`fit = "geometric"`, the default).
    #[default]
    Geometric,
    /// The direct algebraic fit (`fit = "algebraic"`).
    Algebraic,
}

/// How the ellipse is cut.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "lowercase")]
pub enum CutKind {
    /// An opening: the tool runs inside the ellipse.
    Hole,
    /// An elliptical boss: the tool runs outside the ellipse.
    Boss,
    /// The ellipse cleared to depth.
    Pocket,
}

impl CutKind {
    /// The word used in job files.
    pub fn as_str(self) -> &'static str {
        match self {
            CutKind::Hole => "hole",
            CutKind::Boss => "boss",
            CutKind::Pocket => "pocket",
        }
    }
}

/// The word a job file uses for a rule.
pub fn rule_keyword(rule: &Rule) -> &'static str {
    match rule {
        Rule::Largest => "largest",
        Rule::LargestInside => "largest-inside",
        Rule::Roundest => "roundest",
        Rule::Area(_) => "area",
        Rule::SemiAxesSquared(_) => "semi-axes-squared",
        Rule::SemiMajor(_) => "semi-major",
        Rule::SemiMinor(_) => "semi-minor",
        Rule::CentreNear(_) => "centre-near",
    }
}

/// What kind of problem a job file has.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum JobFileErrorKind {
    /// The text is not valid TOML.
    Syntax,
    /// A key the schema does not have.
    UnknownKey,
    /// A value of the wrong type (a number where a string belongs, …).
    WrongType,
    /// A required key is missing.
    Missing,
    /// Keys that cannot go together, or a key that does not belong to this kind of feature.
    Conflict,
    /// A value of the right type that is not allowed (a negative size, an unknown rule, …).
    BadValue,
    /// A feature name used twice.
    Duplicate,
}

/// A refused job file: where, which key, what is wrong and what to do.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error(
    "{file}{}{}: {message}",
    line.map(|l| format!(", line {l}")).unwrap_or_default(),
    key.as_ref().map(|k| format!(", key `{k}`")).unwrap_or_default()
)]
pub struct JobFileError {
    /// The job file's name as given by the caller.
    pub file: String,
    /// The 1-based line, when there is one.
    pub line: Option<usize>,
    /// The key at fault (its bare name, e.g. `area`), when there is one.
    pub key: Option<String>,
    pub kind: JobFileErrorKind,
    /// What is wrong and what to do, in words.
    pub message: String,
}
