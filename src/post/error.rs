//! Why a program was not written.

use super::profile::{ProgramUnits, radius_rule};

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
        units: ProgramUnits,
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
        "feature \"{feature}\": {what} would move {axis} to {value} {units}, outside the machine's travel {axis} {limits} {units}. Move the work zero (`--zero lower-left` puts X0 Y0 at the lower-left corner of the part, `--zero centre` at its centre), check the drawing's units and the depth, or use a profile for a larger machine"
    )]
    OutsideEnvelope {
        feature: String,
        what: &'static str,
        axis: char,
        value: String,
        /// The allowed range, e.g. `-10.0000 .. 400.0000`.
        limits: String,
        units: ProgramUnits,
    },
    #[error(
        "the {which} of {value} {units}/min is above the largest feed {max} {units}/min that profile \"{profile}\" allows. Give a lower feed, or correct max_feed in the profile if the machine can go faster"
    )]
    FeedTooHigh {
        which: &'static str,
        value: String,
        max: String,
        units: ProgramUnits,
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
        "{feature}: its own spindle speed of {value:.0} rpm is above the largest speed {max:.0} rpm that profile \"{profile}\" allows. Give a lower spindle_speed for this feature in the job file, or correct max_spindle_speed in the profile"
    )]
    FeatureSpindleTooFast {
        feature: String,
        value: f64,
        max: f64,
        profile: String,
    },
    #[error(
        "the program needs more than 99999 line numbers (NISTIR 6556 §3.3.1 allows 5 digits); set line_numbers = false in the profile or use a coarser tolerance"
    )]
    TooManyLineNumbers,
}
