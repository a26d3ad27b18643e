//! Stage 4, plan: turns the part and the solved ellipses into exact tool-centre paths: which side
//! the tool runs on, the parallel curve at the tool radius, where it enters, and in what order.

use serde::Serialize;

/// What a cut makes.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum FeatureKind {
    /// An elliptical opening solved from a bay.
    BayOpening,
    /// A hole drawn in the part (circle, closed contour or ellipse).
    Hole,
    /// The part's outer outline.
    Outline,
}

/// Which side of the drawn edge the tool centre runs on.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum CutSide {
    /// Inside the closed shape: holes and openings.
    Inside,
    /// Outside the closed shape: the part outline, bosses.
    Outside,
}
