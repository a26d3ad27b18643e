//! The part a drawing describes: its outline, holes and bays (the [`Bay`] type lives in `bay.rs`
//! beside the checks that make one).

use super::Bay;
use crate::geom::{Contour, Ellipse, Vec2};
use serde::Serialize;

/// The shape of an inner boundary of the part.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub enum InnerShape {
    /// Lines and arcs; a circle is one arc of sweep 2π.
    Contour(Contour),
    /// A whole ELLIPSE entity drawn on a cut layer.
    Ellipse(Ellipse),
}

/// An inner boundary: a closed shape already in the drawing, inside the outline, cut with the
/// tool inside it (named `hole N` in messages and reports; not to be confused with the cut kind
/// `Hole`, which cuts a new opening).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct InnerBoundary {
    /// A name for messages and reports, e.g. `hole 3`.
    pub name: String,
    pub layer: String,
    pub shape: InnerShape,
}

/// What the drawing describes: the part's outline, its inner boundaries (`holes`), and the bays
/// to fill.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct Part {
    /// The outermost closed contour, cut with the tool outside it. `None` for a drawing that
    /// holds only bays (a user may cut the openings into an existing plate).
    pub outline: Option<Contour>,
    pub holes: Vec<InnerBoundary>,
    pub bays: Vec<Bay>,
    /// Things the user should know that did not stop the job.
    pub warnings: Vec<String>,
    /// Geometry read but not cut (layers hidden or left out), one line each.
    pub notes: Vec<String>,
    /// Every layer that holds entities, in order of first appearance, with what it was used for.
    pub layers: Vec<LayerUse>,
}

/// What one layer of the drawing was used for.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct LayerUse {
    pub name: String,
    pub role: LayerRole,
    /// Why a layer is not cut: `frozen`, `off`, `not plotted`, `skipped` (named in the skip
    /// list), `not in the cut list`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub reason: Option<String>,
    /// How many of its entities were read.
    pub entities: usize,
}

/// A layer's role in the job.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "kebab-case")]
pub enum LayerRole {
    /// Its closed shapes are the outline and holes.
    Cut,
    /// The bay layer.
    Bays,
    /// Points and lines a job file's features are built from.
    Construction,
    /// Read, listed, never cut.
    NotCut,
}

impl InnerShape {
    /// The shape moved by `v`.
    pub fn translated(&self, v: Vec2) -> InnerShape {
        match self {
            InnerShape::Contour(c) => InnerShape::Contour(c.translated(v)),
            InnerShape::Ellipse(e) => InnerShape::Ellipse(e.translated(v)),
        }
    }
}

impl InnerBoundary {
    /// The boundary moved by `v`.
    pub fn translated(&self, v: Vec2) -> InnerBoundary {
        InnerBoundary {
            name: self.name.clone(),
            layer: self.layer.clone(),
            shape: self.shape.translated(v),
        }
    }
}

impl Part {
    /// The part moved by `v`: outline, holes and bays alike (warnings, notes and layers
    /// unchanged).
    pub fn translated(&self, v: Vec2) -> Part {
        Part {
            outline: self.outline.as_ref().map(|c| c.translated(v)),
            holes: self.holes.iter().map(|h| h.translated(v)).collect(),
            bays: self.bays.iter().map(|b| b.translated(v)).collect(),
            warnings: self.warnings.clone(),
            notes: self.notes.clone(),
            layers: self.layers.clone(),
        }
    }
}
