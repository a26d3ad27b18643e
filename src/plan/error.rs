//! Why a cut could not be planned.

/// Why a cut could not be planned.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PlanError {
    #[error("the tool diameter must be a positive number of millimetres (got {0})")]
    BadTool(f64),
    #[error("the {setting} {value} mm cannot be used: {hint}")]
    BadLead {
        setting: &'static str,
        value: f64,
        hint: &'static str,
    },
    #[error(
        "{feature}: the planned tool path came out broken ({error}); this is a fault in \
         conicut: please report it with the drawing"
    )]
    BrokenPath {
        feature: String,
        error: crate::geom::ContourError,
    },
    #[error("{feature}: no room for a lead-in: {detail}")]
    NoRoomForLead { feature: String, detail: String },
    #[error(
        "the finishing allowance must be a positive number of millimetres (got {0}); common \
         practice is 0.1–0.5 mm of radial stock"
    )]
    BadFinishAllowance(f64),
    #[error(
        "{feature}: a finishing allowance of {allowance} mm is too big for this ellipse: the \
         roughing path runs at the tool radius plus the allowance, {inset} mm inside the edge, \
         which must stay below the smallest radius of curvature b²/a = {limit:.4} mm. {advice}"
    )]
    AllowanceTooBig {
        feature: String,
        allowance: f64,
        inset: f64,
        limit: f64,
        /// What to do: the largest allowance that fits, or a smaller tool.
        advice: String,
    },
    #[error(
        "{feature}: with a finishing allowance of {allowance} mm the roughing path ({distance} mm \
         from the edge: the tool radius plus the allowance) does not fit {detail}; use a smaller \
         allowance or a smaller tool"
    )]
    RoughingDoesNotFit {
        feature: String,
        allowance: f64,
        distance: f64,
        /// Where, e.g. `near (12.000, 3.500) mm`.
        detail: String,
    },
    #[error(
        "{feature}: a {diameter} mm tool would gouge the ellipse: its radius {radius} mm is not \
         below the smallest radius of curvature b²/a = {limit:.4} mm (at the ends of the major \
         axis). Use a tool smaller than {max_diameter:.3} mm in diameter"
    )]
    EllipseTooTight {
        feature: String,
        diameter: f64,
        radius: f64,
        limit: f64,
        max_diameter: f64,
    },
    #[error(
        "{feature}: an arc of radius {radius:.4} mm near ({x:.3}, {y:.3}) is tighter than the \
         {diameter} mm tool; use a tool smaller than {max_diameter:.3} mm in diameter"
    )]
    ArcTooTight {
        feature: String,
        radius: f64,
        x: f64,
        y: f64,
        diameter: f64,
        max_diameter: f64,
    },
    #[error(
        "{feature}: the {diameter} mm tool does not fit near ({x:.3}, {y:.3}) mm (a narrow \
         stretch or a short edge); use a smaller tool or widen the feature"
    )]
    ToolDoesNotFit {
        feature: String,
        diameter: f64,
        x: f64,
        y: f64,
    },
    #[error(
        "{feature}: a pocket stepover of {stepover} mm is {problem}; give a stepover \
         (--stepover) from {min} mm to {diameter} mm, the {diameter} mm tool's diameter (common \
         practice: 30–50 % of the diameter)"
    )]
    BadStepover {
        feature: String,
        stepover: f64,
        problem: &'static str,
        diameter: f64,
        min: f64,
    },
}
