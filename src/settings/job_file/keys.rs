//! The keys a job file may hold, where, and which belong together.

/// Keys allowed at the top of a job file.
pub(super) const TOP_KEYS: [&str; 16] = [
    "units",
    "feed",
    "plunge_feed",
    "spindle_speed",
    "margin",
    "bay_layer",
    "cut_layers",
    "skip_layers",
    "zero",
    "work_offset",
    "lead",
    "lead_length",
    "lead_radius",
    "overcut",
    "lead_out",
    "feature",
];

/// Keys allowed in a `[[feature]]` table.
pub(super) const FEATURE_KEYS: [&str; 25] = [
    "name",
    "cut",
    "depth",
    "stepdown",
    "feed",
    "plunge_feed",
    "spindle_speed",
    "bay",
    "inside",
    "rule",
    "margin",
    "area",
    "semi_axes_squared",
    "semi_major",
    "semi_minor",
    "centre",
    "through",
    "touching",
    "through_layer",
    "touching_layer",
    "choose",
    "fit_csv",
    "fit_layer",
    "fit",
    "reject_outliers",
];

pub(super) const BAY_SOURCE: [&str; 2] = ["bay", "inside"];
pub(super) const CONSTRAINT_SOURCE: [&str; 4] =
    ["through", "touching", "through_layer", "touching_layer"];
pub(super) const FIT_SOURCE: [&str; 2] = ["fit_csv", "fit_layer"];

/// Keys that belong to fit features only.
pub(super) const FIT_ONLY: [&str; 2] = ["fit", "reject_outliers"];

/// Keys that belong to bay features only.
pub(super) const BAY_ONLY: [&str; 7] = [
    "rule",
    "margin",
    "area",
    "semi_axes_squared",
    "semi_major",
    "semi_minor",
    "centre",
];

/// Rules by their job-file keyword, with the key of their value (if any).
pub(super) const RULES: [(&str, Option<&str>); 8] = [
    ("largest", None),
    ("largest-inside", None),
    ("roundest", None),
    ("area", Some("area")),
    ("semi-axes-squared", Some("semi_axes_squared")),
    ("semi-major", Some("semi_major")),
    ("semi-minor", Some("semi_minor")),
    ("centre-near", Some("centre")),
];

/// A constraints feature needs this many points plus lines.
pub(super) const CONSTRAINT_COUNT: usize = 5;
