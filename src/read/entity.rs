//! The drawing and its entities, as the read stage hands them on: millimetres, WCS, radians.

use super::{Units, UnitsSource};
use crate::geom::{ArcSegment, Ellipse, Point, Segment};
use serde::Serialize;
use std::f64::consts::TAU;

/// The drawing's usable entities, in millimetres and WCS.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Drawing {
    pub entities: Vec<Entity>,
    /// The unit the file's coordinates were in (they have been converted to mm).
    pub units: Units,
    pub units_from: UnitsSource,
    /// Things read but not used (unsupported entities, paper space, degenerate pieces), one line
    /// each, for the user.
    pub notes: Vec<String>,
    /// The layers of the drawing's LAYER table, in file order (a drawing may use layers its
    /// table does not list; those are shown).
    pub layers: Vec<Layer>,
}

impl Drawing {
    /// The entity that reaches farthest from the origin (the largest |x| or |y|, radii added), with
    /// that reach; `None` for a drawing without entities.
    pub fn farthest(&self) -> Option<(&Entity, f64)> {
        let reach = |p: Point| p.x.abs().max(p.y.abs());
        // NaN counts as infinitely far (f64::max would drop it).
        let far = |v: f64| if v.is_nan() { f64::INFINITY } else { v };
        self.entities
            .iter()
            .map(|e| {
                let r = match &e.kind {
                    EntityKind::Line(l) => far(reach(l.start)).max(far(reach(l.end))),
                    EntityKind::Arc(a) => far(reach(a.centre) + a.radius.abs()),
                    EntityKind::Circle { centre, radius } => far(reach(*centre) + radius.abs()),
                    EntityKind::Polyline { vertices, .. } => vertices
                        .iter()
                        .map(|(p, _)| far(reach(*p)))
                        .fold(0.0, f64::max),
                    EntityKind::Ellipse { ellipse, .. } => {
                        far(reach(ellipse.centre()) + ellipse.a())
                    }
                    EntityKind::Point(p) => far(reach(*p)),
                };
                (e, r)
            })
            .max_by(|a, b| a.1.total_cmp(&b.1))
    }
}

/// A layer of the LAYER table and whether it is shown and plotted.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Layer {
    pub name: String,
    /// Frozen (flag bit 1 of group 70).
    pub frozen: bool,
    /// Off (a negative colour number, group 62).
    pub off: bool,
    /// Plotted (group 290; plotted unless it says 0).
    pub plotted: bool,
}

impl Layer {
    /// Why the layer is hidden (`frozen`, `off`, `not plotted`), or `None` when it is shown
    /// and plotted.
    pub fn hidden(&self) -> Option<&'static str> {
        if self.frozen {
            Some("frozen")
        } else if self.off {
            Some("off")
        } else if !self.plotted {
            Some("not plotted")
        } else {
            None
        }
    }
}

/// One entity of the drawing.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Entity {
    /// The DXF layer name as written in the file (layer names compare case-insensitively).
    pub layer: String,
    /// The DXF handle (group code 5, hexadecimal) as written in the file; for a file that gives
    /// the entity no handle (handles are optional in R12), `L` followed by the line number.
    pub handle: String,
    /// The 1-based line of the file where the entity's record starts.
    pub line: usize,
    pub kind: EntityKind,
}

/// An entity's geometry, in millimetres, WCS, radians.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub enum EntityKind {
    Line(Segment),
    /// A circular arc that is not a full circle.
    Arc(ArcSegment),
    Circle {
        #[serde(rename = "center")]
        centre: Point,
        radius: f64,
    },
    /// An LWPOLYLINE or POLYLINE: each vertex with the bulge of the piece that starts there
    /// (for an open polyline the last vertex's bulge is unused).
    Polyline {
        vertices: Vec<(Point, f64)>,
        closed: bool,
    },
    /// An ELLIPSE. `start` and `end` are eccentric anomalies of `ellipse` itself (as normalised
    /// by [`Ellipse::new`], so `a ≥ b`), with `0 ≤ start < 2π` and `start < end ≤ start + 2π`;
    /// the curve runs counter-clockwise from `start` to `end`. A full ellipse is exactly
    /// `0..2π`.
    Ellipse {
        ellipse: Ellipse,
        start: f64,
        end: f64,
    },
    Point(Point),
}

impl EntityKind {
    /// The DXF entity type this came from, for messages (`POLYLINE` covers LWPOLYLINE too).
    pub fn type_name(&self) -> &'static str {
        match self {
            EntityKind::Line(_) => "LINE",
            EntityKind::Arc(_) => "ARC",
            EntityKind::Circle { .. } => "CIRCLE",
            EntityKind::Polyline { .. } => "POLYLINE",
            EntityKind::Ellipse { .. } => "ELLIPSE",
            EntityKind::Point(_) => "POINT",
        }
    }
}

impl EntityKind {
    /// Whether this is an ELLIPSE covering the whole curve.
    pub fn is_full_ellipse(&self) -> bool {
        matches!(self, EntityKind::Ellipse { start, end, .. } if *start == 0.0 && *end == TAU)
    }
}

impl Entity {
    /// "LINE on layer CUT (handle 2A, line 120)", for messages.
    pub fn describe(&self) -> String {
        describe(self.kind.type_name(), &self.layer, &self.handle, self.line)
    }
}

pub(super) fn describe(kind: &str, layer: &str, handle: &str, line: usize) -> String {
    if handle.starts_with('L') {
        format!("{kind} on layer {layer} (no handle, line {line})")
    } else {
        format!("{kind} on layer {layer} (handle {handle}, line {line})")
    }
}
